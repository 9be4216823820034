"""Saving and loading maps and sweep results as netCDF-4 (private).

The files are valid netCDF-4 (HDF5 written by h5netcdf without ``invalid_netcdf``), readable by
the netCDF C library and its tools. Attribute values that netCDF cannot hold (booleans, ``None``,
tables/dicts, lists mixing types) are stored as JSON text; the names of those attributes are
listed in the attribute ``inertia_review_json_attrs`` of the same variable or of the file, so
:func:`load_results` restores them exactly.
"""

import json
from numbers import Integral, Real
from pathlib import Path

import numpy as np

from ..model._atomic import atomic_path

__all__ = ["save_results", "load_results", "CONVENTIONS"]

CONVENTIONS = "CF-1.8"
_JSON_ATTRS = "inertia_review_json_attrs"


def _netcdf_ready(value):
    """True when netCDF-4 stores ``value`` as an attribute without changing its meaning."""
    if isinstance(value, (bool, np.bool_)) or value is None:
        return False
    if isinstance(value, (str, Integral, Real)):
        return True
    if isinstance(value, np.ndarray):
        return value.dtype.kind in "iuf" and value.ndim <= 1 and value.size > 0
    if isinstance(value, (list, tuple)):
        if not value:
            return False
        if all(isinstance(v, str) for v in value):
            return True
        return all(isinstance(v, (Integral, Real)) and not isinstance(v, (bool, np.bool_))
                   for v in value)
    return False


def _encode(attrs, where):
    out, encoded = {}, []
    for key, value in attrs.items():
        if key == _JSON_ATTRS:
            raise ValueError(f"{where}: attribute name '{_JSON_ATTRS}' is reserved")
        if _netcdf_ready(value):
            out[key] = value
            continue
        try:
            out[key] = json.dumps(value.tolist() if isinstance(value, np.ndarray) else value,
                                  allow_nan=True, default=_json_default)
        except TypeError as exc:
            raise TypeError(f"{where}: attribute '{key}' cannot be stored in netCDF "
                            f"({type(value).__name__}): {exc}") from None
        encoded.append(key)
    if encoded:
        out[_JSON_ATTRS] = encoded if len(encoded) > 1 else encoded[0]
    return out


def _json_default(value):
    if isinstance(value, np.generic):
        return value.item()
    raise TypeError(f"{type(value).__name__} is not a JSON value")


def _decode(attrs):
    names = attrs.pop(_JSON_ATTRS, None)
    if names is None:
        return attrs
    for key in [names] if isinstance(names, str) else list(names):
        attrs[key] = json.loads(attrs[key])
    return attrs


def save_results(ds, path):
    """Write a map or sweep Dataset to a netCDF-4 file, atomically.

    The file gets the global attribute ``Conventions = "CF-1.8"``; attributes that netCDF cannot
    hold are stored as JSON text (see the module docstring). The Dataset is not changed. A
    failed write leaves no file behind and an existing file untouched.
    """
    out = ds.copy(deep=False)
    out.attrs = _encode(dict(ds.attrs), "dataset")
    out.attrs.setdefault("Conventions", CONVENTIONS)
    for name, var in out.variables.items():
        var.attrs = _encode(dict(ds.variables[name].attrs), f"variable '{name}'")
    with atomic_path(path) as tmp:
        out.to_netcdf(tmp, engine="h5netcdf")
    return Path(path)


def load_results(path):
    """Read a Dataset written by :func:`save_results` (fully loaded, file closed).

    JSON-encoded attributes are decoded; the ``Conventions`` attribute that
    :func:`save_results` added is dropped again (also when the Dataset brought the same value),
    so a round trip returns an identical Dataset.
    """
    import xarray as xr

    ds = xr.load_dataset(path, engine="h5netcdf")
    ds.attrs = _decode(dict(ds.attrs))
    if ds.attrs.get("Conventions") == CONVENTIONS:
        del ds.attrs["Conventions"]
    for var in ds.variables.values():
        var.attrs = _decode(dict(var.attrs))
    return ds
