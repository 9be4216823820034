"""Conversion between the user's (..., n) arrays and the core's batch-last layout (private)."""

import numpy as np

__all__ = ["to_core", "from_core"]


def to_core(*arrays):
    """Broadcast (..., d) arrays over their leading axes; return (d, N) copies and the batch shape."""
    batch = np.broadcast_shapes(*(a.shape[:-1] for a in arrays))
    out = []
    for a in arrays:
        a = np.broadcast_to(a, batch + a.shape[-1:])
        out.append(np.ascontiguousarray(a.reshape(-1, a.shape[-1]).T))
    return out, batch


def from_core(x, batch):
    """(d1, ..., dm, N) -> batch + (d1, ..., dm), a contiguous copy (a numpy scalar if 0-d)."""
    out = np.moveaxis(x, -1, 0).reshape(batch + x.shape[:-1]).copy()
    return out[()] if out.ndim == 0 else out
