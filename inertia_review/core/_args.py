"""Argument checks of the core's public functions: joint arrays and unit directions (private)."""

import numpy as np

__all__ = ["check_q", "check_unit_in_span"]


def check_q(q, n, design_name, name="q"):
    """Joint-space input as float64 with last axis ``n``; raise ValueError otherwise."""
    try:
        arr = np.asarray(q, dtype=np.float64)
    except (TypeError, ValueError) as exc:
        raise ValueError(f"`{name}` must be an array of numbers [rad]; {exc}") from None
    if arr.ndim == 0 or arr.shape[-1] != n:
        raise ValueError(
            f"Expected `{name}` with shape (..., {n}) for design '{design_name}', got {arr.shape}.")
    if not np.all(np.isfinite(arr)):
        bad = np.argwhere(~np.isfinite(arr))[0]
        raise ValueError(f"`{name}` must be finite; entry {tuple(int(i) for i in bad)} is "
                         f"{arr[tuple(bad)]}.")
    return arr


def check_unit_in_span(u, task_axes, name="u"):
    """World vectors ``u`` (..., 3): unit length and in the span of ``task_axes`` (k, 3), within 1e-9.

    Returns the task coordinates ``w = A u`` of shape (..., k).
    """
    arr = np.asarray(u, dtype=np.float64)
    if arr.ndim == 0 or arr.shape[-1] != 3:
        raise ValueError(f"Expected `{name}` with shape (..., 3) [world unit vectors], got {arr.shape}.")
    if not np.all(np.isfinite(arr)):
        raise ValueError(f"`{name}` must be finite.")
    norm = np.linalg.norm(arr, axis=-1)
    if np.any(np.abs(norm - 1.0) > 1e-9):
        worst = float(norm.flat[np.argmax(np.abs(norm - 1.0))])
        raise ValueError(f"`{name}` must be unit vectors (within 1e-9); found length {worst:.12g}.")
    w = arr @ task_axes.T
    off = np.linalg.norm(arr - w @ task_axes, axis=-1)
    if np.any(off > 1e-9):
        raise ValueError(f"`{name}` must lie in the span of the arm's task axes {task_axes.tolist()} "
                         f"(within 1e-9); found an out-of-span part of length {float(off.max()):.3g}.")
    return w
