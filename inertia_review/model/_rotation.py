"""Rotation matrices for the design conventions (private)."""

import numpy as np

__all__ = ["cos_sin_deg", "rpy_matrix", "skew", "inertia_tensor"]


def cos_sin_deg(angle_deg):
    """(cos, sin) of an angle in degrees, exact at multiples of 90 degrees."""
    angle = float(angle_deg)
    if angle % 90.0 == 0.0:
        quarter = int(angle // 90.0) % 4
        return ((1.0, 0.0), (0.0, 1.0), (-1.0, 0.0), (0.0, -1.0))[quarter]
    rad = np.deg2rad(angle)
    return float(np.cos(rad)), float(np.sin(rad))


def rpy_matrix(rpy_deg):
    """Fixed-axis X-Y-Z rotation R = Rz(yaw) Ry(pitch) Rx(roll), shape (3, 3).

    ``rpy_deg`` = [roll, pitch, yaw] in degrees (arm-model.md, "Frames and conventions").
    """
    (cr, sr), (cp, sp), (cy, sy) = (cos_sin_deg(a) for a in rpy_deg)
    rx = np.array([[1.0, 0.0, 0.0], [0.0, cr, -sr], [0.0, sr, cr]])
    ry = np.array([[cp, 0.0, sp], [0.0, 1.0, 0.0], [-sp, 0.0, cp]])
    rz = np.array([[cy, -sy, 0.0], [sy, cy, 0.0], [0.0, 0.0, 1.0]])
    return rz @ ry @ rx


def skew(v):
    """Cross-product matrix [v]x of a 3-vector, so that skew(v) @ w = v x w."""
    x, y, z = v
    return np.array([[0.0, -z, y], [z, 0.0, -x], [-y, x, 0.0]])


def inertia_tensor(entries):
    """3x3 tensor from [Ixx, Iyy, Izz, Ixy, Ixz, Iyz] (the tensor's own entries)."""
    ixx, iyy, izz, ixy, ixz, iyz = entries
    return np.array([[ixx, ixy, ixz], [ixy, iyy, iyz], [ixz, iyz, izz]], dtype=np.float64)
