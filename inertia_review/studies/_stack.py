"""Many arms as one: ``ArmParams`` with a trailing batch axis per configuration (private).

The core kernels accept one arm's arrays or arrays with a trailing batch axis (one arm per
configuration; ``core._smallmat.lift``/``pmatmul``). ``stack_params`` builds the latter from
a list of arms, ``take_params`` restricts it to some configurations.
"""

import dataclasses

import numpy as np

from ..model._params import ArmParams

__all__ = ["stack_params", "take_params", "lift_to"]

_SHARED = ("n", "task_axes", "gravity")


def stack_params(params_list, repeat=1):
    """One ``ArmParams`` for len(params_list) * repeat configurations.

    Arrays that differ between the variants get a trailing batch axis (variant v's fill batch
    entries v * repeat ... (v + 1) * repeat - 1); arrays equal in every variant are kept as
    one arm's, which the core kernels broadcast (``core._smallmat.lift``/``pmatmul``), so
    shared geometry costs no more than for one arm. ``n``, the task axes and gravity must be
    shared (they set array shapes and the task frame; the first variant's are kept).
    """
    first = params_list[0]
    fields = {}
    for field in dataclasses.fields(ArmParams):
        name = field.name
        value = getattr(first, name)
        if name in _SHARED or len(params_list) == 1:
            fields[name] = value
            continue
        stacked = np.stack([getattr(p, name) for p in params_list], axis=-1)
        ref = stacked[..., :1]
        if np.all((stacked == ref) | (np.isnan(stacked) & np.isnan(ref))):
            fields[name] = value
            continue
        fields[name] = np.repeat(stacked, repeat, axis=-1) if repeat > 1 else stacked
    if len(params_list) > 1 or repeat > 1:
        fields["payload_mass"] = np.asarray(fields["payload_mass"], float)
    return ArmParams(**fields)


def take_params(params, index, like):
    """``params`` (from ``stack_params``) restricted to the batch entries ``index``: the arrays
    with a batch axis (one more axis than in ``like``, a one-arm ``ArmParams``) are indexed,
    the shared ones kept."""
    out = {}
    for f in dataclasses.fields(ArmParams):
        value = getattr(params, f.name)
        per_config = np.ndim(value) > np.ndim(getattr(like, f.name))
        out[f.name] = value[..., index] if per_config else value
    return ArmParams(**out)


def lift_to(x, ndim, count):
    """A parameter array with the batch axis, broadcast to ``count`` configurations."""
    x = np.asarray(x)
    return np.broadcast_to(x[..., None] if x.ndim == ndim else x, x.shape[:ndim] + (count,))
