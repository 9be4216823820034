"""Torque headroom over the task region, the limiting joint's zones and the caution (private)."""

from dataclasses import dataclass

import numpy as np

from . import _style
from ._labels import variable_label
from ._map_plots import _frame, _masked, _reach_contour, hatch_cells
from ._plane import grid_values, map_plane, solved_mask
from ._style import COLORS, HATCHES

__all__ = ["plot_headroom_map", "HeadroomArtists"]


@dataclass
class HeadroomArtists:
    """Artists of :func:`plot_headroom_map`."""

    mesh: object
    colorbar: object
    zones: dict          # joint name -> PolyCollection: hatched cells where it limits
    boundaries: object   # contour lines between limiting-joint zones (or None)
    rating_line: object  # contour at zero headroom (or None)
    reach: object
    caution: object      # the caution Text
    legend: object
    ax: object


def plot_headroom_map(ds, *, ax=None, cmap=None, limits=(-1.0, 1.0), title=None):
    """Torque headroom over the region and which joint limits it, with the caution text.

    The colour is ``min_margin`` = min over rated joints of 1 - utilisation (1: no
    load, 0: a joint at its peak rating, negative: over it) on a diverging scale
    with fixed limits symmetric about zero (default -1 to 1, so designs compare);
    the zero line is drawn. Each joint's zone (where it has the least headroom) is
    hatched with its own pattern, with a legend of joint names and lines between
    the zones. The caution text of the map (``ds.attrs["caution"]``) is placed under
    the Axes.

    Returns
    -------
    HeadroomArtists
    """
    import matplotlib as mpl
    import matplotlib.colors as mcolors
    from matplotlib.lines import Line2D
    from matplotlib.patches import Patch

    if "min_margin" not in ds:
        raise ValueError(f"map of design '{ds.attrs.get('design', '?')}' has no torque headroom "
                         "(no joint has a peak_torque_Nm rating)")
    plane = map_plane(ds)
    values, da = grid_values(ds, "min_margin")
    ok = solved_mask(ds)
    joint_index = np.asarray(ds["limiting_joint"].transpose("v_m", "u_m").values, int)
    names = [str(n) for n in ds["joint"].values]
    label = variable_label(da, ds=ds)[0].replace(" [", ": 1 − utilisation [", 1)
    lo, hi = (float(x) for x in limits)
    if not lo < 0.0 < hi:
        raise ValueError(f"`limits` must straddle zero (lo < 0 < hi); got {limits}")
    caution = ds.attrs.get("caution", "CAUTION: design-stage estimates, not a validation.")
    with _style.plot_style():
        layout = _style.Layout(ax, equal=True)
        ax = layout.ax
        valid = ok & np.isfinite(values)
        mesh = ax.pcolormesh(plane.u_mm, plane.v_mm, _masked(values, ok), shading="nearest",
                             cmap=cmap or _style.CMAP_DIVERGING,
                             norm=mcolors.TwoSlopeNorm(vcenter=0.0, vmin=lo, vmax=hi),
                             rasterized=True, zorder=1)
        zones, handles = {}, []
        present = [j for j in range(len(names)) if np.any(valid & (joint_index == j))]
        for j in present:
            zone = valid & (joint_index == j)
            hatch = HATCHES[j % len(HATCHES)]
            zones[names[j]] = hatch_cells(ax, plane, zone, hatch, color=COLORS["zone_hatch"],
                                          zorder=2, label=f"{names[j]} limits")
            handles.append(Patch(facecolor=mpl.colormaps[_style.CMAP_DIVERGING](0.85),
                                 edgecolor=COLORS["zone_hatch"], hatch=hatch,
                                 label=f"{names[j]} limits"))
        boundaries = None
        if len(present) > 1:
            field_ = np.ma.masked_where(~valid, joint_index.astype(float))
            levels = [j + 0.5 for j in range(min(present), max(present))]
            boundaries = ax.contour(plane.u_mm, plane.v_mm, field_, levels=levels,
                                    colors=[COLORS["ink"]], linewidths=1.0, zorder=4)
        rating = None
        finite = values[valid]
        if finite.size and finite.min() < 0.0 < finite.max():
            rating = ax.contour(plane.u_mm, plane.v_mm, np.ma.masked_where(~valid, values),
                                levels=[0.0], colors=[COLORS["ink"]], linewidths=2.2,
                                linestyles=[(0, (5, 2))], zorder=5)
            handles.append(Line2D([], [], color=COLORS["ink"], linewidth=2.2,
                                  linestyle=(0, (5, 2)), label="peak rating reached (headroom 0)"))
        reach = _reach_contour(ax, plane, ok)
        if reach is not None:
            handles.append(Line2D([], [], color=COLORS["reach"], linewidth=1.4,
                                  label="reach / joint-limit boundary"))
        accel = float(ds.attrs.get("accel_mps2", 0.0))
        _frame(ax, plane, (f"{ds.attrs.get('design', '')}: torque headroom\n"
                           f"with {accel:g} m/s² tool acceleration in any direction")
               if title is None else title)
        cbar = layout.figure.colorbar(mesh, ax=ax, label=label, shrink=0.9, extend="both")
        cbar.ax.axhline(0.0, color=COLORS["ink"], linewidth=0.8)
        leg = layout.legend(handles)
        text = layout.caution(caution)
        layout.finish()
    return HeadroomArtists(mesh, cbar, zones, boundaries, rating, reach, text, leg, ax)
