"""The numeric solver of ``solve_positions`` for many arms at once (private).

Each arm v has its own points; all points of all arms form one batch with one arm per
configuration (``_stack``), and every step of ``solve_positions`` (numeric method, no warm
start, no continuation) runs once over the whole batch: the seed tables (each arm's own,
drawn as ``seed_table`` draws them), the nearest-seed look-up (one k-d tree per arm), the
two rounds of damped least squares (``dls_stacked``), the limits check with the limits
ignored, the 2 pi shifts into the limits, the branch test and the choice nearest the
reference posture. So each point gets what ``solve_positions(arm_v, points_v)`` gives it
(up to round-off: the kernels with per-configuration arrays add in the same order, but the
products of one arm's constant arrays may round differently), at the cost of a few batched
passes instead of a few per arm (``benchmarks/region_speed.py``).
"""

import numpy as np

from ..core import _kinematics
from . import _posture
from ._ik_numeric import dls_stacked, reach_bound
from ._ik_status import BEYOND_LIMITS, NO_POSTURE, NOT_CONVERGED, OK, OUT_OF_REACH
from ._stack import lift_to, stack_params, take_params

__all__ = ["solve_positions_stacked"]

#: configurations per batched forward-kinematics pass over the seed tables (memory bound)
_TABLE_CONFIGS = 200_000


def _fit(q, low, high):
    """``fit_limits`` with per-configuration limits (n, N), over leading axes of q too."""
    two_pi = 2.0 * np.pi
    shifted = q - two_pi * np.floor((q - low) / two_pi)          # in [low, low + 2 pi)
    inside = shifted <= high + 1e-12
    return np.where(inside, shifted, q), np.all(inside, axis=-2)


def _seeds(params_list, goal, owner, reference, posture, sign, seeds, table_size, random_state):
    """(S, n, M) seeds: per arm, its table's ``seeds`` configurations nearest each of its
    points in task space, on the requested branch where any is, nearest the reference
    posture first (as ``SeedPool``)."""
    from scipy.spatial import cKDTree
    n, v_count, size = params_list[0].n, len(params_list), int(table_size)
    draw = np.random.default_rng(random_state).random((n, size))   # what seed_table draws
    table_q = np.empty((n, v_count * size))
    table_pts = np.empty((goal.shape[0], v_count * size))
    table_ok = np.empty(v_count * size, dtype=bool)
    rule0 = _posture.posture_rule(params_list[0])
    per_pass = max(1, _TABLE_CONFIGS // size)
    for lo in range(0, v_count, per_pass):
        part = params_list[lo:lo + per_pass]
        cols = slice(lo * size, (lo + len(part)) * size)
        low = np.concatenate([np.broadcast_to(p.limits[:, 0:1], (n, size)) for p in part], axis=1)
        high = np.concatenate([np.broadcast_to(p.limits[:, 1:2], (n, size)) for p in part], axis=1)
        q = low + (high - low) * np.tile(draw, (1, len(part)))
        frames = _kinematics.forward(stack_params(part, repeat=size), q)
        rule = _posture.PostureRule(rule0.shoulder, rule0.elbow,
                                    np.repeat(sign[lo:lo + len(part)], size))
        table_q[:, cols] = q
        table_pts[:, cols] = params_list[0].task_axes @ frames.tool
        table_ok[cols] = _posture.accepts(posture, _posture.posture_value(rule, frames))
    near = np.empty((seeds, owner.size), dtype=np.intp)
    bounds = np.searchsorted(owner, np.arange(v_count + 1))
    for v in range(v_count):
        at = slice(bounds[v], bounds[v + 1])
        if at.start == at.stop:
            continue
        cols = slice(v * size, (v + 1) * size)
        ok = table_ok[cols]
        pool = np.flatnonzero(ok) if np.any(ok) else np.arange(size)
        _, idx = cKDTree(table_pts[:, cols][:, pool].T).query(goal[:, at].T, k=seeds)
        near[:, at] = v * size + pool[np.asarray(idx).reshape(at.stop - at.start, -1).T]
    diff = table_q[:, near] - reference[:, None, :]
    wrapped = np.arctan2(np.sin(diff), np.cos(diff))
    order = np.argsort(np.sum(wrapped * wrapped, axis=0), axis=0, kind="stable")
    near = np.take_along_axis(near, order, axis=0)
    return np.moveaxis(table_q[:, near], 0, 1)                       # (S, n, M)


def solve_positions_stacked(params_list, points_list, *, posture="elbow_up", seeds=8,
                            tolerance_m=1e-9, max_iterations=40, table_size=16384,
                            random_state=0):
    """``solve_positions`` of many arms, each on its own points, in one batched pass.

    Parameters
    ----------
    params_list : list of ArmParams
        Arms sharing the joint count and the task axes, with as many joints as task axes
        (non-redundant; the numeric solver's case).
    points_list : list of (m_v, 3) arrays
        World points [m] of each arm.
    posture, seeds, tolerance_m, max_iterations, table_size, random_state :
        As for :func:`solve_positions` ('elbow_up' or 'elbow_down').

    Returns
    -------
    q : (M, n) [rad], NaN where not solved; status : (M,) int8 (``STATUS`` codes), for the
    points of all arms in order (M = sum of m_v).
    """
    first = params_list[0]
    n, k = first.n, first.task_axes.shape[0]
    if n != k or posture not in ("elbow_up", "elbow_down"):
        raise ValueError("the stacked solver is for non-redundant arms and posture "
                         "'elbow_up' or 'elbow_down'")
    sizes = [len(p) for p in points_list]
    owner = np.repeat(np.arange(len(params_list)), sizes)
    count = owner.size
    if count == 0:
        return np.empty((0, n)), np.empty(0, dtype=np.int8)
    stacked = stack_params(params_list)
    v_count = len(params_list)

    def at(index):
        return take_params(stacked, owner[index], first)

    pts = np.concatenate([np.reshape(p, (-1, 3)) for p in points_list]).T        # (3, M)
    targets = pts - lift_to(stacked.mount_position, 1, v_count)[:, owner]
    limits = np.stack([p.limits for p in params_list], axis=-1)[..., owner]     # (n, 2, M)
    low, high = limits[:, 0], limits[:, 1]
    reference = limits.mean(axis=1)
    sign = np.array([_posture.posture_rule(p).sign for p in params_list])
    rule0 = _posture.posture_rule(first)
    bound = np.array([reach_bound(p) for p in params_list])
    damping = (1e-3 * bound)[owner]
    tol = float(tolerance_m) * 10.0
    opts = {"tolerance": float(tolerance_m), "max_iterations": int(max_iterations)}

    def refine(q0, idx, clip=True):
        return dls_stacked(at(idx), first, q0, targets[:, idx], damping=damping[idx],
                           low=low[:, idx], high=high[:, idx], clip=clip, **opts)

    def on_branch(idx, q):
        rule = _posture.PostureRule(rule0.shoulder, rule0.elbow, sign[owner[idx]])
        return _posture.accepts(posture, _posture.posture_value(
            rule, _kinematics.forward(at(idx), q)))

    seed_q = _seeds(params_list, first.task_axes @ targets, owner, reference, posture,
                    sign, int(seeds), table_size, random_state)
    s_count = seed_q.shape[0]
    cand = np.full((s_count, n, count), np.nan)
    residual = np.full((s_count, count), np.inf)
    todo = np.arange(count)
    for seeds_round in ([0], list(range(1, s_count))):   # first seed, then all the others
        if not seeds_round or todo.size == 0:
            continue
        sel = np.array(seeds_round)
        idx, rows = np.tile(todo, sel.size), np.repeat(sel, todo.size)
        q_s, r_s = refine(seed_q[rows, :, idx].T, idx)
        cand[rows, :, idx], residual[rows, idx] = q_s.T, r_s
        solved = np.zeros(count, dtype=bool)
        solved[idx[(r_s <= tol) & on_branch(idx, q_s)]] = True
        todo = todo[~solved[todo]]
    origin = _kinematics.forward(stacked, np.zeros((n, v_count))).origin[0]    # (3, V)
    dist = np.sqrt(np.sum((targets - origin[:, owner]) ** 2, axis=0))
    status = np.where(dist > bound[owner], OUT_OF_REACH, OK)
    cand = np.where(np.isnan(cand), 0.0, cand)
    # no seed solved within the limits: again with the limits ignored (``_limits_retry``)
    failing = np.flatnonzero((status == OK) & ~np.any(residual <= tol, axis=0))
    if failing.size:
        idx, rows = np.tile(failing, s_count), np.repeat(np.arange(s_count), failing.size)
        q_f, r_f = refine(seed_q[rows, :, idx].T, idx, clip=False)
        cand[rows, :, idx], residual[rows, idx] = np.arctan2(np.sin(q_f), np.cos(q_f)).T, r_f
    converged = residual <= tol
    status = np.where((status == OK) & ~np.any(converged, axis=0), OUT_OF_REACH, status)
    # ``_usable`` and ``_choose``
    fitted, inside = _fit(cand, low[None], high[None])
    worth = (converged & inside).reshape(-1)
    on = np.zeros(s_count * count, dtype=bool)
    if np.any(worth):
        flat = fitted.transpose(1, 0, 2).reshape(n, -1)[:, worth]
        on[worth] = on_branch(np.flatnonzero(worth) % count, flat)
    usable = converged & inside & on.reshape(s_count, count)
    wrap = np.arctan2(np.sin(fitted - reference[None]), np.cos(fitted - reference[None]))
    distance = np.sqrt(np.sum(wrap * wrap, axis=1))                            # (S, M)
    choice = np.argmin(np.where(usable, distance, np.inf), axis=0)
    q = np.take_along_axis(fitted, choice[None, None, :], axis=0)[0]
    status = np.where(status != OK, status,
                      np.where(np.any(usable, axis=0), OK,
                               np.where(np.any(converged & inside, axis=0), NO_POSTURE,
                                        np.where(np.any(converged, axis=0), BEYOND_LIMITS,
                                                 NOT_CONVERGED))))
    return np.where(status == OK, q, np.nan).T, status.astype(np.int8)
