"""Saving and loading maps and sweep results as netCDF (private)."""

import os
import tempfile
from pathlib import Path

__all__ = ["save_results", "load_results"]


def save_results(ds, path):
    """Write a map or sweep Dataset to netCDF (h5netcdf) through a temporary file and a rename."""
    path = Path(path)
    fd, tmp = tempfile.mkstemp(prefix=f".{path.name}.", suffix=".tmp", dir=path.parent or ".")
    os.close(fd)
    try:
        ds.to_netcdf(tmp, engine="h5netcdf", invalid_netcdf=True)
        os.replace(tmp, path)
    except BaseException:
        try:
            os.unlink(tmp)
        except FileNotFoundError:
            pass
        raise
    return path


def load_results(path):
    """Read a Dataset written by :func:`save_results` (fully loaded, file closed)."""
    import xarray as xr

    return xr.load_dataset(path, engine="h5netcdf")
