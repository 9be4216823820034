"""Inertia and capability metrics over batches of configurations (private).

All functions take ``ArmParams`` and float64 ``q`` (..., n) that the public layer
has checked, and share one pass through the core (:func:`task_terms`).
"""

from typing import NamedTuple

import numpy as np

from . import _dynamics, _kinematics

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
    frames: _kinematics.Frames
    jacobian: np.ndarray       # (..., 6, n)
    mass: np.ndarray           # (..., n, n)
    task_jacobian: np.ndarray  # (..., k, n)  A J_v
    minv_jt: np.ndarray        # (..., n, k)  M^-1 (A J_v)^T
    mobility: np.ndarray       # (..., k, k)  A J_v M^-1 J_v^T A^T
    eigvals: np.ndarray        # (..., k) ascending eigenvalues of the mobility matrix
    eigvecs: np.ndarray        # (..., k, k) columns
    singular: np.ndarray       # (...,) bool


def task_terms(params, q):
    """The shared intermediate results of the task-space metrics for ``q`` (..., n)."""
    frames = _kinematics.forward(params, q)
    jac = _kinematics.jacobian(frames)
    mass = _dynamics.mass_matrix(params, frames)
    jt = params.task_axes @ jac[..., :3, :]
    minv_jt = np.linalg.solve(mass, np.swapaxes(jt, -1, -2))
    mobility = jt @ minv_jt
    mobility = 0.5 * (mobility + np.swapaxes(mobility, -1, -2))
    eigvals, eigvecs = np.linalg.eigh(mobility)
    k = params.task_axes.shape[0]
    singular = eigvals[..., 0] <= SINGULAR_RTOL * eigvals[..., -1]
    if params.n < k:
        singular = np.ones_like(singular)
    return TaskTerms(frames, jac, mass, jt, minv_jt, mobility, eigvals, eigvecs, singular)


def _unbounded(terms):
    """(..., k) mask of mobility eigen-directions along which the apparent mass is unbounded."""
    return terms.eigvals <= SINGULAR_RTOL * terms.eigvals[..., -1:]


def apparent_mass(params, terms):
    unbounded = _unbounded(terms)
    inv = np.where(unbounded, 0.0, 1.0 / np.where(unbounded, 1.0, terms.eigvals))
    vec = terms.eigvecs
    lam = (vec * inv[..., None, :]) @ np.swapaxes(vec, -1, -2)
    return np.where(terms.singular[..., None, None], np.nan, lam)


def principal_masses(params, terms):
    unbounded = _unbounded(terms)
    k = terms.eigvals.shape[-1]
    if params.n < k:  # rank at most n: the k - n smallest eigenvalues vanish
        unbounded = unbounded | (np.arange(k) < k - params.n)
    masses = np.where(unbounded, np.inf, 1.0 / np.where(unbounded, 1.0, terms.eigvals))
    directions = params.task_axes.T @ terms.eigvecs            # (..., 3, k)
    return PrincipalMasses(masses[..., ::-1], directions[..., ::-1])


def mass_ratio(params, terms):
    ratio = terms.eigvals[..., 0] / terms.eigvals[..., -1]
    return np.where(terms.singular, 0.0, ratio)


def isotropy_index(params, terms):
    k = params.task_axes.shape[0]
    if params.n < k:
        return np.zeros(terms.singular.shape)
    sv = np.linalg.svd(terms.task_jacobian, compute_uv=False)
    return np.where(terms.singular, 0.0, sv[..., -1] / sv[..., 0])


def manipulability(params, terms):
    k = params.task_axes.shape[0]
    if params.n < k:
        return np.zeros(terms.singular.shape)
    sv = np.linalg.svd(terms.task_jacobian, compute_uv=False)
    return np.prod(sv, axis=-1)


def mass_along(params, terms, w):
    """1 / (w^T Y w) with task coordinates w (..., k) of unit world directions."""
    inv_mass = np.einsum("...i,...ij,...j->...", w, terms.mobility, w)
    unbounded = inv_mass <= SINGULAR_RTOL * terms.eigvals[..., -1]
    return np.where(unbounded, np.inf, 1.0 / np.where(unbounded, 1.0, inv_mass))


def _force_map(terms):
    """J_t^T Lambda (..., n, k) on the bounded eigen-directions, and the unbounded mask (..., k)."""
    unbounded = _unbounded(terms)
    inv = np.where(unbounded, 0.0, 1.0 / np.where(unbounded, 1.0, terms.eigvals))
    vec = terms.eigvecs
    lam_bounded = (vec * inv[..., None, :]) @ np.swapaxes(vec, -1, -2)
    return np.swapaxes(terms.task_jacobian, -1, -2) @ lam_bounded, unbounded


def _dynamic_row_norms(terms):
    """||row_j(J_t^T Lambda)|| (..., n): the worst joint-j torque per unit tool acceleration."""
    fmap, _ = _force_map(terms)
    norms = np.linalg.norm(fmap, axis=-1)
    return np.where(terms.singular[..., None], np.inf, norms)


def torque_headroom(params, terms, accel_mps2):
    gravity = _dynamics.gravity_torque(params, terms.frames)
    static = np.abs(gravity)
    rated = np.isfinite(params.peak_torque)
    if accel_mps2 > 0.0:
        worst = static + accel_mps2 * _dynamic_row_norms(terms)
    else:
        worst = static.copy()
    nan = np.where(rated, 1.0, np.nan)
    utilisation = worst / params.peak_torque
    static_util = static / params.continuous_torque
    headroom = (params.peak_torque - worst) * nan
    margin = np.where(rated, 1.0 - utilisation, np.inf)
    limiting = np.argmin(margin, axis=-1)
    min_margin = np.take_along_axis(margin, limiting[..., None], axis=-1)[..., 0]
    return TorqueHeadroom(static, worst, utilisation * nan, static_util * nan, headroom,
                          min_margin, limiting, float(accel_mps2))


def acceleration_capability(params, terms):
    gravity = _dynamics.gravity_torque(params, terms.frames)
    rated = np.isfinite(params.peak_torque)
    spare = params.peak_torque - np.abs(gravity)             # (..., n)
    norms = _dynamic_row_norms(terms)
    with np.errstate(divide="ignore", invalid="ignore"):
        per_joint = np.where(norms > 0.0, spare / np.where(norms > 0.0, norms, 1.0), np.inf)
    per_joint = np.where(np.isinf(norms), 0.0, per_joint)
    per_joint = np.where(spare < 0.0, 0.0, per_joint)
    per_joint = np.where(rated, per_joint, np.inf)
    return np.maximum(np.min(per_joint, axis=-1), 0.0)


def acceleration_along(params, terms, w, hold_gravity):
    if hold_gravity:
        gravity = _dynamics.gravity_torque(params, terms.frames)
    else:
        gravity = np.zeros(terms.singular.shape + (params.n,))
    fmap, unbounded = _force_map(terms)
    d = np.einsum("...jk,...k->...j", fmap, w)               # torque per unit acceleration
    # any component of w along an unbounded eigen-direction cannot be accelerated
    blocked = np.any(unbounded & (np.abs(np.einsum("...ki,...k->...i", terms.eigvecs, w)) > 1e-9),
                     axis=-1)
    peak = params.peak_torque
    with np.errstate(divide="ignore", invalid="ignore"):
        up = (peak - gravity) / d
        down = (-peak - gravity) / d
    limit = np.where(d > 0.0, up, np.where(d < 0.0, down, np.inf))
    holds = np.abs(gravity) <= peak
    limit = np.where(holds, limit, 0.0)
    limit = np.where(np.isfinite(peak), limit, np.inf)
    best = np.maximum(np.min(limit, axis=-1), 0.0)
    return np.where(blocked, 0.0, best)
