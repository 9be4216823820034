"""Posture branches: the elbow rule, and one branch kept across a grid (private).

The rule is defined by the arm's own geometry, so it does not change with the mount:

- the *bend* of the elbow joint e (``elbow_joint``, default the last joint) is the sign of
  det[p_e - p_s, t - p_e, a_e], with p_s the shoulder (the origin of joint e - 1), p_e the
  elbow's origin, t the tool point and a_e the elbow's axis, all in one frame (a rotation of
  the whole arm, e.g. a tilted mount, leaves it unchanged). It is the sense in which the
  elbow turns the forearm away from the upper arm (only the parts normal to a_e count), and
  it changes only where the elbow passes its stretched or folded pose: a singular boundary.
- 'elbow_up' is the bend that puts the elbow on the side of the base's +z axis (the arm's
  own 'up', R_WB e_z) while the arm reaches along its zero-pose direction (shoulder to tool
  at q = 0). Where the base's z axis is (nearly) parallel to the elbow axis (planar chains
  built in their base's xy plane) or to that reach, 'up' is a_e x d_0 instead.

Geometry of the two-link triangle: common practice, no source. The value returned is the
determinant divided by |p_e - p_s| |t - p_e| (a sine, 1), positive for 'elbow_up'.

Continuation (:func:`continue_over_grid`): from a seed point, the solved set grows by
wavefronts over the grid's neighbours (each wavefront one batched step); a new point takes
the solution continued from a solved neighbour. Where that is impossible (a joint limit or a
singular boundary), the continuation restarts from the point's own solution on the
requested branch. The seam is the grid edges across which the solution jumps: some joint
changes by more than ``JUMP_RAD`` and the first-order prediction does not explain it (a
change of branch), or it changes by more than ``JUMP_RAD`` per ``JUMP_SPACING_M`` of
spacing (next to a singular boundary, where the solution turns fast).
"""

import itertools
from typing import NamedTuple

import numpy as np

from ..core import _kinematics

__all__ = ["JUMP_RAD", "PostureRule", "posture_rule", "posture_value", "accepts",
           "continue_over_grid", "seam_mask"]

#: Largest deviation [rad] of any joint between neighbouring grid points from the
#: first-order prediction along a continuous branch (the continuity gap); larger ones mark a
#: seam, and so do changes larger than JUMP_RAD per JUMP_SPACING_M of grid spacing.
JUMP_RAD = 0.5
JUMP_SPACING_M = 0.02
#: Tolerance of the branch test on the posture value (a sine).
_TOL = 1e-9


class PostureRule(NamedTuple):
    """Shoulder and elbow joint indices, and the sign that makes 'elbow_up' positive."""

    shoulder: int
    elbow: int
    sign: float


def posture_rule(params, elbow_joint=None):
    """The posture rule of an arm (see the module docstring)."""
    n = params.n
    elbow = n - 1 if elbow_joint is None else int(elbow_joint)
    if not 0 <= elbow < n:
        raise ValueError(f"`elbow_joint` must be a joint index from 0 to {n - 1}; "
                         f"got {elbow_joint!r}")
    shoulder = max(elbow - 1, 0)
    frames = _kinematics.forward(params, np.zeros((n, 1)))
    axis = frames.axis[elbow, :, 0]
    reach = frames.tool[:, 0] - frames.origin[shoulder, :, 0]
    reach = reach - (reach @ axis) * axis
    side = reach @ np.cross(params.mount_rotation[:, 2], axis)       # d_0 . (up x a_e)
    sign = float(np.sign(side)) if abs(side) > 0.1 * np.linalg.norm(reach) else 1.0
    return PostureRule(shoulder, elbow, sign)


def posture_value(rule, frames):
    """Signed sine of the elbow's bend (N,) [1]: > 0 'elbow_up', < 0 'elbow_down'."""
    shoulder, elbow = frames.origin[rule.shoulder], frames.origin[rule.elbow]
    upper, fore = elbow - shoulder, frames.tool - elbow
    det = np.sum(np.cross(upper, fore, axis=0) * frames.axis[rule.elbow], axis=0)
    scale = np.sqrt(np.sum(upper * upper, axis=0) * np.sum(fore * fore, axis=0))
    return -rule.sign * det / np.maximum(scale, 1e-300)


def accepts(posture, value):
    """Mask of posture values on the requested branch ('nearest' accepts all)."""
    if posture == "elbow_up":
        return value > -_TOL
    if posture == "elbow_down":
        return value < _TOL
    return np.ones(np.shape(value), dtype=bool)


def _neighbours(shape):
    """(N, 3^d - 1) flat indices of each grid point's neighbours (-1 outside the grid)."""
    index = np.pad(np.arange(int(np.prod(shape))).reshape(shape), 1, constant_values=-1)
    cols = []
    for offset in itertools.product((-1, 0, 1), repeat=len(shape)):
        if any(offset):
            cut = tuple(slice(1 + o, 1 + o + s) for o, s in zip(offset, shape))
            cols.append(index[cut].reshape(-1))
    return np.stack(cols, axis=1)


def seam_mask(shape, q, solved, jumps):
    """Points (N,) at either end of a grid edge (along an axis) whose solutions jump.

    ``q`` (n, N) [rad]; ``solved`` (N,) bool; ``jumps(q_a, q_b, ia, ib)`` -> (m,) bool, the
    test of edges from points ia to ib.
    """
    index = np.arange(q.shape[1]).reshape(shape)
    mark = np.zeros(q.shape[1], dtype=bool)
    for axis in range(len(shape)):
        a = np.take(index, np.arange(shape[axis] - 1), axis=axis).reshape(-1)
        b = np.take(index, np.arange(1, shape[axis]), axis=axis).reshape(-1)
        both = solved[a] & solved[b]
        a, b = a[both], b[both]
        big = jumps(q[:, a], q[:, b], a, b)
        mark[a[big]] = True
        mark[b[big]] = True
    return mark


def _wave(neighbours, newly, open_):
    """Open points next to the newly solved ones, each with one newly solved parent."""
    targets = neighbours[newly].reshape(-1)
    parents = np.repeat(newly, neighbours.shape[1])
    keep = targets >= 0
    targets, parents = targets[keep], parents[keep]
    keep = open_[targets]
    targets, first = np.unique(targets[keep], return_index=True)
    return targets, parents[keep][first]


def _nearest_candidate(candidates, usable, q_from, idx):
    """Per point idx: the usable candidate nearest q_from (n, m); (q (n, m), row, gap (m,))."""
    gap = np.max(np.abs(candidates[:, :, idx] - q_from[None]), axis=1)   # (S, m)
    gap = np.where(usable[:, idx], gap, np.inf)
    row = np.argmin(gap, axis=0)
    q = np.take_along_axis(candidates[:, :, idx], row[None, None], axis=0)[0]
    return q, row, gap[row, np.arange(idx.size)]


def _seed_point(shape, available):
    """The available point nearest the middle of the grid (index space)."""
    centre = (np.array(shape, float) - 1.0) / 2.0
    where = np.flatnonzero(available)
    pos = np.stack(np.unravel_index(where, shape), axis=-1)
    return where[np.argmin(np.sum((pos - centre) ** 2, axis=1))]


def continue_over_grid(shape, choice, candidates, usable, residual, refine, gap,
                       jump=JUMP_RAD):
    """Solutions that keep one branch across a grid, by continuation from a seed point.

    Parameters
    ----------
    shape : tuple
        Grid shape; the N = prod(shape) points are in C order.
    choice : (n, N) [rad]
        Each point's own solution on the requested branch (NaN where it has none).
    candidates : (S, n, N) [rad]; usable : (S, N) bool; residual : (S, N) [m]
        Every solution found for each point, and which are on the branch within the limits.
    refine : callable (q0 (n, m), idx (m,)) -> (q (n, m), ok (m,), residual (m,))
        The numeric solver warm-started from q0 at points idx (one batched call).
    gap : callable (q_a (n, m), q_b (n, m), ia (m,), ib (m,)) -> (m,) [rad]
        How far q_b at point ib is from continuing q_a at point ia (see ``seam_mask``); a
        new point is taken as continued where the gap is at most ``jump``.

    Returns
    -------
    q (n, N), solved (N,) bool, residual (N,) [m]
    """
    n, count = choice.shape
    neighbours = _neighbours(shape)
    available = np.all(np.isfinite(choice), axis=0)
    q = np.full((n, count), np.nan)
    res = np.full(count, np.nan)
    solved = np.zeros(count, dtype=bool)
    all_rows = np.arange(count)
    newly = np.zeros(0, dtype=int)
    while True:
        while newly.size:                    # one batched step per wavefront
            targets, parents = _wave(neighbours, newly, ~solved)
            if not targets.size:
                break
            q_new, row, near = _nearest_candidate(candidates, usable, q[:, parents], targets)
            ok = np.isfinite(near)
            ok[ok] = gap(q[:, parents[ok]], q_new[:, ok], parents[ok], targets[ok]) <= jump
            r_new = residual[row, targets]
            need = np.flatnonzero(~ok)
            if need.size:
                q_r, ok_r, r_r = refine(q[:, parents[need]], targets[need])
                ok_r &= gap(q[:, parents[need]], q_r, parents[need], targets[need]) <= jump
                q_new[:, need], r_new[need], ok[need] = q_r, r_r, ok_r
            newly = targets[ok]
            q[:, newly], res[newly], solved[newly] = q_new[:, ok], r_new[ok], True
        left = available & ~solved
        if not np.any(left):
            break
        # restart where continuation stopped: points next to the solved set take their own
        # solution nearest a solved neighbour's (a seam lies between); else a new seed
        nb = neighbours[left]
        near_solved = np.where(nb >= 0, solved[np.maximum(nb, 0)], False)
        adjacent = np.any(near_solved, axis=1)
        if np.any(adjacent):
            idx = all_rows[left][adjacent]
            parent = nb[adjacent][np.arange(idx.size), np.argmax(near_solved[adjacent], axis=1)]
            q_new, row, _ = _nearest_candidate(candidates, usable, q[:, parent], idx)
            q[:, idx], res[idx] = q_new, residual[row, idx]
        else:
            idx = np.array([_seed_point(shape, left)])
            q[:, idx] = choice[:, idx]
            res[idx] = np.nan
            row = np.argmin(np.where(usable[:, idx], np.max(np.abs(
                candidates[:, :, idx] - choice[None, :, idx]), axis=1), np.inf), axis=0)
            res[idx] = residual[row, idx]
        solved[idx] = True
        newly = idx
    return q, solved, res
