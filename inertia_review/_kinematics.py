"""Forward kinematics and the tool-point Jacobian, batched over leading axes (private).

Positions are kept relative to the mount origin inside the core (the reference
point of the dynamics, which keeps round-off small for arms mounted far from the
world origin); the public functions add the mount position back.
"""

from typing import NamedTuple

import numpy as np

__all__ = ["Frames", "forward", "tool_position", "jacobian", "world_inertia"]


class Frames(NamedTuple):
    """Link frames of a batch of configurations; ``...`` is the batch shape of ``q``."""

    rotation: np.ndarray   # (..., n, 3, 3) R_W,link_i
    origin: np.ndarray     # (..., n, 3) joint i origin, relative to the mount origin [m]
    axis: np.ndarray       # (..., n, 3) joint i unit axis in W
    com: np.ndarray        # (..., n, 3) body i centre of mass, relative to the mount origin [m]
    tool: np.ndarray       # (..., 3) tool point, relative to the mount origin [m]


def forward(params, q):
    """Link frames for joint angles ``q`` (..., n) [rad] (arm-model.md, "Precise rules").

    Joint i: T = Trans(xyz) Rot(rpy) Rot(axis, q_i), with Rot(axis, q) from Rodrigues'
    formula I + sin q [a]x + (1 - cos q) [a]x^2.
    """
    batch = q.shape[:-1]
    s, c = np.sin(q), np.cos(q)
    rot_prev = params.mount_rotation
    pos_prev = np.zeros(3)
    rotations, origins, axes = [], [], []
    for i in range(params.n):
        base = rot_prev @ params.joint_rotation[i]            # (..., 3, 3) or (3, 3)
        origin = pos_prev + rot_prev @ params.joint_position[i]
        axes.append(base @ params.axis[i])
        si = s[..., i, None, None]
        ci = c[..., i, None, None]
        rot = base + si * (base @ params.axis_skew[i]) + (1.0 - ci) * (base @ params.axis_skew2[i])
        rotations.append(rot)
        origins.append(origin)
        rot_prev, pos_prev = rot, origin
    rotation = np.stack([np.broadcast_to(r, batch + (3, 3)) for r in rotations], axis=-3)
    origin = np.stack([np.broadcast_to(o, batch + (3,)) for o in origins], axis=-2)
    axis = np.stack([np.broadcast_to(a, batch + (3,)) for a in axes], axis=-2)
    com = origin + np.einsum("...ij,...j->...i", rotation, params.body_com)
    tool = origin[..., -1, :] + rotation[..., -1, :, :] @ params.tool_position
    return Frames(rotation, origin, axis, com, tool)


def tool_position(params, frames):
    """Tool point in W [m], (..., 3)."""
    return frames.tool + params.mount_position


def jacobian(frames):
    """Geometric Jacobian of the tool point, (..., 6, n).

    Column j: linear part z_j x (p - o_j), angular part z_j (revolute joints).
    """
    lever = frames.tool[..., None, :] - frames.origin
    linear = np.cross(frames.axis, lever)                   # (..., n, 3)
    return np.concatenate([np.swapaxes(linear, -1, -2), np.swapaxes(frames.axis, -1, -2)], axis=-2)


def world_inertia(params, frames):
    """Body inertia tensors about their COMs, in W: R I R^T, (..., n, 3, 3)."""
    rot = frames.rotation
    return rot @ params.body_inertia @ np.swapaxes(rot, -1, -2)
