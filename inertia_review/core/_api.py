"""Public metric functions of an arm (private module; import from the package).

Each takes an :class:`~inertia_review.Arm` and joint angles ``q`` of shape (..., n)
[rad] and broadcasts over the leading axes. Singular configurations (the mobility
matrix's smallest eigenvalue at most 1e-12 times its largest, or n < k) follow
arm-model.md: nothing raises; unbounded masses are ``inf``.
"""

import numpy as np

from . import _metrics
from ._args import check_unit_in_span
from ._layout import from_core, to_core

__all__ = ["apparent_mass", "principal_masses", "mass_ratio", "mass_along", "isotropy_index",
           "near_singular", "manipulability", "torque_headroom", "acceleration_capability",
           "acceleration_along", "evaluate_metrics"]


def _terms(arm, q, u=None):
    """Shared core terms, the batch shape and (with ``u``) task coordinates (k, N)."""
    q = arm._q(q)
    if u is None:
        (qc,), batch = to_core(q)
        return _metrics.task_terms(arm._params, qc), batch
    w = check_unit_in_span(u, arm._params.task_axes)
    (qc, wc), batch = to_core(q, w)
    return _metrics.task_terms(arm._params, qc), batch, wc


def apparent_mass(arm, q):
    """Apparent (operational-space) mass of the tool point, (..., k, k) [kg].

    Lambda = (A J_v M^-1 J_v^T A^T)^-1 with A = ``arm.task_axes``: the mass felt when
    pushing the tool point with the joints and the orientation free. This is Khatib's
    operational-space inertia of the translational task [1]_ (for a square J, J^-T M J^-1).
    NaN in every entry at singular configurations.

    References
    ----------
    .. [1] O. Khatib, "A unified approach for motion and force control of robot
       manipulators: the operational space formulation", IEEE J. Robotics and
       Automation RA-3(1), 1987 (eq. 18; eqs. 51-52 for redundant arms).
    """
    terms, batch = _terms(arm, q)
    return from_core(_metrics.apparent_mass(arm._params, terms), batch)


def principal_masses(arm, q):
    """Principal apparent masses and directions.

    Returns
    -------
    PrincipalMasses
        ``masses`` (..., k) [kg] ascending (``inf`` along unbounded directions) and
        ``directions`` (..., 3, k): unit columns in W, column i for ``masses[..., i]``.
        The axes of the generalized inertia ellipsoid x^T Lambda x = 1 (Asada 1983) have
        semi-axes 1 / sqrt(mass).
    """
    terms, batch = _terms(arm, q)
    masses, directions = _metrics.principal_masses(arm._params, terms)
    return _metrics.PrincipalMasses(from_core(masses, batch), from_core(directions, batch))


def mass_ratio(arm, q):
    """lambda_min / lambda_max of the apparent mass, (...,) in [0, 1]; 0 where singular.

    1 means the tool feels equally heavy in every task direction.
    """
    terms, batch = _terms(arm, q)
    return from_core(_metrics.mass_ratio(arm._params, terms), batch)


def mass_along(arm, q, u):
    """Apparent mass felt along world unit vectors ``u`` (..., 3) [kg], (...,).

    m_u = 1 / (u^T J_v M^-1 J_v^T u) (Khatib 1995, IJRR 14(1), effective mass), with the
    orientation free. ``u`` must be unit and lie in the task span (within 1e-9), else
    ValueError; ``inf`` where the mass along ``u`` is unbounded.
    """
    terms, batch, w = _terms(arm, q, u)
    return from_core(_metrics.mass_along(arm._params, terms, w), batch)


def isotropy_index(arm, q):
    """sigma_min / sigma_max of the task Jacobian A J_v, (...,) in [0, 1]; 0 where singular.

    The inverse 2-norm condition number of the Jacobian, proposed as a measure of
    kinematic quality by Salisbury & Craig, IJRR 1(1):4-17, 1982 (1 = isotropic).
    """
    terms, batch = _terms(arm, q)
    return from_core(_metrics.isotropy_index(arm._params, terms), batch)


def near_singular(arm, q, threshold=0.01):
    """Boolean mask (...,) where ``isotropy_index < threshold``, for plots to hatch."""
    return isotropy_index(arm, q) < threshold


def manipulability(arm, q):
    """Yoshikawa's manipulability sqrt(det(J_t J_t^T)) of the task Jacobian J_t = A J_v, (...,).

    Units m^k per rad^k. For a planar two-link arm l1 l2 |sin q2| (T. Yoshikawa,
    "Manipulability of robotic mechanisms", IJRR 4(2):3-9, 1985). 0 where n < k.
    """
    terms, batch = _terms(arm, q)
    return from_core(_metrics.manipulability(arm._params, terms), batch)


def _require_ratings(arm):
    if not np.any(np.isfinite(arm._params.peak_torque)):
        raise ValueError(f"design '{arm.name}' has no joint with a peak_torque_Nm rating "
                         "([joints.actuator]); torque headroom is not defined")


def torque_headroom(arm, q, accel_mps2=0.0):
    """Torque headroom at rest: gravity plus a required tool acceleration in any task direction.

    Per joint j: worst torque = |g_j(q)| + a * ||row_j(J_t^T Lambda)||, the largest
    |g_j + (J_t^T Lambda a u)_j| over unit task directions u (from F = Lambda a and
    tau = J_t^T F; Khatib 1987), against the peak rating; the static part |g_j|
    against the continuous rating. A design-stage estimate, not a validation.

    Parameters
    ----------
    accel_mps2 : float
        Required tool acceleration [m/s^2], >= 0.

    Returns
    -------
    TorqueHeadroom
        ``static_torque_Nm`` and ``worst_torque_Nm`` (..., n) for every joint;
        ``utilisation`` (worst / peak), ``static_utilisation`` (static / continuous) and
        ``headroom_Nm`` (peak - worst), each (..., n) with NaN for joints without that
        rating (stated, not silent: the joint has no actuator data); ``min_margin`` (...,) = min over rated
        joints of 1 - utilisation (negative: over the rating; -inf at singular
        configurations when ``accel_mps2 > 0``); ``limiting_joint`` (...,) its index.
    """
    accel = float(accel_mps2)
    if not np.isfinite(accel) or accel < 0.0:
        raise ValueError(f"`accel_mps2` must be a finite number >= 0 [m/s^2]; got {accel_mps2!r}")
    _require_ratings(arm)
    terms, batch = _terms(arm, q)
    head = _metrics.torque_headroom(arm._params, terms, accel)
    return _metrics.TorqueHeadroom(*(from_core(x, batch) for x in head[:-1]), accel)


def acceleration_capability(arm, q):
    """Largest tool acceleration reachable in every task direction from rest, (...,) [m/s^2].

    min over joints j of (tau_peak_j - |g_j|) / ||row_j(J_t^T Lambda)||, gravity held;
    0 where the arm cannot hold itself or at singular configurations. Unrated joints are
    not limits. Derived from F = Lambda a, tau = J_t^T F (Khatib 1987); compare
    Yoshikawa's dynamic manipulability (ICRA 1985).
    """
    _require_ratings(arm)
    terms, batch = _terms(arm, q)
    return from_core(_metrics.acceleration_capability(arm._params, terms), batch)


def acceleration_along(arm, q, u, hold_gravity=True):
    """Largest tool acceleration [m/s^2] along world unit vectors ``u`` from rest, (...,).

    With d = J_t^T Lambda u: min over rated joints of (tau_peak - g)/d_j for d_j > 0 and
    (-tau_peak - g)/d_j for d_j < 0 (g = 0 when ``hold_gravity`` is False); 0 where a
    joint cannot hold gravity or ``u`` has a part along an unbounded-mass direction.
    """
    _require_ratings(arm)
    terms, batch, w = _terms(arm, q, u)
    return from_core(_metrics.acceleration_along(arm._params, terms, w, bool(hold_gravity)), batch)


def evaluate_metrics(arm, q, accel_mps2=0.0):
    """Every metric at once for ``q`` (..., n), sharing one pass through the core.

    Returns a dict of arrays: ``tool_position_m`` (..., 3), ``isotropy`` , ``mass_ratio``,
    ``principal_masses_kg`` (..., k), ``principal_directions`` (..., 3, k),
    ``manipulability``, ``singular`` (bool) and, where the design has ratings,
    ``static_torque_Nm`` (..., n) = |gravity torque|, ``utilisation`` (..., n), ``min_margin``,
    ``limiting_joint`` and ``accel_capability_mps2``.
    """
    p = arm._params
    terms, batch = _terms(arm, q)
    out = {
        "tool_position_m": terms.frames.tool + p.mount_position[:, None],
        "isotropy": _metrics.isotropy_index(p, terms),
        "mass_ratio": _metrics.mass_ratio(p, terms),
        "manipulability": _metrics.manipulability(p, terms),
        "singular": terms.singular,
    }
    out["principal_masses_kg"], out["principal_directions"] = _metrics.principal_masses(p, terms)
    if np.any(np.isfinite(p.peak_torque)):
        head = _metrics.torque_headroom(p, terms, float(accel_mps2))
        out["static_torque_Nm"] = head.static_torque_Nm
        out["utilisation"] = head.utilisation
        out["min_margin"] = head.min_margin
        out["limiting_joint"] = head.limiting_joint
        out["accel_capability_mps2"] = _metrics.acceleration_capability(p, terms)
    return {key: from_core(value, batch) for key, value in out.items()}
