"""The plane of a map: screen coordinates [mm] of grid points and of world points (private).

A point p (world, m) is drawn at (p . a_u, p . a_v) * 1000 mm, where a_u, a_v are the
region's first two axes (unit rows in W). Grid point (u, v) of a rectangle with centre c
is at p = c + u a_u + v a_v, so it lands at ((c . a_u + u), (c . a_v + v)) * 1000 mm. A box
map with one grid axis selected (``ds.isel(w_m=i)``) is drawn in its (u, v) plane the same
way (the offset along the third axis does not change the projection).
"""

from dataclasses import dataclass

import numpy as np

from ..studies._ik_status import SOLVED
from ._labels import axis_label

__all__ = ["MapPlane", "map_plane", "grid_values", "solved_mask"]

_GRID = ("v_m", "u_m")


@dataclass(frozen=True)
class MapPlane:
    """Plane geometry of a map: its two axes in W and the grid's screen coordinates [mm]."""

    axes: np.ndarray        # (2, 3) unit rows in W
    u_mm: np.ndarray        # (nu,) screen coordinate of the grid columns
    v_mm: np.ndarray        # (nv,) screen coordinate of the grid rows
    u_label: str
    v_label: str

    def project(self, points_m):
        """World points (..., 3) [m] -> screen coordinates (..., 2) [mm]."""
        return 1000.0 * np.asarray(points_m, float) @ self.axes.T

    @property
    def pitch_mm(self):
        """Grid spacing [mm] (the smaller of the two directions; 1 for a single point)."""
        steps = [np.min(np.abs(np.diff(c))) for c in (self.u_mm, self.v_mm) if c.size > 1]
        return float(min(steps)) if steps else 1.0


def map_plane(ds):
    """The :class:`MapPlane` of a rectangle map (or a box map cut to one ``w_m``).

    Raises
    ------
    ValueError
        For point-list maps, box maps not cut to a plane, or maps without region axes.
    """
    kind = ds.attrs.get("region_kind")
    missing = [d for d in _GRID if d not in ds.dims]
    if kind == "points" or missing or ("w_m" in ds.dims):
        hint = (" select one layer first, e.g. ds.isel(w_m=0)" if "w_m" in ds.dims else
                " plot point-list maps as tables or with scores_table")
        raise ValueError(f"map of design '{ds.attrs.get('design', '?')}' (region kind "
                         f"'{kind}', dims {tuple(ds.dims)}) is not a plane grid with dims "
                         f"('v_m', 'u_m'):{hint}")
    if "region_axes" not in ds.attrs or "region_center_m" not in ds.attrs:
        raise ValueError("map has no 'region_axes' / 'region_center_m' attributes; make it with "
                         "inertia_review.metric_map")
    rows = np.asarray(ds.attrs["region_axes"], float).reshape(-1, 3)
    center = np.asarray(ds.attrs["region_center_m"], float)
    axes = rows[:2]
    u = 1000.0 * (center @ axes[0] + np.asarray(ds["u_m"].values, float))
    v = 1000.0 * (center @ axes[1] + np.asarray(ds["v_m"].values, float))
    return MapPlane(axes, u, v, axis_label(axes[0], "u"), axis_label(axes[1], "v"))


def solved_mask(ds):
    """(nv, nu) bool: grid points solved (status 'ok' or 'branch_seam')."""
    return np.isin(np.asarray(ds["status"].transpose(*_GRID).values), SOLVED)


def grid_values(ds, name, selection=None):
    """(values (nv, nu) float, DataArray) of map variable ``name`` with extra dims selected.

    Raises KeyError listing the plottable names, ValueError naming the dims left over.
    """
    plottable = [k for k, v in ds.data_vars.items() if set(_GRID) <= set(v.dims)]
    if name not in ds.data_vars:
        raise KeyError(f"No map variable named '{name}'. Variables: {', '.join(plottable)}")
    da = ds[name]
    if selection:
        labels = {k: v for k, v in selection.items() if not isinstance(v, (int, np.integer))}
        positions = {k: v for k, v in selection.items() if isinstance(v, (int, np.integer))}
        if labels:
            da = da.sel(labels)
        if positions:
            da = da.isel(positions)
    extra = [d for d in da.dims if d not in _GRID]
    if extra:
        choices = "; ".join(f"{d}: {list(map(str, ds[d].values))}" if d in ds.coords
                            else d for d in extra)
        raise ValueError(f"map variable '{name}' has dims {extra} besides the grid: pass "
                         f"`select`, e.g. select={{'{extra[0]}': 0}} ({choices})")
    return np.asarray(da.transpose(*_GRID).values, float), da
