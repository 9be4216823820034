"""Public stiffness, sag, vibration and payload functions of an arm (private module).

Each takes an :class:`~inertia_review.Arm` and joint angles ``q`` (..., n) [rad] and broadcasts
over the leading axes. The elastic model is in :mod:`._stiffness`: joint springs
(``stiffness_Nm_per_rad``; a joint without one is rigid) and one Euler-Bernoulli beam per link
(a tube's section with the material's E and G, or the link's own EI and GJ; a link with neither
is rigid). A design with no elastic joint or link raises ``ValueError`` (its stiffness would be
unbounded, not a number). Linear elastic, small deflections; no joint play or backlash, no
control loop, no structure beyond the model: design-stage estimates, not a validation.
"""

from typing import NamedTuple

import numpy as np

from . import _metrics, _payload, _stiffness
from ._layout import from_core, to_core
from ._smallmat import matmul, sym_eig, transpose

__all__ = ["tool_compliance", "tool_stiffness", "principal_stiffnesses", "tool_deflection",
           "natural_frequencies", "payload_capacity", "max_tool_speed", "NaturalFrequencies",
           "PrincipalStiffnesses"]


class PrincipalStiffnesses(NamedTuple):
    """Principal tool stiffnesses (..., k) [N/m] ascending and their directions (..., 3, k)."""

    stiffnesses: np.ndarray
    directions: np.ndarray


class NaturalFrequencies(NamedTuple):
    """Joint-space natural frequencies and modes; see :func:`natural_frequencies`."""

    frequencies_hz: np.ndarray
    mode_shapes: np.ndarray
    first_mode_tool_direction: np.ndarray


def _require_compliance(arm):
    if not _stiffness.has_compliance(arm._params):
        raise ValueError(f"design '{arm.name}' has no joint stiffness_Nm_per_rad and no elastic "
                         "link (a tube of a known material or bending_stiffness_Nm2 / "
                         "torsional_stiffness_Nm2): the model is rigid, so stiffness, sag and "
                         "natural frequencies are not defined")


def _terms(arm, q):
    (qc,), batch = to_core(arm._q(q))
    return _metrics.task_terms(arm._params, qc), batch


def _task_compliance(arm, terms):
    a = arm._params.task_axes
    comp = _stiffness.tool_compliance(arm._params, terms.frames, terms.jacobian)
    return np.einsum("ki,ijN,lj->klN", a, comp, a)


def tool_compliance(arm, q):
    """Translational tool compliance in the task, (..., k, k) [m/N]: A C A^T.

    C = J_v K^-1 J_v^T (joint springs, orientation free) plus, per elastic link, the tool
    displacement per unit tool force from the link's cantilever beam (tip force P and moment
    M: P L^3/(3EI) + M L^2/(2EI) deflection, P L^2/(2EI) + M L/EI slope, T L/GJ twist;
    Gere, Mechanics of Materials, Appendix G; Roark, Table 8.1), carried rigidly to the tool.
    Always finite; 0 along directions the model holds rigidly.
    """
    _require_compliance(arm)
    terms, batch = _terms(arm, q)
    return from_core(_task_compliance(arm, terms), batch)


def _principal(arm, terms):
    vals, vecs = sym_eig(_task_compliance(arm, terms))      # ascending compliance
    rigid = vals <= _stiffness.RIGID_RTOL * np.maximum(vals[-1], 1e-300)
    stiff = np.where(rigid, np.inf, 1.0 / np.where(rigid, 1.0, vals))
    directions = np.einsum("ki,kjN->ijN", arm._params.task_axes, vecs)
    return stiff[::-1], directions[:, ::-1], vals, vecs, rigid


def tool_stiffness(arm, q):
    """Translational Cartesian stiffness of the tool point in the task, (..., k, k) [N/m].

    K_t = (A C A^T)^-1 with the compliance of :func:`tool_compliance` (joint compliance
    J K^-1 J^T plus the links' Euler-Bernoulli cantilever bending and torsion terms). NaN in
    every entry where the model is rigid along some task direction (see
    :func:`principal_stiffnesses`, which gives inf there).
    """
    _require_compliance(arm)
    terms, batch = _terms(arm, q)
    _, _, vals, vecs, rigid = _principal(arm, terms)
    inv = np.where(rigid, 0.0, 1.0 / np.where(rigid, 1.0, vals))
    stiff = matmul(vecs * inv[None], transpose(vecs))
    stiff = np.where(np.any(rigid, axis=0), np.nan, stiff)
    return from_core(stiff, batch)


def principal_stiffnesses(arm, q):
    """Principal tool stiffnesses (..., k) [N/m] ascending (inf where rigid) and their unit
    directions (..., 3, k) in W: the axes of the compliance ellipsoid f^T K_t^-1 f."""
    _require_compliance(arm)
    terms, batch = _terms(arm, q)
    stiff, directions, *_ = _principal(arm, terms)
    return PrincipalStiffnesses(from_core(stiff, batch), from_core(directions, batch))


def tool_deflection(arm, q):
    """Static sag of the tool point under gravity on the arm and payload, (..., 3) [m] in W.

    Joint springs: dq = -K^-1 g(q) and J_v dq; each elastic link: its cantilever beam under the
    outboard weight (tip force and moment), its own point loads at their stations and a tube's
    own weight as a uniform load w L^4/(8EI) (Gere, Appendix G, case 1), carried to the tool.
    Linear: the sag is small against the link lengths.
    """
    _require_compliance(arm)
    terms, batch = _terms(arm, q)
    return from_core(_stiffness.gravity_sag(arm._params, terms.frames, terms.jacobian), batch)


def natural_frequencies(arm, q):
    """Undamped natural frequencies in joint space, ascending, and the first mode's tool motion.

    K phi = omega^2 M(q) phi with K = diag of the equivalent joint stiffnesses: each joint's
    spring in series with its link beam's rotation about the joint axis under an end moment,
    L [(1 - (a.e)^2)/EI + (a.e)^2/GJ] (lumped; errs low, see ``_stiffness``). Rigid joints are
    held. The gravity stiffness dg/dq and any control loop are neglected. For one joint with a
    spring, f = sqrt(k / I_total) / (2 pi) (any vibrations text, e.g. Thomson & Dahleh, Theory of
    Vibration with Applications, ch. 2).

    Returns
    -------
    NaturalFrequencies
        ``frequencies_hz`` (..., n) ascending, inf for held joints; ``mode_shapes`` (..., n, n)
        mass-normalised columns (phi^T M phi = 1; zero columns for held joints);
        ``first_mode_tool_direction`` (..., 3): unit tool motion of the lowest mode in W (its
        largest component positive; zeros if the mode does not move the tool).
    """
    _require_compliance(arm)
    terms, batch = _terms(arm, q)
    modes = _stiffness.natural_modes(arm._params, terms.frames, terms.mass, terms.jacobian)
    return NaturalFrequencies(*(from_core(x, batch) for x in modes))


def payload_capacity(arm, q, accel_mps2=0.0):
    """Largest payload [kg] at the tool point with no rated joint over its peak torque, (...,).

    Gravity held and a tool acceleration ``accel_mps2`` required in every task direction (the
    rule of ``torque_headroom``); closed form for ``accel_mps2 = 0``, batched bisection
    otherwise (see ``_payload.payload_capacity``). The payload replaces the design's payload
    mass as a point mass at the tool point. 0 where a joint is over its rating unloaded (and at
    singular configurations when ``accel_mps2 > 0``); inf where no rated joint carries payload.
    Joints without a peak rating are not limits; a design without any raises ValueError.
    """
    accel = float(accel_mps2)
    if not np.isfinite(accel) or accel < 0.0:
        raise ValueError(f"`accel_mps2` must be a finite number >= 0 [m/s^2]; got {accel_mps2!r}")
    if not np.any(np.isfinite(arm._params.peak_torque)):
        raise ValueError(f"design '{arm.name}' has no joint with a peak_torque_Nm rating "
                         "([joints.actuator]); payload capacity is not defined")
    terms, batch = _terms(arm, q)
    return from_core(_payload.payload_capacity(arm._params, terms, accel), batch)


def max_tool_speed(arm, q):
    """Largest tool speed in the task [m/s], (...,), every joint within its rated speed.

    Joint speed limit = ``rated_speed_rpm`` (motor side) / ``gear_ratio``; the maximum of
    ||A J_v qd|| over that box of joint speeds. Raises ValueError if a joint has no
    ``rated_speed_rpm``.
    """
    p = arm._params
    if not np.all(np.isfinite(p.rated_speed)):
        missing = [name for name, s in zip(arm.joint_names, p.rated_speed) if not np.isfinite(s)]
        raise ValueError(f"design '{arm.name}': joints {missing} have no rated_speed_rpm "
                         "([joints.actuator]); the tool speed is not defined")
    terms, batch = _terms(arm, q)
    return from_core(_payload.max_tool_speed(p, terms), batch)
