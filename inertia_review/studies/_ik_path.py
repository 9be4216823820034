"""Configurations along a path that keep the branch they start in (private).

Each path point is solved from the previous point's solution (damped least squares,
``_ik_numeric.dls``, within the joint limits); the elbow's bend (``_posture``) must keep the
sign it has at the start. Where that is impossible the walk stops with the reason: a joint
would have to leave its limits, the elbow would have to pass its stretched or folded pose
(the singular boundary between the branches), or the point is out of reach.
"""

from typing import NamedTuple

import numpy as np

from ..core import _kinematics
from . import _posture
from ._ik import solve_positions
from ._ik_numeric import dls, reach_bound
from ._ik_status import STATUS

__all__ = ["PathSolution", "follow_positions"]


class PathSolution(NamedTuple):
    """q (K, n) [rad] (NaN from the first point not reached), the index of that point
    (-1: every point reached) and why it was not reached ('' when all were)."""

    q: np.ndarray
    stop: int
    reason: str


def _step(params, q0, target, tolerance, max_iterations, clip):
    q, residual, _ = dls(params, q0[:, None], target[:, None], tolerance=tolerance,
                         max_iterations=max_iterations, damping=1e-3 * reach_bound(params),
                         clip=clip)
    return q[:, 0], bool(residual[0] <= 10.0 * tolerance)


def _why(arm, q_prev, target, side, rule, tolerance, max_iterations, jump):
    """Why the point cannot be reached from q_prev on the branch of sign ``side``."""
    params = arm._params
    q_free, converged = _step(params, q_prev, target, tolerance, max_iterations, clip=False)
    if not converged:
        anywhere = solve_positions(arm, target + params.mount_position, posture="nearest",
                                   tolerance_m=tolerance)
        if int(anywhere.status) != 0:
            return f"cannot be reached ({STATUS[int(anywhere.status)]})"
        return ("cannot be reached on the branch it starts in (a configuration on another "
                "branch reaches it)")
    value = _posture.posture_value(rule, _kinematics.forward(params, q_free[:, None]))[0]
    if value * side < 0.0 or np.max(np.abs(q_free - q_prev)) > jump:
        return ("needs the arm to change branch: the elbow passes its stretched or folded pose "
                "(the singular boundary between the branches)")
    low, high = params.limits[:, 0], params.limits[:, 1]
    out = np.flatnonzero((q_free < low - 1e-9) | (q_free > high + 1e-9))
    if out.size:
        j = int(out[0])
        return (f"needs joint '{arm.joint_names[j]}' beyond its limits "
                f"[{np.rad2deg(low[j]):.6g}, {np.rad2deg(high[j]):.6g}] deg to stay on the "
                f"branch it starts in ({np.rad2deg(q_free[j]):.6g} deg)")
    return "cannot be reached on the branch it starts in"


def follow_positions(arm, points, q_start, *, elbow_joint=None, tolerance_m=1e-9,
                     max_iterations=40, jump_rad=_posture.JUMP_RAD):
    """Follow tool points (K, 3) [m] from the configuration ``q_start`` (n,) [rad].

    Every point is solved from the previous solution, within the joint limits; the point is
    reached if the solver converges (tool error <= 10 ``tolerance_m``), the elbow's bend
    keeps the sign it has at ``q_start`` and no joint moves more than ``jump_rad`` from the
    previous point (points should be a few centimetres apart). The walk is sequential by
    nature (each point starts from the last), so keep the points few (knots of a path).

    Returns
    -------
    PathSolution
    """
    params = arm._params
    pts = np.asarray(points, float).reshape(-1, 3) - params.mount_position
    q_prev = np.asarray(q_start, float).reshape(params.n)
    rule = _posture.posture_rule(params, elbow_joint)
    side = np.sign(_posture.posture_value(rule, _kinematics.forward(params, q_prev[:, None]))[0])
    q_out = np.full((pts.shape[0], params.n), np.nan)
    for i, target in enumerate(pts):
        q, converged = _step(params, q_prev, target, tolerance_m, max_iterations, clip=True)
        value = _posture.posture_value(rule, _kinematics.forward(params, q[:, None]))[0]
        if not (converged and value * side >= -1e-9 and np.max(np.abs(q - q_prev)) <= jump_rad):
            return PathSolution(q_out, i, _why(arm, q_prev, target, side, rule, tolerance_m,
                                               max_iterations, jump_rad))
        q_out[i] = q_prev = q
    return PathSolution(q_out, -1, "")
