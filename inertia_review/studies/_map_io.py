"""Saving and loading maps and sweep results as netCDF (private)."""

from pathlib import Path

from ..model._atomic import atomic_path

__all__ = ["save_results", "load_results"]


def save_results(ds, path):
    """Write a map or sweep Dataset to netCDF (h5netcdf) through a temporary file and a rename."""
    with atomic_path(path) as tmp:
        ds.to_netcdf(tmp, engine="h5netcdf", invalid_netcdf=True)
    return Path(path)


def load_results(path):
    """Read a Dataset written by :func:`save_results` (fully loaded, file closed)."""
    import xarray as xr

    return xr.load_dataset(path, engine="h5netcdf")
