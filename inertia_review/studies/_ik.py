"""From tool points to configurations: inverse kinematics over whole regions (private).

Two solvers, both vectorised over all points at once:

- ``planar_two_joint``: closed form for two-joint planar arms (any link geometry, both
  elbow branches), from the law of cosines;
- ``damped_least_squares``: any arm, Newton steps dq = J^T (J J^T + l^2 I)^-1 e
  (Wampler 1986; Nakamura & Hanafusa 1986) from several seeds taken from a table of
  sampled configurations nearest to each target.

Points that cannot be solved keep NaN angles and a status code (``STATUS``); nothing
is dropped or filled in.
"""

from typing import NamedTuple

import numpy as np

from ..core import _kinematics
from ..core._layout import from_core, to_core
from ..core._smallmat import matmul, transpose

__all__ = ["STATUS", "PositionSolution", "solve_positions", "POSTURES"]

#: Status codes of solved points, and what they mean.
STATUS = {
    0: "ok",
    1: "out_of_reach",
    2: "beyond_joint_limits",
    3: "not_converged",
    4: "off_task_plane",
    5: "posture_unavailable",
}
OK, OUT_OF_REACH, BEYOND_LIMITS, NOT_CONVERGED, OFF_PLANE, NO_POSTURE = range(6)

POSTURES = ("elbow_up", "elbow_down", "nearest")


class PositionSolution(NamedTuple):
    """Joint angles (..., n) [rad] (NaN where not solved), status (...,) int8, residual (...,) [m]."""

    q: np.ndarray
    status: np.ndarray
    residual_m: np.ndarray


def _up_direction(params):
    """'Up' for the posture rules: against gravity, within the task span.

    Where gravity has no part in the task span (a planar arm in a horizontal plane, or no
    gravity), the task's last axis stands in for 'up'.
    """
    a = params.task_axes
    g = params.gravity
    up = -(a.T @ (a @ g))
    norm = np.linalg.norm(up)
    if norm > 1e-9 * max(np.linalg.norm(g), 1e-300):
        return up / norm
    return a[-1]


def _posture_value(params, frames, elbow_joint):
    """How far the elbow sits above the line from joint 1 to the tool, along 'up' (N,) [m]."""
    up = _up_direction(params)[:, None]
    base = frames.origin[0]
    line = frames.tool - base
    line = line / np.maximum(np.sqrt(np.sum(line * line, axis=0)), 1e-300)
    elbow = frames.origin[elbow_joint] - base
    off = elbow - np.sum(elbow * line, axis=0) * line
    return np.sum(off * up, axis=0)


def _fit_limits(q, limits):
    """Shift angles by multiples of 2 pi into the joint limits where possible; (q, inside)."""
    low, high = limits[:, 0:1], limits[:, 1:2]
    two_pi = 2.0 * np.pi
    shifted = q - two_pi * np.floor((q - low) / two_pi)          # in [low, low + 2 pi)
    inside = shifted <= high + 1e-12
    q = np.where(inside, shifted, q)
    return q, np.all(inside, axis=0)


def _reach_bound(params):
    """Upper bound of the distance from joint 1's origin to the tool point [m]."""
    lengths = [np.linalg.norm(p) for p in params.joint_position[1:]]
    return float(sum(lengths) + np.linalg.norm(params.tool_position)) + 1e-9


def _planar_geometry(params):
    """In-plane link vectors and rotation senses of a two-joint planar arm at q = 0."""
    zero = np.zeros((params.n, 1))
    frames = _kinematics.forward(params, zero)
    a = params.task_axes
    o1, o2, tool = frames.origin[0, :, 0], frames.origin[1, :, 0], frames.tool[:, 0]
    normal = np.cross(a[0], a[1])
    senses = np.sign(frames.axis[:, :, 0] @ normal)
    return o1, a @ (o2 - o1), a @ (tool - o2), senses, normal, float(normal @ (tool - o1))


def _planar_two_joint(params, targets):
    """Both closed-form branches for targets (3, N): q (2 branches, 2, N) and status (N,)."""
    o1, r1, r2, senses, normal, plane_offset = _planar_geometry(params)
    rel = targets - o1[:, None]
    t = params.task_axes @ rel                                     # (2, N)
    off_plane = np.abs(normal @ rel - plane_offset) > 1e-6
    l1, l2 = np.linalg.norm(r1), np.linalg.norm(r2)
    phi1, phi12 = np.arctan2(r1[1], r1[0]), np.arctan2(r2[1], r2[0])
    dist2 = np.sum(t * t, axis=0)
    cos_beta = (dist2 - l1 * l1 - l2 * l2) / (2.0 * l1 * l2)
    reachable = np.abs(cos_beta) <= 1.0 + 1e-12
    beta = np.arccos(np.clip(cos_beta, -1.0, 1.0))
    branches = []
    for b in (beta, -beta):
        theta2 = b - (phi12 - phi1)
        w_angle = phi1 + np.arctan2(l2 * np.sin(b), l1 + l2 * np.cos(b))
        theta1 = np.arctan2(t[1], t[0]) - w_angle
        q = np.stack([theta1 * senses[0], theta2 * senses[1]])
        branches.append(np.arctan2(np.sin(q), np.cos(q)))          # wrap to (-pi, pi]
    status = np.where(off_plane, OFF_PLANE, np.where(reachable, OK, OUT_OF_REACH))
    return np.stack(branches), status


def _solve_small(mat, rhs):
    """Solve (k, k, N) x = (k, N) for k <= 3 by the adjugate (symmetric positive definite mat)."""
    k = mat.shape[0]
    if k == 1:
        return rhs / mat[0]
    if k == 2:
        a, b, c, d = mat[0, 0], mat[0, 1], mat[1, 0], mat[1, 1]
        det = a * d - b * c
        return np.stack([(d * rhs[0] - b * rhs[1]) / det, (a * rhs[1] - c * rhs[0]) / det])
    if k == 3:
        m = mat
        c00 = m[1, 1] * m[2, 2] - m[1, 2] * m[2, 1]
        c01 = m[1, 2] * m[2, 0] - m[1, 0] * m[2, 2]
        c02 = m[1, 0] * m[2, 1] - m[1, 1] * m[2, 0]
        c11 = m[0, 0] * m[2, 2] - m[0, 2] * m[2, 0]
        c12 = m[0, 1] * m[2, 0] - m[0, 0] * m[2, 1]
        c22 = m[0, 0] * m[1, 1] - m[0, 1] * m[1, 0]
        det = m[0, 0] * c00 + m[0, 1] * c01 + m[0, 2] * c02
        # symmetric matrix: the adjugate is symmetric
        return np.stack([c00 * rhs[0] + c01 * rhs[1] + c02 * rhs[2],
                         c01 * rhs[0] + c11 * rhs[1] + c12 * rhs[2],
                         c02 * rhs[0] + c12 * rhs[1] + c22 * rhs[2]]) / det
    return np.moveaxis(np.linalg.solve(np.moveaxis(mat, -1, 0), np.moveaxis(rhs, -1, 0)[..., None])
                       [..., 0], 0, -1)


def _dls(params, q, targets, tool_angle=None, *, tolerance, max_iterations, damping,
         reference=None, null_gain=0.0, clip=True):
    """Damped least-squares iterations on (n, N) seeds toward targets (3, N).

    With ``clip`` each step is clipped to the joint limits (the seeds lie inside them), so
    a converged point is inside the limits. Returns q, the residual [m] and the
    at-a-limit mask.
    """
    a = params.task_axes
    senses = None
    if tool_angle is not None:
        normal = np.cross(a[0], a[1])
        frames0 = _kinematics.forward(params, np.zeros((params.n, 1)))
        senses = np.sign(frames0.axis[:, :, 0] @ normal)
    active = np.arange(q.shape[1])
    q = q.copy()
    residual = np.full(q.shape[1], np.inf)
    for iteration in range(max_iterations):
        qa = q[:, active]
        frames = _kinematics.forward(params, qa)
        err = a @ (targets[:, active] - frames.tool)               # (k, Na)
        jac = np.einsum("ki,inN->knN", a, _kinematics.jacobian(frames)[:3])
        if tool_angle is not None:
            angle_err = tool_angle[active] - (senses @ qa)
            angle_err = np.arctan2(np.sin(angle_err), np.cos(angle_err))
            err = np.concatenate([err, angle_err[None] * 0.1])    # 0.1 m per rad
            jac = np.concatenate([jac, 0.1 * np.broadcast_to(senses[None, :, None],
                                                              (1, params.n, qa.shape[1]))])
        norm = np.sqrt(np.sum(err * err, axis=0))
        # stop points that converged, and points whose error no longer shrinks (a local
        # minimum of the distance: out of reach from that seed)
        stalled = norm > 0.9 * residual[active]
        residual[active] = np.minimum(norm, residual[active])
        done = (norm <= tolerance) | (stalled & (norm > 1e3 * tolerance) & (iteration > 5))
        if np.all(done):
            break
        keep = ~done
        active, qa, err, jac = active[keep], qa[:, keep], err[:, keep], jac[:, :, keep]
        jjt = matmul(jac, transpose(jac))
        # damping shrinks with the error (Levenberg-Marquardt style), so that steps near a
        # singular configuration stay bounded and convergence stays fast near the solution
        lam = np.minimum(damping, 10.0 * norm[keep])
        jjt = jjt + (lam * lam) * np.eye(jjt.shape[0])[:, :, None]
        step = np.sum(jac * _solve_small(jjt, err)[:, None, :], axis=0)   # J^T (JJ^T + l^2)^-1 e
        if reference is not None and null_gain > 0.0:
            pull = reference[:, None] - qa
            # project the pull onto the null space of J: (I - J^T (J J^T)^-1 J) pull
            proj = np.sum(jac * _solve_small(jjt, np.sum(jac * pull[None], axis=1))[:, None], 0)
            step = step + null_gain * (pull - proj)
        step_norm = np.sqrt(np.sum(step * step, axis=0))
        step = step * np.minimum(1.0, 0.5 / np.maximum(step_norm, 1e-300))[None]  # <= 0.5 rad
        q[:, active] = (np.clip(qa + step, params.limits[:, 0:1], params.limits[:, 1:2])
                        if clip else qa + step)
    low, high = params.limits[:, 0:1], params.limits[:, 1:2]
    at_limit = np.any((q <= low + 1e-9) | (q >= high - 1e-9), axis=0)
    return q, residual, at_limit


def _seed_table(params, size, random_state):
    rng = np.random.default_rng(random_state)
    low, high = params.limits[:, 0:1], params.limits[:, 1:2]
    q = low + (high - low) * rng.random((params.n, size))
    return q, _kinematics.forward(params, q)


def solve_positions(arm, points, *, posture="elbow_up", reference_deg=None, tool_angle_deg=None,
                    elbow_joint=None, seeds=8, tolerance_m=1e-9, max_iterations=40,
                    table_size=16384, random_state=0, method="auto", initial_q=None):
    """Joint configurations that put the tool point at world points (..., 3) [m].

    Parameters
    ----------
    posture : {'elbow_up', 'elbow_down', 'nearest'}
        Branch rule. 'elbow_up' keeps the branch whose elbow joint (``elbow_joint``,
        default the last joint) sits above the line from joint 1 to the tool point,
        "above" meaning against gravity within the task span (for an arm in a horizontal
        plane: along the plane's second task axis); 'nearest' the solution nearest
        ``reference_deg``. Where several solutions satisfy the rule, the one nearest
        ``reference_deg`` is kept.
    reference_deg : sequence of n float, optional
        Reference posture [deg] for 'nearest' (default: the middle of the joint limits).
    tool_angle_deg : float or array, optional
        Planar redundant chains: the fixed angle of the last link in the plane [deg].
        Other redundant arms take the solution nearest the reference posture.
    method : {'auto', 'closed_form', 'numeric'}
        'auto' uses the closed form for two-joint planar arms, the numeric solver otherwise.
    initial_q : array_like (..., n), optional
        Warm start for the numeric solver (e.g. the previous solution after a small design
        change); NaN entries fall back to the seed table, which is built only if needed.

    Returns
    -------
    PositionSolution
        ``q`` (..., n) [rad], within the joint limits, NaN where not solved; ``status``
        (...,) with the codes of ``STATUS``; ``residual_m`` (...,) tool position error [m].
    """
    params = arm._params
    if posture not in POSTURES:
        raise ValueError(f"'{posture}' is not a valid posture; supported postures are "
                         f"{', '.join(POSTURES)}")
    pts = np.asarray(points, dtype=float)
    if pts.ndim == 0 or pts.shape[-1] != 3 or not np.all(np.isfinite(pts)):
        raise ValueError(f"Expected finite `points` with shape (..., 3) [m], got {pts.shape}.")
    (targets,), batch = to_core(pts)
    targets = targets - params.mount_position[:, None]    # the core works relative to the mount
    count = targets.shape[1]
    n, k = params.n, params.task_axes.shape[0]
    elbow = n - 1 if elbow_joint is None else int(elbow_joint)
    if reference_deg is None:
        reference = params.limits.mean(axis=1)
    else:
        reference = np.deg2rad(np.asarray(reference_deg, float))
        if reference.shape != (n,):
            raise ValueError(f"`reference_deg` must have {n} entries; got {reference.shape}")
    if n > k and tool_angle_deg is None and posture != "nearest":
        raise ValueError(f"design '{arm.name}' is redundant for its {k}-axis task ({n} joints): "
                         "give tool_angle_deg (planar chains) or use posture='nearest'")
    closed = method == "closed_form" or (method == "auto" and n == 2 and k == 2)
    if method == "closed_form" and not (n == 2 and k == 2):
        raise ValueError("the closed-form solver is for two-joint planar arms")

    o1 = _kinematics.forward(params, np.zeros((n, 1))).origin[0, :, 0]
    if k < 3:
        normal = np.cross(params.task_axes[0], params.task_axes[1]) if k == 2 else None
        tool0 = _kinematics.forward(params, np.zeros((n, 1))).tool[:, 0]
        plane_offset = normal @ (tool0 - o1)
        off_plane = np.abs(normal @ (targets - o1[:, None]) - plane_offset) > 1e-6
    else:
        off_plane = np.zeros(count, dtype=bool)

    if closed:
        branches, status = _planar_two_joint(params, targets)
        candidates = branches                                             # (2, n, N)
        converged = np.broadcast_to(status == OK, (2, count))
        residual = np.zeros((2, count))
    else:
        goal = params.task_axes @ targets
        warm = None
        if initial_q is not None:
            warm = np.asarray(initial_q, float).reshape(-1, n)
            if warm.shape[0] != count:
                raise ValueError(f"`initial_q` must have shape {batch + (n,)} like the points; "
                                 f"got {np.shape(initial_q)}")
            warm = warm.T.copy()                                          # (n, N)
        offset = 1 if warm is not None else 0
        s_count = int(seeds) + offset
        table = {}

        def nearest_rows():
            """(S, N) table indices of the nearest seeds in the requested posture (lazy)."""
            if "nearest" not in table:
                from scipy.spatial import cKDTree
                table_q, table_frames = _seed_table(params, table_size, random_state)
                table_pts = params.task_axes @ table_frames.tool          # (k, T)
                table_posture = _posture_value(params, table_frames, elbow)
                if posture == "elbow_up":
                    table_ok = table_posture > 0.0
                elif posture == "elbow_down":
                    table_ok = table_posture < 0.0
                else:
                    table_ok = np.ones(table_size, dtype=bool)
                pool = np.flatnonzero(table_ok) if np.any(table_ok) else np.arange(table_size)
                _, near = cKDTree(table_pts[:, pool].T).query(goal.T, k=int(seeds))
                near = pool[np.asarray(near).reshape(count, -1).T]            # (S, N)
                # try first the seeds nearest the reference posture, so that the first
                # solution found in the requested posture tends to be the one nearest it
                diff = table_q[:, near] - reference[:, None, None]
                wrapped = np.arctan2(np.sin(diff), np.cos(diff))
                order = np.argsort(np.sum(wrapped * wrapped, axis=0), axis=0, kind="stable")
                table["q"] = table_q
                table["nearest"] = np.take_along_axis(near, order, axis=0)
            return table["nearest"]

        def seed_q(rows, idx):
            """Seeds (n, len(idx)) for seed rows (0 = the warm start when given) at points idx."""
            out = np.empty((n, idx.size))
            is_warm = rows < offset
            if np.any(is_warm):
                w = warm[:, idx[is_warm]]
                out[:, is_warm] = w
            rest = ~is_warm
            if np.any(rest):
                near = nearest_rows()
                out[:, rest] = table["q"][:, near[rows[rest] - offset, idx[rest]]]
            if warm is not None and np.any(is_warm):
                bad = is_warm & ~np.all(np.isfinite(out), axis=0)
                if np.any(bad):                    # no previous solution: nearest table seed
                    near = nearest_rows()
                    out[:, bad] = table["q"][:, near[0, idx[bad]]]
            return out

        angle = None
        if tool_angle_deg is not None:
            angle = np.broadcast_to(np.deg2rad(np.asarray(tool_angle_deg, float)),
                                    batch).reshape(-1)
        candidates = np.full((s_count, n, count), np.nan)
        residual = np.full((s_count, count), np.inf)
        limit_all = np.zeros((s_count, count), dtype=bool)
        # round 1: the nearest seed for every point; round 2: all other seeds at once, for
        # the points that round 1 did not solve in the requested posture ('nearest' compares
        # every seed's solution, so it runs all seeds for all points)
        rounds = [[0], list(range(1, s_count))] if posture != "nearest" else [list(range(s_count))]
        todo = np.arange(count)
        for seeds_round in rounds:
            if not seeds_round or todo.size == 0:
                continue
            sel = np.array(seeds_round)
            idx = np.tile(todo, sel.size)
            seed_rows = np.repeat(sel, todo.size)
            q_s, r_s, l_s = _dls(params, seed_q(seed_rows, idx), targets[:, idx],
                                 None if angle is None else angle[idx], tolerance=tolerance_m,
                                 max_iterations=max_iterations,
                                 damping=1e-3 * _reach_bound(params),
                                 reference=reference if n > k else None,
                                 null_gain=0.2 if (n > k and angle is None) else 0.0)
            candidates[seed_rows, :, idx] = q_s.T
            residual[seed_rows, idx] = r_s
            limit_all[seed_rows, idx] = l_s
            if posture != "nearest":
                pval_s = _posture_value(params, _kinematics.forward(params, q_s), elbow)
                good = (r_s <= tolerance_m * 10.0) & (pval_s > -1e-12 if posture == "elbow_up"
                                                      else pval_s < 1e-12)
                solved = np.zeros(count, dtype=bool)
                solved[idx[good]] = True
                todo = todo[~solved[todo]]
        candidates = np.where(np.isnan(candidates), 0.0, candidates)
        converged = residual <= tolerance_m * 10.0
        dist = np.linalg.norm(targets - o1[:, None], axis=0)
        status = np.where(dist > _reach_bound(params), OUT_OF_REACH, OK)
        status = np.where(off_plane, OFF_PLANE, status)
        # points no seed solved within the limits: try again with the limits ignored, to
        # tell "beyond the joint limits" (a solution exists outside them) from "out of reach"
        failing = np.flatnonzero((status == OK) & ~np.any(converged, axis=0))
        if failing.size:
            idx = np.tile(failing, s_count)
            rows = np.repeat(np.arange(s_count), failing.size)
            q_f, r_f, _ = _dls(params, seed_q(rows, idx), targets[:, idx],
                               None if angle is None else angle[idx], tolerance=tolerance_m,
                               max_iterations=max_iterations,
                               damping=1e-3 * _reach_bound(params), clip=False)
            candidates[rows, :, idx] = np.arctan2(np.sin(q_f), np.cos(q_f)).T
            residual[rows, idx] = r_f
            converged = residual <= tolerance_m * 10.0
            status = np.where((status == OK) & ~np.any(converged, axis=0), OUT_OF_REACH, status)

    # joint limits, posture and choice among candidates
    s_count = candidates.shape[0]
    fitted, inside = zip(*(_fit_limits(candidates[s], params.limits) for s in range(s_count)))
    fitted, inside = np.stack(fitted), np.stack(inside)                   # (S, n, N), (S, N)
    # posture of the candidates worth choosing only (converged, inside the limits)
    worth = (converged & inside).reshape(-1)
    pval = np.zeros(s_count * count)
    if np.any(worth):
        flat = fitted.transpose(1, 0, 2).reshape(n, -1)[:, worth]
        pval[worth] = _posture_value(params, _kinematics.forward(params, flat), elbow)
    pval = pval.reshape(s_count, count)
    if posture == "elbow_up":
        posture_ok = pval > -1e-12
    elif posture == "elbow_down":
        posture_ok = pval < 1e-12
    else:
        posture_ok = np.ones_like(pval, dtype=bool)
    usable = converged & inside & posture_ok
    wrap = np.arctan2(np.sin(fitted - reference[None, :, None]),
                      np.cos(fitted - reference[None, :, None]))
    distance = np.sqrt(np.sum(wrap * wrap, axis=1))                       # (S, N)
    # among usable candidates the one nearest the reference posture wins (for the branch rules
    # too), so that neighbouring points get the same kind of solution (e.g. not a mirror pose
    # of a yaw-pitch-pitch arm reaching over its top)
    choice = np.argmin(np.where(usable, distance, np.inf), axis=0)
    q_best = np.take_along_axis(fitted, choice[None, None, :], axis=0)[0]
    res_best = np.take_along_axis(residual, choice[None, :], axis=0)[0]
    any_usable = np.any(usable, axis=0)
    final = np.where(status != OK, status,
                     np.where(any_usable, OK,
                              np.where(np.any(converged & inside, axis=0), NO_POSTURE,
                                       np.where(np.any(converged, axis=0), BEYOND_LIMITS,
                                                NOT_CONVERGED))))
    q_best = np.where(final == OK, q_best, np.nan)
    if closed:
        res_best = np.where(final == OK, res_best, np.nan)
    else:
        res_best = np.where(final == OK, res_best, np.min(residual, axis=0))
    return PositionSolution(from_core(q_best, batch), from_core(final.astype(np.int8), batch),
                            from_core(res_best, batch))
