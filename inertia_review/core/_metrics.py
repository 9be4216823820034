"""Inertia and capability metric kernels in the batch-last layout (private).

Every kernel takes ``ArmParams`` and the shared :class:`TaskTerms` of N
configurations (batch on the last axis) and returns batch-last arrays; the public
layer (``_api``) converts to and from the user's (..., n) shapes.
"""

from typing import NamedTuple

import numpy as np

from . import _dynamics, _kinematics
from ._smallmat import cholesky_forward, lift, matmul, matvec, sym_eig, transpose

__all__ = ["TaskTerms", "task_terms", "PrincipalMasses", "TorqueHeadroom", "SINGULAR_RTOL"]

#: A configuration is singular where the mobility matrix's smallest eigenvalue is at most
#: this times its largest (arm-model.md, "Singularities").
SINGULAR_RTOL = 1e-12


class PrincipalMasses(NamedTuple):
    """Principal apparent masses (..., k) [kg], ascending, and their directions (..., 3, k)."""

    masses: np.ndarray
    directions: np.ndarray


class TorqueHeadroom(NamedTuple):
    """Per-joint torque demand at rest against the actuator ratings; see ``torque_headroom``."""

    static_torque_Nm: np.ndarray
    worst_torque_Nm: np.ndarray
    utilisation: np.ndarray
    static_utilisation: np.ndarray
    headroom_Nm: np.ndarray
    min_margin: np.ndarray
    limiting_joint: np.ndarray
    accel_mps2: float


class TaskTerms(NamedTuple):
    """Shared intermediates for N configurations (batch last)."""

    frames: _kinematics.Frames
    jacobian: np.ndarray       # (6, n, N)
    mass: np.ndarray           # (n, n, N)
    task_jacobian: np.ndarray  # (k, n, N)  J_t = A J_v
    mobility: np.ndarray       # (k, k, N)  J_t M^-1 J_t^T
    eigvals: np.ndarray        # (k, N) ascending eigenvalues of the mobility matrix
    eigvecs: np.ndarray        # (k, k, N) unit eigenvector columns (task coordinates)
    singular: np.ndarray       # (N,) bool


def task_terms(params, q):
    """The shared intermediate results of the task-space metrics for ``q`` (n, N)."""
    frames = _kinematics.forward(params, q)
    jac = _kinematics.jacobian(frames)
    mass = _dynamics.mass_matrix(params, frames)
    jt = np.einsum("ki,inN->knN", params.task_axes, jac[:3])
    y, pivots = cholesky_forward(mass, np.swapaxes(jt, 0, 1))     # (n, k, N)
    mass_singular = ~np.all(pivots > 0.0, axis=0)                  # M itself singular at q
    y = np.where(mass_singular, 0.0, y)
    mobility = matmul(transpose(y), y)
    eigvals, eigvecs = sym_eig(mobility)
    k = params.task_axes.shape[0]
    singular = (eigvals[0] <= SINGULAR_RTOL * eigvals[-1]) | mass_singular
    if params.n < k:
        singular = np.ones_like(singular)
    return TaskTerms(frames, jac, mass, jt, mobility, eigvals, eigvecs, singular)


def _unbounded(params, terms):
    """(k, N) mask of mobility eigen-directions along which the apparent mass is unbounded."""
    vals = terms.eigvals
    k = vals.shape[0]
    unbounded = vals <= SINGULAR_RTOL * vals[-1]
    if params.n < k:  # rank at most n: the k - n smallest eigenvalues vanish
        unbounded = unbounded | (np.arange(k) < k - params.n)[:, None]
    return unbounded


def _inverse_on_bounded(params, terms):
    """1 / eigenvalue on bounded directions, 0 on unbounded ones, (k, N)."""
    unbounded = _unbounded(params, terms)
    return np.where(unbounded, 0.0, 1.0 / np.where(unbounded, 1.0, terms.eigvals)), unbounded


def apparent_mass(params, terms):
    """Lambda (k, k, N) [kg]; NaN in every entry where singular."""
    inv, _ = _inverse_on_bounded(params, terms)
    vec = terms.eigvecs
    lam = matmul(vec * inv[None], transpose(vec))
    return np.where(terms.singular, np.nan, lam)


def principal_masses(params, terms):
    """masses (k, N) ascending [kg] (inf where unbounded), directions (3, k, N) in W."""
    inv, unbounded = _inverse_on_bounded(params, terms)
    masses = np.where(unbounded, np.inf, 1.0 / np.where(unbounded, 1.0, terms.eigvals))
    directions = np.einsum("ki,kjN->ijN", params.task_axes, terms.eigvecs)
    return masses[::-1], directions[:, ::-1]


def mass_ratio(params, terms):
    ratio = terms.eigvals[0] / np.where(terms.singular, 1.0, terms.eigvals[-1])
    return np.where(terms.singular, 0.0, ratio)


def _square_det(m):
    """Determinant of a (k, k, N) stack for k <= 3 (explicit cofactor expansion)."""
    k = m.shape[0]
    if k == 1:
        return m[0, 0]
    if k == 2:
        return m[0, 0] * m[1, 1] - m[0, 1] * m[1, 0]
    return (m[0, 0] * (m[1, 1] * m[2, 2] - m[1, 2] * m[2, 1])
            - m[0, 1] * (m[1, 0] * m[2, 2] - m[1, 2] * m[2, 0])
            + m[0, 2] * (m[1, 0] * m[2, 1] - m[1, 1] * m[2, 0]))


def _task_gram_eigvals(params, terms):
    """Ascending eigenvalues (k, N) of J_t J_t^T (squared singular values of J_t).

    For a square J_t the smallest one is recomputed as det(J_t)^2 / (product of the others),
    which keeps its relative accuracy near singular configurations.
    """
    jt = terms.task_jacobian
    vals, _ = sym_eig(matmul(jt, transpose(jt)))
    vals = np.maximum(vals, 0.0)
    k = jt.shape[0]
    if jt.shape[1] == k and k <= 3:
        det2 = _square_det(jt) ** 2
        others = np.prod(vals[1:], axis=0)
        vals[0] = np.where(others > 0.0, det2 / np.where(others > 0.0, others, 1.0), 0.0)
    return vals


def isotropy_index(params, terms):
    """sigma_min / sigma_max of J_t (N,); 0 where singular or n < k."""
    if params.n < params.task_axes.shape[0]:
        return np.zeros(terms.singular.shape)
    vals = _task_gram_eigvals(params, terms)
    ratio = np.sqrt(vals[0] / np.where(vals[-1] > 0.0, vals[-1], 1.0))
    return np.where(terms.singular, 0.0, ratio)


def manipulability(params, terms):
    """sqrt(det(J_t J_t^T)) (N,); 0 where n < k."""
    k = params.task_axes.shape[0]
    if params.n < k:
        return np.zeros(terms.singular.shape)
    if params.n == k and k <= 3:
        return np.abs(_square_det(terms.task_jacobian))
    return np.sqrt(np.prod(_task_gram_eigvals(params, terms), axis=0))


def mass_along(params, terms, w):
    """1 / (w^T Y w) (N,) for task coordinates w (k, N) of unit world directions."""
    inv_mass = np.sum(w * matvec(terms.mobility, w), axis=0)
    unbounded = inv_mass <= SINGULAR_RTOL * terms.eigvals[-1]
    return np.where(unbounded, np.inf, 1.0 / np.where(unbounded, 1.0, inv_mass))


def _force_map(params, terms):
    """J_t^T Lambda (n, k, N) on the bounded eigen-directions, and the unbounded mask (k, N)."""
    inv, unbounded = _inverse_on_bounded(params, terms)
    vec = terms.eigvecs
    lam_bounded = matmul(vec * inv[None], transpose(vec))
    return matmul(transpose(terms.task_jacobian), lam_bounded), unbounded


def _dynamic_row_norms(params, terms):
    """||row_j(J_t^T Lambda)|| (n, N): the worst joint-j torque per unit tool acceleration."""
    fmap, _ = _force_map(params, terms)
    norms = np.sqrt(np.sum(fmap * fmap, axis=1))
    return np.where(terms.singular, np.inf, norms)


def torque_headroom(params, terms, accel_mps2):
    """TorqueHeadroom with batch-last arrays ((n, N) per joint, (N,) summaries)."""
    static = np.abs(_dynamics.gravity_torque(params, terms.frames))
    rated = np.isfinite(lift(params.peak_torque, 1))
    if accel_mps2 > 0.0:
        worst = static + accel_mps2 * _dynamic_row_norms(params, terms)
    else:
        worst = static.copy()
    nan = np.where(rated, 1.0, np.nan)
    peak = lift(params.peak_torque, 1)
    utilisation = worst / peak
    static_util = static / lift(params.continuous_torque, 1)
    headroom = (peak - worst) * nan
    margin = np.where(rated, 1.0 - utilisation, np.inf)
    limiting = np.argmin(margin, axis=0)
    min_margin = np.take_along_axis(margin, limiting[None], axis=0)[0]
    return TorqueHeadroom(static, worst, utilisation * nan, static_util * nan, headroom,
                          min_margin, limiting, float(accel_mps2))


def acceleration_capability(params, terms):
    """min over task directions of the reachable tool acceleration (N,) [m/s^2]."""
    gravity = _dynamics.gravity_torque(params, terms.frames)
    rated = np.isfinite(lift(params.peak_torque, 1))
    spare = lift(params.peak_torque, 1) - np.abs(gravity)       # (n, N)
    norms = _dynamic_row_norms(params, terms)
    positive = norms > 0.0
    per_joint = np.where(positive, spare / np.where(positive, norms, 1.0), np.inf)
    per_joint = np.where(np.isinf(norms), 0.0, per_joint)
    per_joint = np.where(spare < 0.0, 0.0, per_joint)
    per_joint = np.where(rated, per_joint, np.inf)
    return np.maximum(np.min(per_joint, axis=0), 0.0)


def acceleration_along(params, terms, w, hold_gravity):
    """Reachable tool acceleration (N,) [m/s^2] along task coordinates w (k, N)."""
    count = terms.singular.shape[0]
    if hold_gravity:
        gravity = _dynamics.gravity_torque(params, terms.frames)
    else:
        gravity = np.zeros((params.n, count))
    fmap, unbounded = _force_map(params, terms)
    d = matvec(fmap, w)                       # torque per unit acceleration
    # a part of w along an unbounded-mass direction cannot be accelerated at all
    along = np.abs(matvec(transpose(terms.eigvecs), w))
    blocked = np.any(unbounded & (along > 1e-9), axis=0)
    peak = params.peak_torque[:, None]
    safe_d = np.where(d != 0.0, d, 1.0)
    limit = np.where(d > 0.0, (peak - gravity) / safe_d,
                     np.where(d < 0.0, (-peak - gravity) / safe_d, np.inf))
    limit = np.where(np.abs(gravity) <= peak, limit, 0.0)
    limit = np.where(np.isfinite(peak), limit, np.inf)
    best = np.maximum(np.min(limit, axis=0), 0.0)
    return np.where(blocked, 0.0, best)
