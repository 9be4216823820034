"""Rigid-body dynamics of a serial revolute arm, batched over leading axes (private).

tau = M(q) qdd + c(q, qd) + g(q), with the reflected rotor inertia gear_ratio^2 J_rotor
on the diagonal of M (common practice; neglects the rotors' gyroscopic coupling).
"""

import numpy as np

from ._kinematics import world_inertia

__all__ = ["mass_matrix", "gravity_torque", "inverse_dynamics"]


def _suffix_sum(x, axis):
    """Sum over links i >= j along ``axis`` (composite bodies from link j to the tip)."""
    return np.flip(np.cumsum(np.flip(x, axis=axis), axis=axis), axis=axis)


def mass_matrix(params, frames, inertia_world=None):
    """Joint-space mass matrix M(q), (..., n, n) [kg m^2].

    Composite rigid bodies in the world frame: with the joint twist s_j = (z_j, o_j x z_j)
    and the composite spatial inertia I^C_l of links l..n, M_jl = s_j^T I^C_max(j,l) s_l
    (Walker & Orin 1982, composite-rigid-body method; Featherstone, Rigid Body Dynamics
    Algorithms, Springer 2008, ch. 6).
    """
    if inertia_world is None:
        inertia_world = world_inertia(params, frames)
    m = params.body_mass                                   # (n,)
    c = frames.com                                         # (..., n, 3)
    h = m[:, None] * c                                     # first moments
    cc = np.einsum("...i,...j->...ij", c, c)
    c2 = np.einsum("...i,...i->...", c, c)
    inertia_origin = inertia_world + m[:, None, None] * (c2[..., None, None] * np.eye(3) - cc)
    m_comp = _suffix_sum(np.broadcast_to(m, c.shape[:-1]), axis=-1)   # (..., n)
    h_comp = _suffix_sum(h, axis=-2)
    i_comp = _suffix_sum(inertia_origin, axis=-3)
    z = frames.axis
    v = np.cross(frames.origin, z)
    f_ang = np.einsum("...ij,...j->...i", i_comp, z) + np.cross(h_comp, v)
    f_lin = np.cross(z, h_comp) + m_comp[..., None] * v
    twist = np.concatenate([z, v], axis=-1)                # (..., n, 6)
    force = np.concatenate([f_ang, f_lin], axis=-1)        # (..., n, 6)
    p = twist @ np.swapaxes(force, -1, -2)                 # p[j, l] = s_j . I^C_l s_l
    upper = np.triu(np.ones((params.n, params.n), dtype=bool))
    mass = np.where(upper, p, np.swapaxes(p, -1, -2))
    return mass + np.diag(params.rotor_inertia)


def gravity_torque(params, frames):
    """Joint torques that hold the arm still against gravity, (..., n) [N m].

    g_j = -g . (z_j x (h^C_j - m^C_j o_j)): minus the gradient of the potential -sum m g.c.
    """
    m = params.body_mass
    m_comp = _suffix_sum(np.broadcast_to(m, frames.com.shape[:-1]), axis=-1)
    h_comp = _suffix_sum(m[:, None] * frames.com, axis=-2)
    moment = np.cross(frames.axis, h_comp - m_comp[..., None] * frames.origin)
    return -(moment @ params.gravity)


def inverse_dynamics(params, frames, qd, qdd, gravity=True, inertia_world=None):
    """Joint torques for q, qd, qdd: M qdd + c(q, qd) [+ g(q)], (..., n) [N m].

    Recursive Newton-Euler in the world frame (Luh, Walker & Paul 1980): gravity enters
    as an upward acceleration of the base.
    """
    if inertia_world is None:
        inertia_world = world_inertia(params, frames)
    n = params.n
    batch = np.broadcast_shapes(frames.com.shape[:-2], qd.shape[:-1], qdd.shape[:-1])
    z, o, c = frames.axis, frames.origin, frames.com
    omega = np.zeros(batch + (3,))
    alpha = np.zeros(batch + (3,))
    accel = np.broadcast_to(-params.gravity if gravity else np.zeros(3), batch + (3,))
    o_prev = np.zeros(3)
    forces, moments = [], []
    for i in range(n):
        r = o[..., i, :] - o_prev
        accel = accel + np.cross(alpha, r) + np.cross(omega, np.cross(omega, r))
        zi = z[..., i, :]
        spin = zi * qd[..., i, None]
        alpha = alpha + zi * qdd[..., i, None] + np.cross(omega, spin)
        omega = omega + spin
        rc = c[..., i, :] - o[..., i, :]
        accel_com = accel + np.cross(alpha, rc) + np.cross(omega, np.cross(omega, rc))
        inertia = inertia_world[..., i, :, :]
        forces.append(params.body_mass[i] * accel_com)
        moments.append(np.einsum("...ij,...j->...i", inertia, alpha)
                       + np.cross(omega, np.einsum("...ij,...j->...i", inertia, omega))
                       + np.cross(rc, forces[-1]))
        o_prev = o[..., i, :]
    tau = [None] * n
    force_out = np.zeros(batch + (3,))
    moment_out = np.zeros(batch + (3,))
    for i in reversed(range(n)):
        lever = (o[..., i + 1, :] - o[..., i, :]) if i + 1 < n else np.zeros(3)
        moment_out = moments[i] + moment_out + np.cross(lever, force_out)
        force_out = forces[i] + force_out
        tau[i] = np.einsum("...i,...i->...", z[..., i, :], moment_out)
    tau = np.stack(tau, axis=-1)
    return tau + params.rotor_inertia * qdd
