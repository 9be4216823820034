"""Closed-form inverse kinematics of two-joint planar arms, from the law of cosines (private).

Both elbow branches of every target at once; any link geometry (offsets, rolled joint
frames) as long as the two joint axes are parallel or antiparallel.
"""

import numpy as np

from ..core import _kinematics
from ._ik_status import OFF_PLANE, OK, OUT_OF_REACH

__all__ = ["planar_two_joint"]


def _planar_geometry(params):
    """In-plane link vectors and rotation senses of a two-joint planar arm at q = 0."""
    zero = np.zeros((params.n, 1))
    frames = _kinematics.forward(params, zero)
    a = params.task_axes
    o1, o2, tool = frames.origin[0, :, 0], frames.origin[1, :, 0], frames.tool[:, 0]
    normal = np.cross(a[0], a[1])
    senses = np.sign(frames.axis[:, :, 0] @ normal)
    return o1, a @ (o2 - o1), a @ (tool - o2), senses, normal, float(normal @ (tool - o1))


def planar_two_joint(params, targets):
    """Both closed-form branches for targets (3, N): q (2 branches, 2, N) and status (N,)."""
    o1, r1, r2, senses, normal, plane_offset = _planar_geometry(params)
    rel = targets - o1[:, None]
    t = params.task_axes @ rel                                     # (2, N)
    off_plane = np.abs(normal @ rel - plane_offset) > 1e-6
    l1, l2 = np.linalg.norm(r1), np.linalg.norm(r2)
    phi1, phi12 = np.arctan2(r1[1], r1[0]), np.arctan2(r2[1], r2[0])
    dist2 = np.sum(t * t, axis=0)
    cos_beta = (dist2 - l1 * l1 - l2 * l2) / (2.0 * l1 * l2)
    reachable = np.abs(cos_beta) <= 1.0 + 1e-12
    beta = np.arccos(np.clip(cos_beta, -1.0, 1.0))
    branches = []
    for b in (beta, -beta):
        theta2 = b - (phi12 - phi1)
        w_angle = phi1 + np.arctan2(l2 * np.sin(b), l1 + l2 * np.cos(b))
        theta1 = np.arctan2(t[1], t[0]) - w_angle
        q = np.stack([theta1 * senses[0], theta2 * senses[1]])
        branches.append(np.arctan2(np.sin(q), np.cos(q)))          # wrap to (-pi, pi]
    status = np.where(off_plane, OFF_PLANE, np.where(reachable, OK, OUT_OF_REACH))
    return np.stack(branches), status


