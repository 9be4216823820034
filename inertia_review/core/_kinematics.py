"""Forward kinematics and the tool-point Jacobian in the batch-last layout (private).

Arrays carry the batch of N configurations on their last axis (see ``_smallmat``).
Positions are kept relative to the mount origin inside the core (the reference
point of the dynamics, which keeps round-off small for arms mounted far from the
world origin); the public layer adds the mount position back.
"""

from typing import NamedTuple

import numpy as np

from ._smallmat import cross, lift, matmul, pmatmul, pmatvec

__all__ = ["Frames", "forward", "jacobian", "world_inertia"]


class Frames(NamedTuple):
    """Link frames of N configurations."""

    rotation: np.ndarray   # (n, 3, 3, N) R_W,link_i
    origin: np.ndarray     # (n, 3, N) joint i origin, relative to the mount origin [m]
    axis: np.ndarray       # (n, 3, N) joint i unit axis in W
    com: np.ndarray        # (n, 3, N) body i centre of mass, relative to the mount origin [m]
    tool: np.ndarray       # (3, N) tool point, relative to the mount origin [m]


def forward(params, q):
    """Link frames for joint angles ``q`` (n, N) [rad] (arm-model.md, "Precise rules").

    Joint i: T = Trans(xyz) Rot(rpy) Rot(axis, q_i), with Rot(axis, q) from Rodrigues'
    formula I + sin q [a]x + (1 - cos q) [a]x^2.

    ``params`` holds one arm (arrays as in ``ArmParams``) or one arm per configuration
    (every array with a trailing batch axis N, see ``studies._variants``).
    """
    count = q.shape[-1]
    s, c = np.sin(q), np.cos(q)
    rotations, origins, axes = [], [], []
    # joint 1's frame does not depend on q: keep it constant, then broadcast
    base = pmatmul(params.mount_rotation, params.joint_rotation[0])
    origin = pmatvec(params.mount_rotation, params.joint_position[0])
    axis = pmatvec(base, params.axis[0])
    rot = (lift(base, 2) + lift(pmatmul(base, params.axis_skew[0]), 2) * s[0]
           + lift(pmatmul(base, params.axis_skew2[0]), 2) * (1.0 - c[0]))
    rotations.append(rot)
    origins.append(np.broadcast_to(lift(origin, 1), (3, count)))
    axes.append(np.broadcast_to(lift(axis, 1), (3, count)))
    for i in range(1, params.n):
        prev = rotations[-1]
        origins.append(origins[-1] + pmatvec(prev, params.joint_position[i]))
        base = pmatmul(prev, params.joint_rotation[i])
        axes.append(pmatvec(base, params.axis[i]))
        rotations.append(base + pmatmul(base, params.axis_skew[i]) * s[i]
                         + pmatmul(base, params.axis_skew2[i]) * (1.0 - c[i]))
    rotation = np.stack(rotations)
    origin = np.stack(origins)
    body_com = lift(params.body_com, 2)
    com = origin + sum(rotation[:, :, j, :] * body_com[:, None, j] for j in range(3))
    tool = origin[-1] + pmatvec(rotation[-1], params.tool_position)
    return Frames(rotation, origin, np.stack(axes), com, tool)


def jacobian(frames):
    """Geometric Jacobian of the tool point, (6, n, N).

    Column j: linear part z_j x (p - o_j), angular part z_j (revolute joints).
    """
    linear = cross(frames.axis, frames.tool[None] - frames.origin)   # (n, 3, N)
    return np.concatenate([np.swapaxes(linear, 0, 1), np.swapaxes(frames.axis, 0, 1)], axis=0)


def world_inertia(params, frames):
    """Body inertia tensors about their COMs, in W: R I R^T, (n, 3, 3, N)."""
    rot = frames.rotation
    inertia = lift(params.body_inertia, 3)[:, None]             # (n, 1, 3, 3, 1 or N)
    rot_inertia = sum(rot[:, :, j, None, :] * inertia[:, :, j] for j in range(3))
    return matmul(rot_inertia, np.swapaxes(rot, 1, 2))
