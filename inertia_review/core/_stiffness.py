"""Stiffness kernels in the batch-last layout: tool compliance, gravity sag, joint-space modes
(private).

The elastic model (linear, small deflections about the configuration ``q``):

* joint i is a torsional spring of stiffness k_i [N m/rad] between its actuator and its link
  (``stiffness_Nm_per_rad``; a joint without one is rigid, k_i = inf);
* link i carries one straight Euler-Bernoulli beam of uniform bending stiffness EI and
  torsional stiffness GJ [N m^2], clamped at the link origin, along ``beam_dir`` for
  ``beam_length`` (a tube is its own beam; a link with its own values spans to the next joint;
  a link with neither is rigid). Axial stretch and shear deformation are neglected. The rest of
  the link and every outboard link are rigid bodies fixed to the beam's tip (outboard loads
  enter there; the link's own point loads at their station along the beam).

For a cantilever along unit e, length L, section compliance C = (I - e e^T)/EI + e e^T/GJ, a tip
force f and tip moment m give (integrating the curvature C M(s) with M(s) = m + (L - s) e x f)

    tip rotation      theta = C (L m + L^2/2 e x f)
    tip displacement  delta = [C (L^2/2 m + L^3/3 e x f)] x e,

i.e. P L^3/(3 EI) and slope P L^2/(2 EI) for a transverse tip force, M L^2/(2 EI) and M L/EI for a
tip moment, T L/GJ of twist (Gere, Mechanics of Materials, 5th ed., Appendix G, cantilever beams
cases 4 and 6, and sec. 3.3; Roark's Formulas for Stress and Strain, 7th ed., Table 8.1 cases 1a
and 3a). A uniform load w per length gives w L^4/(8 EI) and slope w L^3/(6 EI) (Gere, case 1).
A point on the rigid body beyond the tip moves by delta + theta x r.
"""

from typing import NamedTuple

import numpy as np

from . import _dynamics
from ._smallmat import cross, lift, matmul, matvec, sym_eig, transpose

__all__ = ["has_compliance", "tool_compliance", "gravity_sag", "equivalent_joint_stiffness",
           "natural_modes", "Modes", "RIGID_RTOL"]

#: A principal compliance at most this times the largest counts as rigid (stiffness inf).
RIGID_RTOL = 1e-12


class Modes(NamedTuple):
    """Joint-space vibration modes, batch last."""

    frequencies_hz: np.ndarray   # (n, N) ascending, inf for rigid joints
    shapes: np.ndarray           # (n, n, N) mass-normalised columns (zeros for rigid joints)
    tool_direction: np.ndarray   # (3, N) unit tool motion of the first mode in W (0 if none)


def has_compliance(params):
    """True if any joint or link of the design is elastic."""
    beams = (lift(params.beam_length, 1) > 0.0) & (np.isfinite(lift(params.beam_bending, 1))
                                                   | np.isfinite(lift(params.beam_torsion, 1)))
    return bool(np.any(np.isfinite(params.joint_stiffness)) or np.any(beams))


def _inverse(x):
    return np.where(np.isfinite(x), 1.0 / np.where(np.isfinite(x), x, 1.0), 0.0)


class _Beam(NamedTuple):
    start: np.ndarray    # (3, N)
    axis: np.ndarray     # (3, N) unit
    tip: np.ndarray      # (3, N)
    length: float            # or (N,) with one arm per configuration
    inv_ei: float
    inv_gj: float


def _link_vector(rotation, v):
    """R v for link rotations (3, 3, N) and a link-frame vector (3,) or one per configuration
    (3, N)."""
    if v.ndim == 1:
        return np.einsum("ijN,j->iN", rotation, v)
    return matvec(rotation, v)


def _beams(params, frames):
    """World geometry of each elastic link beam (rigid or zero-length beams are skipped).

    With one arm per configuration (arrays with a trailing batch axis) a beam is kept if it
    is elastic in any configuration; where it is rigid or of zero length its contributions
    below are exact zeros.
    """
    out = {}
    inv_ei, inv_gj = _inverse(params.beam_bending), _inverse(params.beam_torsion)
    per_config = max(params.beam_length.ndim, params.beam_bending.ndim,
                     params.beam_torsion.ndim) == 2
    for i in range(params.n):
        length = params.beam_length[i]
        if not np.any((length > 0.0) & ((inv_ei[i] != 0.0) | (inv_gj[i] != 0.0))):
            continue
        if not per_config:
            length, ie, ig = float(length), float(inv_ei[i]), float(inv_gj[i])
        else:
            ie, ig = inv_ei[i], inv_gj[i]
        axis = _link_vector(frames.rotation[i], params.beam_dir[i])
        start = frames.origin[i]
        out[i] = _Beam(start, axis, start + length * axis, length, ie, ig)
    return out


def _apply_c(beam, v):
    """Section compliance C v = (v - (e.v) e)/EI + (e.v) e/GJ, v (..., 3, N)."""
    e = beam.axis
    along = np.sum(e * v, axis=-2)[..., None, :] * e
    return (v - along) * beam.inv_ei + along * beam.inv_gj


def _point_load(beam, force, station, moment):
    """Tip (rotation, displacement) for a force at ``station`` (N,) with a moment there."""
    e, length, a = beam.axis, beam.length, station
    exf = cross(np.broadcast_to(e, force.shape), force)
    theta = _apply_c(beam, a * moment + 0.5 * a * a * exf)
    area = _apply_c(beam, (length * a - 0.5 * a * a) * moment
                    + ((length - a) * 0.5 * a * a + a ** 3 / 3.0) * exf)
    return theta, cross(area, np.broadcast_to(e, area.shape))


def _uniform_load(beam, total_force):
    """Tip (rotation, displacement) for a total force (3, N) spread evenly over the beam."""
    e, length = beam.axis, beam.length
    exf = cross(e, total_force)
    theta = _apply_c(beam, (length * length / 6.0) * exf)
    area = _apply_c(beam, (length ** 3 / 8.0) * exf)
    return theta, cross(area, e)


def tool_compliance(params, frames, jacobian):
    """Translational tool compliance (3, 3, N) [m/N] in W: joint springs plus link beams.

    C = J_v K^-1 J_v^T + sum over beams of the tool displacement per unit tool force.
    """
    jv = jacobian[:3]                                            # (3, n, N)
    scaled = jv * lift(_inverse(params.joint_stiffness), 1)[None]
    comp = matmul(scaled, transpose(jv))
    unit = np.eye(3)[:, :, None]                                 # (load b, 3, 1)
    for beam in _beams(params, frames).values():
        lever = frames.tool - beam.tip                           # (3, N)
        force = np.broadcast_to(unit, (3, 3, lever.shape[-1]))
        moment = cross(np.broadcast_to(lever, force.shape), force)
        theta, delta = _point_load(beam, force, beam.length, moment)
        tool = delta + cross(theta, np.broadcast_to(lever, theta.shape))   # (b, 3, N)
        comp = comp + transpose(tool)                            # column b: response to e_b
    return 0.5 * (comp + transpose(comp))


def gravity_sag(params, frames, jacobian):
    """Static displacement (3, N) [m] of the tool point under gravity on the arm and payload.

    Joint springs: dq = -K^-1 g(q) (g the holding torque), tool sag J_v dq. Beams: every
    outboard body as a tip load (force and moment about the tip), the link's own point loads
    at their stations (clamped to the beam), a tube's own mass as a uniform load.
    """
    g = params.gravity[:, None]
    hold = _dynamics.gravity_torque(params, frames)              # (n, N)
    dq = -hold * lift(_inverse(params.joint_stiffness), 1)
    sag = matvec(jacobian[:3], dq)
    per_config = params.body_mass.ndim == 2           # masses per configuration
    mass = lift(params.body_mass, 1)                  # (n, 1) or (n, N)
    for i, beam in _beams(params, frames).items():
        theta = np.zeros_like(sag)
        delta = np.zeros_like(sag)
        out_mass = np.sum(mass[i + 1:], axis=0)
        out_mass = out_mass if per_config else float(out_mass[0])
        if np.any(out_mass > 0.0):
            moment_arm = (np.sum(mass[i + 1:, None, :] * frames.com[i + 1:], axis=0)
                          - out_mass * beam.tip)
            force = np.broadcast_to(out_mass * g, sag.shape)
            unit = force / np.where(out_mass > 0.0, out_mass, 1.0)
            t, d = _point_load(beam, force, beam.length, cross(moment_arm, unit))
            theta, delta = theta + t, delta + d
        for p in range(params.load_mass.shape[1]):
            m = params.load_mass[i, p]
            if np.all(m <= 0.0):
                continue
            x = frames.origin[i] + _link_vector(frames.rotation[i], params.load_position[i, p])
            station = np.clip(np.sum((x - beam.start) * beam.axis, axis=0), 0.0, beam.length)
            force = np.broadcast_to(m * g, sag.shape)
            offset = x - (beam.start + station * beam.axis)
            t, d = _point_load(beam, force, station, cross(offset, force))
            theta, delta = theta + t, delta + d
        if np.any(params.beam_self_mass[i] > 0.0):
            t, d = _uniform_load(beam, np.broadcast_to(params.beam_self_mass[i] * g, sag.shape))
            theta, delta = theta + t, delta + d
        sag = sag + delta + cross(theta, frames.tool - beam.tip)
    return sag


def equivalent_joint_stiffness(params):
    """Joint springs with each link beam lumped in series into the joint that carries it, (n,).

    The beam's rotation about the joint axis a under a pure tip moment about a,
    L a^T C a = L [(1 - (a.e)^2)/EI + (a.e)^2/GJ], adds to 1/k_i. This is exact for an end
    moment and softer than the beam under a tip force (L/(3 EI) per unit lever moment), so the
    lumped frequencies err low; bending out of the joint's plane of motion is not represented.
    Both quantities are constant in the link frame. inf where the joint and its link are rigid.
    """
    if params.axis.ndim == 2 and params.beam_dir.ndim == 2:
        cos = np.einsum("ij,ij->i", params.axis, params.beam_dir)
    else:                                     # one arm per configuration: (n, N)
        cos = np.sum(lift(params.axis, 2) * lift(params.beam_dir, 2), axis=1)
    if cos.ndim == 1 and all(x.ndim == 1 for x in (params.beam_length, params.beam_bending,
                                                 params.beam_torsion, params.joint_stiffness)):
        def up(x):
            return x
    else:                                     # some arrays per configuration: (n, N)
        def up(x):
            return lift(x, 1)
    cos = up(cos)
    lumped = up(params.beam_length) * ((1.0 - cos ** 2) * up(_inverse(params.beam_bending))
                                       + cos ** 2 * up(_inverse(params.beam_torsion)))
    total = up(_inverse(params.joint_stiffness)) + lumped
    return np.where(total > 0.0, 1.0 / np.where(total > 0.0, total, 1.0), np.inf)


def natural_modes(params, frames, mass, jacobian):
    """Undamped modes of K dq = omega^2 M(q) dq with the equivalent joint springs.

    Generalized symmetric eigenproblem reduced with K^-1/2: A = K^-1/2 M K^-1/2 (flexible
    joints only; rigid joints are held, dq_j = 0), A v = mu v, omega^2 = 1 / mu,
    phi = K^-1/2 v / sqrt(mu) (phi^T M phi = 1). The gravity (geometric) stiffness dg/dq is
    neglected.
    """
    k = equivalent_joint_stiffness(params)
    finite = np.isfinite(k)
    if k.ndim == 2:                           # one arm per configuration: one flexible set
        if not np.all(finite == finite[:, :1]):
            raise ValueError("natural_modes: the configurations' arms differ in which joints "
                             "are flexible")
        finite = finite[:, 0]
    flex = np.flatnonzero(finite)
    n, count = params.n, mass.shape[-1]
    root = lift(1.0 / np.sqrt(k[flex]), 1)                      # (f, 1) or (f, N)
    a = mass[np.ix_(flex, flex)] * (root[:, None, :] * root[None, :, :])
    mu, vec = sym_eig(a)                                        # ascending mu
    mu, vec = mu[::-1], vec[:, ::-1]                            # ascending frequency
    mu = np.maximum(mu, 1e-300)
    freq = np.full((n, count), np.inf)
    freq[: flex.size] = 1.0 / (2.0 * np.pi * np.sqrt(mu))
    shapes = np.zeros((n, n, count))
    shapes[np.ix_(flex, np.arange(flex.size))] = vec * root[:, None, :] / np.sqrt(mu)[None]
    motion = matvec(jacobian[:3], shapes[:, 0])
    norm = np.sqrt(np.sum(motion * motion, axis=0))
    direction = motion / np.where(norm > 0.0, norm, 1.0)
    pick = np.argmax(np.abs(direction), axis=0)
    sign = np.sign(np.take_along_axis(direction, pick[None], axis=0))
    direction = direction * np.where(sign == 0.0, 1.0, sign)
    return Modes(freq, shapes, direction)
