"""From tool points to configurations: inverse kinematics over whole regions (private).

Two solvers, both vectorised over all points at once:

- ``closed_form`` (``_ik_closed_form``): two-joint planar arms (any link geometry, both
  elbow branches), from the law of cosines;
- ``numeric`` (``_ik_numeric``): any arm, damped least squares (Wampler 1986; Nakamura &
  Hanafusa 1986) from several seeds taken from a table of sampled configurations nearest
  to each target.

The branch rule (``posture``) is the elbow's bend, defined by the arm's own geometry
(``_posture``). Over a grid (``continuation='grid'``) one branch is kept by continuation
from a seed point; a seam is marked only where the arm cannot keep it. Along a path,
``_ik_path.follow_positions`` continues from a start configuration.

Points that cannot be solved keep NaN angles and a status code (``STATUS``); nothing
is dropped or filled in.
"""

from typing import NamedTuple

import numpy as np

from ..core import _kinematics
from ..core._layout import from_core, to_core
from ..core._smallmat import matmul, transpose
from . import _posture
from ._ik_closed_form import planar_two_joint
from ._ik_numeric import SeedPool, dls, fit_limits, reach_bound, solve_small
from ._ik_status import (
    BEYOND_LIMITS,
    NO_POSTURE,
    NOT_CONVERGED,
    OFF_PLANE,
    OK,
    OUT_OF_REACH,
    SEAM,
    SOLVED,
    STATUS,
)

__all__ = ["STATUS", "SOLVED", "PositionSolution", "solve_positions", "POSTURES"]

POSTURES = ("elbow_up", "elbow_down", "nearest")
CONTINUATIONS = ("none", "grid")


class PositionSolution(NamedTuple):
    """Joint angles (..., n) [rad] (NaN where not solved), status (...,) int8, residual (...,) [m]."""

    q: np.ndarray
    status: np.ndarray
    residual_m: np.ndarray


class _Job(NamedTuple):
    """One solve: the checked inputs in the core's layout."""

    params: object
    targets: np.ndarray        # (3, N) relative to the mount [m]
    batch: tuple
    posture: str
    rule: _posture.PostureRule
    reference: np.ndarray      # (n,) [rad]
    angle: object              # (N,) [rad] or None
    warm: object               # (n, N) or None
    closed: bool
    options: dict              # seeds, tolerance_m, max_iterations, table_size, random_state


class _Candidates(NamedTuple):
    """Every solution found per point: (S, n, N) angles, (S, N) residual and converged, status."""

    q: np.ndarray
    residual: np.ndarray
    converged: np.ndarray
    status: np.ndarray         # (N,) OK or the reason found before choosing


def _prepare(arm, points, posture, reference_deg, tool_angle_deg, elbow_joint, method,
             initial_q, continuation, options):
    """Check the arguments and bring them into the core's layout."""
    params = arm._params
    if posture not in POSTURES:
        raise ValueError(f"'{posture}' is not a valid posture; supported postures are "
                         f"{', '.join(POSTURES)}")
    if continuation not in CONTINUATIONS:
        raise ValueError(f"`continuation` must be one of {', '.join(CONTINUATIONS)}; "
                         f"got {continuation!r}")
    pts = np.asarray(points, dtype=float)
    if pts.ndim == 0 or pts.shape[-1] != 3 or not np.all(np.isfinite(pts)):
        raise ValueError(f"Expected finite `points` with shape (..., 3) [m], got {pts.shape}.")
    (targets,), batch = to_core(pts)
    targets = targets - params.mount_position[:, None]    # the core works relative to the mount
    n, k = params.n, params.task_axes.shape[0]
    if reference_deg is None:
        reference = params.limits.mean(axis=1)
    else:
        reference = np.deg2rad(np.asarray(reference_deg, float))
        if reference.shape != (n,):
            raise ValueError(f"`reference_deg` must have {n} entries; got {reference.shape}")
    if n > k and tool_angle_deg is None and posture != "nearest":
        raise ValueError(f"design '{arm.name}' is redundant for its {k}-axis task ({n} joints): "
                         "give tool_angle_deg (planar chains) or use posture='nearest'")
    if method == "closed_form" and not (n == 2 and k == 2):
        raise ValueError("the closed-form solver is for two-joint planar arms")
    closed = method == "closed_form" or (method == "auto" and n == 2 and k == 2)
    warm = None
    if initial_q is not None:
        warm = np.asarray(initial_q, float).reshape(-1, n)
        if warm.shape[0] != targets.shape[1]:
            raise ValueError(f"`initial_q` must have shape {batch + (n,)} like the points; "
                             f"got {np.shape(initial_q)}")
        warm = warm.T.copy()                                              # (n, N)
    angle = None
    if tool_angle_deg is not None:
        angle = np.broadcast_to(np.deg2rad(np.asarray(tool_angle_deg, float)), batch).reshape(-1)
    return _Job(params, targets, batch, posture, _posture.posture_rule(params, elbow_joint),
                reference, angle, warm, closed, options)


def _off_plane(params, targets):
    """(N,) targets off a planar arm's plane (by more than 1 um)."""
    if params.task_axes.shape[0] != 2:
        return np.zeros(targets.shape[1], dtype=bool)
    zero = _kinematics.forward(params, np.zeros((params.n, 1)))
    o1, tool0 = zero.origin[0, :, 0], zero.tool[:, 0]
    normal = np.cross(params.task_axes[0], params.task_axes[1])
    return np.abs(normal @ (targets - o1[:, None]) - normal @ (tool0 - o1)) > 1e-6


def _refine(job, q0, idx, clip=True):
    """Damped least squares from seeds q0 (n, m) toward the targets idx: q, residual, at-limit."""
    params, n, k = job.params, job.params.n, job.params.task_axes.shape[0]
    return dls(params, q0, job.targets[:, idx], None if job.angle is None else job.angle[idx],
               tolerance=job.options["tolerance_m"], max_iterations=job.options["max_iterations"],
               damping=1e-3 * reach_bound(params), clip=clip,
               reference=job.reference if (n > k and clip) else None,
               null_gain=0.2 if (n > k and job.angle is None and clip) else 0.0)


def _on_branch(job, q):
    """(m,) configurations q (n, m) on the requested branch."""
    return _posture.accepts(job.posture, _posture.posture_value(
        job.rule, _kinematics.forward(job.params, q)))


def _closed_form_candidates(job):
    branches, status = planar_two_joint(job.params, job.targets)
    count = job.targets.shape[1]
    return _Candidates(branches, np.zeros((2, count)), np.broadcast_to(status == OK, (2, count)),
                       status)


def _numeric_candidates(job):
    """Round 1: the first seed of every point; round 2: all other seeds at once, for the
    points round 1 did not solve on the branch ('nearest' compares every seed's solution,
    so it runs all seeds for all points). Then the limits check (``_limits_retry``)."""
    params, opts, count = job.params, job.options, job.targets.shape[1]
    pool = SeedPool(params, params.task_axes @ job.targets, reference=job.reference,
                    accepts=lambda frames: _posture.accepts(
                        job.posture, _posture.posture_value(job.rule, frames)),
                    seeds=opts["seeds"], table_size=opts["table_size"],
                    random_state=opts["random_state"], warm=job.warm)
    s_count, tol = pool.count, opts["tolerance_m"] * 10.0
    cand = np.full((s_count, params.n, count), np.nan)
    residual = np.full((s_count, count), np.inf)
    rounds = ([[0], list(range(1, s_count))] if job.posture != "nearest"
              else [list(range(s_count))])
    todo = np.arange(count)
    for seeds_round in rounds:
        if not seeds_round or todo.size == 0:
            continue
        sel = np.array(seeds_round)
        idx, rows = np.tile(todo, sel.size), np.repeat(sel, todo.size)
        q_s, r_s, _ = _refine(job, pool.q(rows, idx), idx)
        cand[rows, :, idx], residual[rows, idx] = q_s.T, r_s
        if job.posture != "nearest":
            solved = np.zeros(count, dtype=bool)
            solved[idx[(r_s <= tol) & _on_branch(job, q_s)]] = True
            todo = todo[~solved[todo]]
    dist = np.linalg.norm(job.targets - _kinematics.forward(
        params, np.zeros((params.n, 1))).origin[0, :, :1], axis=0)
    status = np.where(dist > reach_bound(params), OUT_OF_REACH, OK)
    status = np.where(_off_plane(params, job.targets), OFF_PLANE, status)
    cand = np.where(np.isnan(cand), 0.0, cand)
    return _limits_retry(job, pool, _Candidates(cand, residual, residual <= tol, status))


def _limits_retry(job, pool, cands):
    """Points no seed solved within the limits: try again with the limits ignored, to tell
    "beyond the joint limits" (a solution exists outside them) from "out of reach"."""
    failing = np.flatnonzero((cands.status == OK) & ~np.any(cands.converged, axis=0))
    if not failing.size:
        return cands
    q, residual = cands.q.copy(), cands.residual.copy()
    idx, rows = np.tile(failing, pool.count), np.repeat(np.arange(pool.count), failing.size)
    q_f, r_f, _ = _refine(job, pool.q(rows, idx), idx, clip=False)
    q[rows, :, idx], residual[rows, idx] = np.arctan2(np.sin(q_f), np.cos(q_f)).T, r_f
    converged = residual <= job.options["tolerance_m"] * 10.0
    status = np.where((cands.status == OK) & ~np.any(converged, axis=0), OUT_OF_REACH,
                      cands.status)
    return _Candidates(q, residual, converged, status)


def _usable(job, cands):
    """Candidates fitted into the joint limits, and which are usable (converged, inside the
    limits, on the requested branch): (S, n, N) angles, (S, N) inside, (S, N) usable."""
    params = job.params
    s_count, n, count = cands.q.shape
    fitted, inside = zip(*(fit_limits(cands.q[s], params.limits) for s in range(s_count)))
    fitted, inside = np.stack(fitted), np.stack(inside)
    worth = (cands.converged & inside).reshape(-1)          # posture of these only
    on_branch = np.zeros(s_count * count, dtype=bool)
    if np.any(worth):
        flat = fitted.transpose(1, 0, 2).reshape(n, -1)[:, worth]
        on_branch[worth] = _on_branch(job, flat)
    return fitted, inside, cands.converged & inside & on_branch.reshape(s_count, count)


def _choose(job, cands, fitted, inside, usable):
    """Each point's own solution: the usable candidate nearest the reference posture (so
    that e.g. a yaw-pitch-pitch arm does not reach over its top), and the final status."""
    wrap = np.arctan2(np.sin(fitted - job.reference[None, :, None]),
                      np.cos(fitted - job.reference[None, :, None]))
    distance = np.sqrt(np.sum(wrap * wrap, axis=1))                       # (S, N)
    choice = np.argmin(np.where(usable, distance, np.inf), axis=0)
    q = np.take_along_axis(fitted, choice[None, None, :], axis=0)[0]
    residual = np.take_along_axis(cands.residual, choice[None, :], axis=0)[0]
    converged = cands.converged
    status = np.where(cands.status != OK, cands.status,
                      np.where(np.any(usable, axis=0), OK,
                               np.where(np.any(converged & inside, axis=0), NO_POSTURE,
                                        np.where(np.any(converged, axis=0), BEYOND_LIMITS,
                                                 NOT_CONVERGED))))
    return np.where(status == OK, q, np.nan), residual, status


def _joint_steps(job, q, dx):
    """Joint motion (n, m) [rad] for small tool motions dx (3, m) [m] at q (n, m): the damped
    pseudo-inverse J^T (J J^T + l^2 I)^-1 A dx of the task Jacobian J = A J_v (Wampler
    1986), l = 1e-3 of the reach bound (keeps steps bounded next to singular poses)."""
    params = job.params
    a = params.task_axes
    jac = np.einsum("ki,inN->knN", a, _kinematics.jacobian(_kinematics.forward(params, q))[:3])
    lam = 1e-3 * reach_bound(params)
    jjt = matmul(jac, transpose(jac)) + lam * lam * np.eye(a.shape[0])[:, :, None]
    return np.sum(jac * solve_small(jjt, a @ dx)[:, None, :], axis=0)


def _continuity_gap(job, q_a, q_b, ia, ib):
    """How far q_b (at point ib) is from continuing q_a (at point ia), (m,) [rad]: the largest
    joint deviation from the trapezoid rule, |q_b - q_a - (J_a^+ + J_b^+) (x_b - x_a) / 2|,
    where the raw change |q_b - q_a| exceeds ``JUMP_RAD``; the raw change elsewhere.

    Along one continuous branch the deviation is of second order in the grid spacing; a
    change of branch, or a step across a singular boundary, leaves it large."""
    out = np.max(np.abs(q_b - q_a), axis=0)
    big = np.flatnonzero(out > _posture.JUMP_RAD)     # smaller jumps cannot exceed the bound
    if big.size:                                      # by much: predict only the large ones
        dx = job.targets[:, ib[big]] - job.targets[:, ia[big]]
        predicted = 0.5 * (_joint_steps(job, q_a[:, big], dx) + _joint_steps(job, q_b[:, big], dx))
        out[big] = np.max(np.abs(q_b[:, big] - q_a[:, big] - predicted), axis=0)
    return out


def _continue(job, cands, fitted, usable, q, residual, status):
    """Keep one branch over the grid (``_posture.continue_over_grid``), then mark the seam."""
    shape = job.batch if len(job.batch) else (1,)
    tol = job.options["tolerance_m"] * 10.0

    def refine(q0, idx):
        q_r, r_r, _ = _refine(job, q0, idx)
        return q_r, (r_r <= tol) & _on_branch(job, q_r), r_r

    def gap(q_a, q_b, ia, ib):
        return _continuity_gap(job, q_a, q_b, ia, ib)

    q_c, solved, r_c = _posture.continue_over_grid(shape, q, fitted, usable, cands.residual,
                                                   refine, gap)
    status = np.where(solved, OK, np.where(status == OK, NOT_CONVERGED, status))
    def jumps(q_a, q_b, ia, ib):
        change = np.max(np.abs(q_b - q_a), axis=0)
        spacing = np.linalg.norm(job.targets[:, ib] - job.targets[:, ia], axis=0)
        fast = change > _posture.JUMP_RAD * np.maximum(1.0, spacing / _posture.JUMP_SPACING_M)
        return fast | (gap(q_a, q_b, ia, ib) > _posture.JUMP_RAD)

    status = np.where(_posture.seam_mask(shape, q_c, solved, jumps), SEAM, status)
    return q_c, np.where(solved, r_c, residual), status


def solve_positions(arm, points, *, posture="elbow_up", reference_deg=None, tool_angle_deg=None,
                    elbow_joint=None, seeds=8, tolerance_m=1e-9, max_iterations=40,
                    table_size=16384, random_state=0, method="auto", initial_q=None,
                    continuation="none"):
    """Joint configurations that put the tool point at world points (..., 3) [m].

    Parameters
    ----------
    posture : {'elbow_up', 'elbow_down', 'nearest'}
        Branch rule, by the arm's own geometry (unchanged by the mount): the sense of the
        bend of the elbow joint (``elbow_joint``, default the last joint) measured from the
        shoulder (joint ``elbow_joint - 1``), det[p_e - p_s, t - p_e, a_e]. 'elbow_up' is the
        bend that puts the elbow on the side of the base's +z axis while the arm reaches
        along its zero-pose direction (shoulder to tool at q = 0; where the base's z axis is
        parallel to the elbow axis or to that reach, a_e x reach stands in for it). The
        branch changes only where the elbow passes its stretched or folded pose. 'nearest':
        the solution nearest ``reference_deg``. Where several solutions are on the branch,
        the one nearest ``reference_deg`` is kept (or, with continuation, the one continued
        from a neighbour).
    reference_deg : sequence of n float, optional
        Reference posture [deg] (default: the middle of the joint limits).
    tool_angle_deg : float or array, optional
        Planar redundant chains: the fixed angle of the last link in the plane [deg].
        Other redundant arms take the solution nearest the reference posture.
    method : {'auto', 'closed_form', 'numeric'}
        'auto' uses the closed form for two-joint planar arms, the numeric solver otherwise.
    initial_q : array_like (..., n), optional
        Warm start for the numeric solver (e.g. the previous solution after a small design
        change); NaN entries fall back to the seed table, which is built only if needed.
    continuation : {'none', 'grid'}
        'grid': the batch axes of ``points`` are a regular grid, and one branch is kept
        over it by continuation from the point nearest the middle (wavefronts over the
        neighbours, one batched step each). Where the continued solution would leave the
        limits or the branch (a singular boundary), the point takes its own solution and
        the points on either side of a jump larger than 0.5 rad get status 'branch_seam'.

    Returns
    -------
    PositionSolution
        ``q`` (..., n) [rad], within the joint limits, NaN where not solved; ``status``
        (...,) with the codes of ``STATUS`` (``SOLVED`` codes carry a solution);
        ``residual_m`` (...,) tool position error [m].
    """
    job = _prepare(arm, points, posture, reference_deg, tool_angle_deg, elbow_joint, method,
                   initial_q, continuation,
                   {"seeds": int(seeds), "tolerance_m": float(tolerance_m),
                    "max_iterations": int(max_iterations), "table_size": int(table_size),
                    "random_state": random_state})
    cands = _closed_form_candidates(job) if job.closed else _numeric_candidates(job)
    fitted, inside, usable = _usable(job, cands)
    q, residual, status = _choose(job, cands, fitted, inside, usable)
    if continuation == "grid":
        q, residual, status = _continue(job, cands, fitted, usable, q, residual, status)
    solved = np.isin(status, SOLVED)
    if job.closed:
        residual = np.where(solved, residual, np.nan)
    else:
        residual = np.where(solved, residual, np.min(cands.residual, axis=0))
    return PositionSolution(from_core(q, job.batch), from_core(status.astype(np.int8), job.batch),
                            from_core(residual, job.batch))
