"""Rigid-body dynamics of a serial revolute arm in the batch-last layout (private).

tau = M(q) qdd + c(q, qd) + g(q), with the reflected rotor inertia gear_ratio^2 J_rotor
on the diagonal of M (common practice; neglects the rotors' gyroscopic coupling).
Arrays carry the batch on their last axis.
"""

import numpy as np

from ._kinematics import world_inertia
from ._smallmat import cross, dot, lift, matmul, matvec

__all__ = ["mass_matrix", "gravity_torque", "inverse_dynamics"]


def _suffix_sum(x):
    """Sum over links i >= j along axis 0 (composite bodies from link j to the tip)."""
    out = np.empty_like(x)
    out[-1] = x[-1]
    for j in range(x.shape[0] - 2, -1, -1):
        np.add(out[j + 1], x[j], out=out[j])
    return out


def mass_matrix(params, frames, inertia_world=None):
    """Joint-space mass matrix M(q), (n, n, N) [kg m^2].

    Composite rigid bodies in the world frame: with the joint twist s_j = (z_j, o_j x z_j)
    and the composite spatial inertia I^C_l of links l..n, M_jl = s_j^T I^C_max(j,l) s_l
    (composite-rigid-body method, Walker & Orin 1982; Featherstone, Rigid Body Dynamics
    Algorithms, Springer 2008, ch. 6).
    """
    if inertia_world is None:
        inertia_world = world_inertia(params, frames)
    m = lift(params.body_mass, 1)                          # (n, 1) or (n, N)
    c = frames.com                                         # (n, 3, N)
    c2 = np.sum(c * c, axis=1)                             # (n, N)
    inertia_origin = (inertia_world
                      + (m * c2)[:, None, None, :] * np.eye(3)[None, :, :, None]
                      - m[:, None, None, :] * c[:, :, None, :] * c[:, None, :, :])
    m_comp = np.cumsum(m[::-1], axis=0)[::-1]              # (n, 1) or (n, N)
    h_comp = _suffix_sum(m[:, None, :] * c)                # (n, 3, N)
    i_comp = _suffix_sum(inertia_origin)                   # (n, 3, 3, N)
    z = frames.axis
    v = cross(frames.origin, z)
    f_ang = matvec(i_comp, z) + cross(h_comp, v)
    f_lin = cross(z, h_comp) + m_comp[:, None, :] * v
    p = matmul(z, np.swapaxes(f_ang, 0, 1)) + matmul(v, np.swapaxes(f_lin, 0, 1))
    upper = np.triu(np.ones((params.n, params.n), dtype=bool))[:, :, None]
    mass = np.where(upper, p, np.swapaxes(p, 0, 1))
    if params.rotor_inertia.ndim == 2:                     # one arm per configuration
        return mass + np.eye(params.n)[:, :, None] * params.rotor_inertia[None]
    return mass + np.diag(params.rotor_inertia)[:, :, None]


def gravity_torque(params, frames):
    """Joint torques that hold the arm still against gravity, (n, N) [N m].

    g_j = -g . (z_j x (h^C_j - m^C_j o_j)): minus the gradient of the potential -sum m g.c.
    """
    m = lift(params.body_mass, 1)[:, None, :]
    m_comp = np.cumsum(m[::-1], axis=0)[::-1]
    h_comp = _suffix_sum(m * frames.com)
    moment = cross(frames.axis, h_comp - m_comp * frames.origin)
    g = params.gravity
    return -(moment[:, 0] * g[0] + moment[:, 1] * g[1] + moment[:, 2] * g[2])


def inverse_dynamics(params, frames, qd, qdd, gravity=True, inertia_world=None):
    """Joint torques for q, qd, qdd (each (n, N)): M qdd + c(q, qd) [+ g(q)], (n, N) [N m].

    Recursive Newton-Euler in the world frame (Luh, Walker & Paul 1980): gravity enters
    as an upward acceleration of the base.
    """
    if inertia_world is None:
        inertia_world = world_inertia(params, frames)
    n, count = params.n, qd.shape[-1]
    z, o, c = frames.axis, frames.origin, frames.com
    omega = np.zeros((3, count))
    alpha = np.zeros((3, count))
    accel = np.broadcast_to((-params.gravity if gravity else np.zeros(3))[:, None], (3, count))
    o_prev = np.zeros((3, 1))
    forces, moments = [], []
    for i in range(n):
        r = o[i] - o_prev
        accel = accel + cross(alpha, r) + cross(omega, cross(omega, r))
        spin = z[i] * qd[i]
        alpha = alpha + z[i] * qdd[i] + cross(omega, spin)
        omega = omega + spin
        rc = c[i] - o[i]
        accel_com = accel + cross(alpha, rc) + cross(omega, cross(omega, rc))
        inertia = inertia_world[i]
        force = params.body_mass[i] * accel_com
        forces.append(force)
        moments.append(matvec(inertia, alpha)
                       + cross(omega, matvec(inertia, omega))
                       + cross(rc, force))
        o_prev = o[i]
    tau = [None] * n
    force_out = np.zeros((3, count))
    moment_out = np.zeros((3, count))
    for i in reversed(range(n)):
        if i + 1 < n:
            moment_out = moment_out + cross(o[i + 1] - o[i], force_out)
        moment_out = moments[i] + moment_out
        force_out = forces[i] + force_out
        tau[i] = dot(z[i], moment_out)
    return np.stack(tau) + params.rotor_inertia[:, None] * qdd
