"""Numeric inverse kinematics: damped least squares on batches of seeds (private).

Newton steps dq = J^T (J J^T + l^2 I)^-1 e (Wampler 1986; Nakamura & Hanafusa 1986), all
points at once, from seeds taken from a table of sampled configurations nearest to each
target (or from warm starts).
"""

import numpy as np

from ..core import _kinematics
from ..core._smallmat import matmul, transpose
from ._stack import take_params

__all__ = ["SeedPool", "dls", "dls_stacked", "fit_limits", "reach_bound", "seed_table", "solve_small"]


def fit_limits(q, limits):
    """Shift angles by multiples of 2 pi into the joint limits where possible; (q, inside)."""
    low, high = limits[:, 0:1], limits[:, 1:2]
    two_pi = 2.0 * np.pi
    shifted = q - two_pi * np.floor((q - low) / two_pi)          # in [low, low + 2 pi)
    inside = shifted <= high + 1e-12
    q = np.where(inside, shifted, q)
    return q, np.all(inside, axis=0)


def reach_bound(params):
    """Upper bound of the distance from joint 1's origin to the tool point [m]."""
    lengths = [np.linalg.norm(p) for p in params.joint_position[1:]]
    return float(sum(lengths) + np.linalg.norm(params.tool_position)) + 1e-9


def solve_small(mat, rhs):
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


def dls(params, q, targets, tool_angle=None, *, tolerance, max_iterations, damping,
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
        step = np.sum(jac * solve_small(jjt, err)[:, None, :], axis=0)   # J^T (JJ^T + l^2)^-1 e
        if reference is not None and null_gain > 0.0:
            pull = reference[:, None] - qa
            # project the pull onto the null space of J: (I - J^T (J J^T)^-1 J) pull
            proj = np.sum(jac * solve_small(jjt, np.sum(jac * pull[None], axis=1))[:, None], 0)
            step = step + null_gain * (pull - proj)
        step_norm = np.sqrt(np.sum(step * step, axis=0))
        step = step * np.minimum(1.0, 0.5 / np.maximum(step_norm, 1e-300))[None]  # <= 0.5 rad
        q[:, active] = (np.clip(qa + step, params.limits[:, 0:1], params.limits[:, 1:2])
                        if clip else qa + step)
    low, high = params.limits[:, 0:1], params.limits[:, 1:2]
    at_limit = np.any((q <= low + 1e-9) | (q >= high - 1e-9), axis=0)
    return q, residual, at_limit


def seed_table(params, size, random_state):
    rng = np.random.default_rng(random_state)
    low, high = params.limits[:, 0:1], params.limits[:, 1:2]
    q = low + (high - low) * rng.random((params.n, size))
    return q, _kinematics.forward(params, q)




class SeedPool:
    """Seeds of the numeric solver: warm starts, then table configurations (built lazily).

    Row 0 is the warm start where one is given (``warm`` (n, N), NaN columns: none); the
    other rows are the ``seeds`` table configurations nearest each target in task space
    whose posture the rule ``accepts`` (a function of ``Frames`` -> bool mask), tried
    nearest the reference posture first.
    """

    def __init__(self, params, goal, *, accepts, reference, seeds, table_size, random_state,
                 warm=None):
        self.params, self.goal, self.accepts = params, goal, accepts
        self.reference, self.seeds = reference, int(seeds)
        self.table_size, self.random_state = int(table_size), random_state
        self.warm = warm
        self.offset = 1 if warm is not None else 0
        self.count = self.seeds + self.offset
        self._table_q = self._nearest = None

    def _build(self):
        from scipy.spatial import cKDTree
        params, count = self.params, self.goal.shape[1]
        table_q, table_frames = seed_table(params, self.table_size, self.random_state)
        table_pts = params.task_axes @ table_frames.tool                    # (k, T)
        table_ok = self.accepts(table_frames)
        pool = np.flatnonzero(table_ok) if np.any(table_ok) else np.arange(self.table_size)
        _, near = cKDTree(table_pts[:, pool].T).query(self.goal.T, k=self.seeds)
        near = pool[np.asarray(near).reshape(count, -1).T]                  # (S, N)
        # try first the seeds nearest the reference posture, so that the first solution
        # found on the requested branch tends to be the one nearest it
        diff = table_q[:, near] - self.reference[:, None, None]
        wrapped = np.arctan2(np.sin(diff), np.cos(diff))
        order = np.argsort(np.sum(wrapped * wrapped, axis=0), axis=0, kind="stable")
        self._table_q = table_q
        self._nearest = np.take_along_axis(near, order, axis=0)

    def q(self, rows, idx):
        """Seeds (n, len(idx)) for seed rows ``rows`` at points ``idx``."""
        out = np.empty((self.params.n, idx.size))
        is_warm = rows < self.offset
        if np.any(is_warm):
            out[:, is_warm] = self.warm[:, idx[is_warm]]
            is_warm = is_warm & ~np.all(np.isfinite(out), axis=0)  # no previous solution
        rest = ~(rows < self.offset) | is_warm
        if np.any(rest):
            if self._nearest is None:
                self._build()
            table_row = np.maximum(rows[rest] - self.offset, 0)
            out[:, rest] = self._table_q[:, self._nearest[table_row, idx[rest]]]
        return out


def dls_stacked(params, like, q, targets, *, tolerance, max_iterations, damping, low, high,
                clip=True, shrink_below=1.0):
    """``dls`` for one arm per configuration (non-redundant arms, no tool angle).

    ``params`` holds one arm per configuration (arrays with a trailing batch axis, see
    ``studies._stack``; ``like`` one arm's ``ArmParams``, to tell them apart); ``damping``
    (N,) [m], ``low``/``high`` (n, N) [rad] per configuration. Every configuration takes
    the same steps as ``dls`` of its own arm would (the steps of one configuration do not
    depend on the others); the batch shrinks to the unsettled ones once fewer than
    ``shrink_below`` of them (a fraction) are unsettled (settled ones are held meanwhile:
    for warm starts, where most settle at once, ``0.5`` avoids re-slicing every step).
    Returns q (n, N) and the residual (N,) [m].
    """
    a = params.task_axes
    q = q.copy()
    residual = np.full(q.shape[1], np.inf)
    active = np.arange(q.shape[1])
    sub, sub_targets, sub_low, sub_high, sub_damp = params, targets, low, high, damping
    for iteration in range(max_iterations):
        qa = q[:, active]
        frames = _kinematics.forward(sub, qa)
        err = a @ (sub_targets - frames.tool)
        norm = np.sqrt(np.sum(err * err, axis=0))
        # the stopping rule of dls: converged, or the error no longer shrinks
        stalled = norm > 0.9 * residual[active]
        residual[active] = np.minimum(norm, residual[active])
        done = (norm <= tolerance) | (stalled & (norm > 1e3 * tolerance) & (iteration > 5))
        if np.all(done):
            break
        jac = np.einsum("ki,inN->knN", a, _kinematics.jacobian(frames)[:3])
        keep = ~done
        hold = None
        if not np.all(keep) and keep.mean() < shrink_below:     # drop the settled ones
            active, qa, err, jac = active[keep], qa[:, keep], err[:, keep], jac[:, :, keep]
            sub = take_params(sub, keep, like)
            sub_targets, sub_low, sub_high = sub_targets[:, keep], sub_low[:, keep], sub_high[:, keep]
            sub_damp, norm = sub_damp[keep], norm[keep]
        elif not np.all(keep):
            hold = done                                          # step them, keep them still
        jjt = matmul(jac, transpose(jac))
        lam = np.minimum(sub_damp, 10.0 * norm)
        jjt = jjt + (lam * lam) * np.eye(jjt.shape[0])[:, :, None]
        step = np.sum(jac * solve_small(jjt, err)[:, None, :], axis=0)
        step_norm = np.sqrt(np.sum(step * step, axis=0))
        step = step * np.minimum(1.0, 0.5 / np.maximum(step_norm, 1e-300))[None]  # <= 0.5 rad
        moved = np.clip(qa + step, sub_low, sub_high) if clip else qa + step
        q[:, active] = moved if hold is None else np.where(hold, qa, moved)
    return q, residual
