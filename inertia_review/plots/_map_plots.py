"""Map plots: a metric over the task region, differences, small multiples (private).

The headroom map is in ``_headroom_map``.
"""

import textwrap
from dataclasses import dataclass, field

import numpy as np

from ..studies._cautions import STIFFNESS_CAUTION
from ..studies._ik_status import SEAM, SOLVED
from ..studies._maps import STIFFNESS_VARIABLES
from . import _style
from ._labels import variable_label
from ._plane import grid_values, map_plane, solved_mask
from ._style import COLORS

__all__ = ["plot_metric_map", "plot_difference_map", "plot_small_multiples",
           "MapArtists", "SmallMultiples",
           "arm_points", "draw_arm"]


@dataclass
class MapArtists:
    """Artists drawn by :func:`plot_metric_map` (and the other map plots).

    Attributes
    ----------
    mesh : matplotlib.collections.QuadMesh
        The metric (masked where the point is not solved or not finite), screen units.
    colorbar : matplotlib.colorbar.Colorbar or None
    reach : matplotlib.contour.QuadContourSet or None
        Boundary of the solved points (reach and joint limits).
    singular : matplotlib.collections.PolyCollection or None
        Hatched near-singular points: one square per grid cell flagged ``near_singular``.
    arm_line, probe_marker : matplotlib.lines.Line2D or None
        The arm at the probe point, projected into the region plane, and the probe point.
    ax : matplotlib.axes.Axes
    label : str
        The colour-bar label.
    legend : matplotlib.legend.Legend or None
    seam : matplotlib.lines.Line2D or None
        Markers on the points of a branch seam (status 'branch_seam'): neighbouring
        solutions jump there, the arm cannot keep one branch across.
    caution : matplotlib.text.Text or None
        The map's stiffness caution (``ds.attrs["stiffness_caution"]``), drawn for the
        stiffness, sag, frequency, payload and tool-speed variables.
    """

    mesh: object
    colorbar: object
    reach: object
    singular: object
    arm_line: object
    probe_marker: object
    ax: object
    label: str
    legend: object = None
    seam: object = None
    caution: object = None


def arm_points(arm, q):
    """World points of the arm drawn as a polyline: joint origins then the tool point, (n+1, 3)."""
    origins, _ = arm.link_frames(q)
    return np.vstack([origins, arm.tool_position(q)[None, :]])


def draw_arm(ax, plane, points_m, **style):
    """Draw arm points (n+1, 3) [m] projected into ``plane`` (links, joints, base). Line2D."""
    xy = plane.project(points_m)
    kw = dict(color=COLORS["arm"], linewidth=2.5, marker="o", markersize=5.5,
              markerfacecolor=COLORS["joint"], markeredgecolor=COLORS["arm"], zorder=6,
              solid_capstyle="round", label="arm at probe")
    kw.update(style)
    (line,) = ax.plot(xy[:, 0], xy[:, 1], **kw)
    return line


def _masked(values, ok):
    return np.ma.masked_where(~ok | ~np.isfinite(values), values)


def _probe_index(ds, probe):
    """(iv, iu) of a probe: (u, v) in m (nearest grid point) or integer indices (iu, iv)."""
    probe = tuple(probe)
    if len(probe) != 2:
        raise ValueError(f"`probe` must be (u, v) in m or integer indices (iu, iv); got {probe!r}")
    if all(isinstance(p, (int, np.integer)) for p in probe):
        iu, iv = (int(p) for p in probe)
        nu, nv = ds.sizes["u_m"], ds.sizes["v_m"]
        if not (-nu <= iu < nu and -nv <= iv < nv):
            raise ValueError(f"`probe` indices {probe} are outside the grid ({nu} x {nv} points)")
        return iv % nv, iu % nu
    u, v = (float(p) for p in probe)
    out = []
    for name, value in (("v_m", v), ("u_m", u)):
        coords = np.asarray(ds[name].values, float)
        i = int(np.argmin(np.abs(coords - value)))
        step = np.min(np.abs(np.diff(coords))) if coords.size > 1 else 0.0
        if abs(coords[i] - value) > 0.5 * step + 1e-9:
            raise ValueError(f"`probe` {name[0]} = {value} m is outside the grid "
                             f"[{coords.min()}, {coords.max()}] m")
        out.append(i)
    return tuple(out)


def _draw_probe(ax, ds, plane, arm, probe):
    iv, iu = _probe_index(ds, probe)
    status = int(ds["status"].transpose("v_m", "u_m").values[iv, iu])
    u_m, v_m = float(ds["u_m"].values[iu]), float(ds["v_m"].values[iv])
    if status not in SOLVED:
        meanings = ds["status"].attrs.get("flag_meanings", "").split()
        reason = meanings[status] if status < len(meanings) else str(status)
        raise ValueError(f"`probe` point (u, v) = ({u_m:.4g}, {v_m:.4g}) m is not solved "
                         f"(status {status}: {reason}); pick a solved point")
    q = np.asarray(ds["q"].transpose("v_m", "u_m", "joint").values[iv, iu], float)
    if q.shape != (arm.dof,):
        raise ValueError(f"map has {q.size} joints but arm '{arm.name}' has {arm.dof}")
    points = arm_points(arm, q)
    target = np.array([float(ds[c].transpose("v_m", "u_m").values[iv, iu])
                       for c in ("x_m", "y_m", "z_m")])
    if np.linalg.norm(points[-1] - target) > 1e-3:
        raise ValueError(f"arm '{arm.name}' at the map's q does not reach the map's point "
                         f"{np.round(target, 4).tolist()} m (off by "
                         f"{1000 * np.linalg.norm(points[-1] - target):.1f} mm): is it the map's "
                         f"design ('{ds.attrs.get('design')}')?")
    line = draw_arm(ax, plane, points)
    xy = plane.project(target)
    (marker,) = ax.plot([xy[0]], [xy[1]], linestyle="none", marker="X", markersize=9,
                        color=COLORS["probe"], markeredgecolor="white", zorder=7,
                        label=f"probe at ({xy[0]:.0f}, {xy[1]:.0f}) mm")
    return line, marker


def _reach_contour(ax, plane, ok):
    if ok.all() or not ok.any():
        return None
    return ax.contour(plane.u_mm, plane.v_mm, ok.astype(float), levels=[0.5],
                      colors=[COLORS["reach"]], linewidths=1.4, linestyles="solid", zorder=4)


def _cells(plane, mask):
    """Corner polygons (N, 4, 2) [mm] of the grid cells where ``mask`` (nv, nu) is True."""
    iv, iu = np.nonzero(mask)
    half_u = 0.5 * (np.min(np.abs(np.diff(plane.u_mm))) if plane.u_mm.size > 1 else 1.0)
    half_v = 0.5 * (np.min(np.abs(np.diff(plane.v_mm))) if plane.v_mm.size > 1 else 1.0)
    cu, cv = plane.u_mm[iu], plane.v_mm[iv]
    du = np.array([-1.0, 1.0, 1.0, -1.0]) * half_u
    dv = np.array([-1.0, -1.0, 1.0, 1.0]) * half_v
    return np.stack([cu[:, None] + du, cv[:, None] + dv], axis=-1)


def hatch_cells(ax, plane, mask, hatch, *, color=None, zorder=3, label=None):
    """Hatch the grid cells where ``mask`` is True (one square per cell, no outline)."""
    import matplotlib as mpl
    from matplotlib.collections import PolyCollection

    with mpl.rc_context({"hatch.color": color or COLORS["ink"]}):
        coll = PolyCollection(_cells(plane, mask), facecolors="none", edgecolors="none",
                              linewidths=0.0, hatch=hatch, zorder=zorder, label=label)
        ax.add_collection(coll)
    return coll


def _singular_hatch(ax, plane, ds, ok):
    if "near_singular" not in ds:
        return None
    flag = np.asarray(ds["near_singular"].transpose("v_m", "u_m").values, bool) & ok
    if not flag.any():
        return None
    return hatch_cells(ax, plane, flag, "xxxx", label="near-singular")


def _seam_marks(ax, plane, ds):
    """Markers on the branch-seam points (status 'branch_seam'), or None."""
    seam = np.asarray(ds["status"].transpose("v_m", "u_m").values) == SEAM
    if not seam.any():
        return None
    uu, vv = np.meshgrid(plane.u_mm, plane.v_mm)
    (line,) = ax.plot(uu[seam], vv[seam], linestyle="none", marker="d", markersize=3.5,
                      color=COLORS["reach"], zorder=4, label="branch seam")
    return line


def _handles(reach, singular, extra=()):
    """Legend handles for the reach boundary, the near-singular hatch and ``extra`` artists."""
    from matplotlib.lines import Line2D
    from matplotlib.patches import Patch

    handles = [h for h in extra if h is not None]
    if reach is not None:
        handles.append(Line2D([], [], color=COLORS["reach"], linewidth=1.4,
                              label="reach / joint-limit boundary"))
    if singular is not None:
        handles.append(Patch(facecolor="white", edgecolor=COLORS["ink"], hatch="xxxx",
                             label="near-singular"))
    return handles


def _frame(ax, plane, title):
    ax.set_xlabel(plane.u_label)
    ax.set_ylabel(plane.v_label)
    ax.set_aspect("equal", adjustable="box")
    if title:
        _style.set_title(ax, title)


def plot_metric_map(ds, metric="mass_ratio", *, ax=None, arm=None, probe=None, select=None,
                    cmap=None, norm=None, vmin=None, vmax=None, colorbar=True, title=None,
                    legend=True, caution=True, **style):
    """Draw one metric of a map over its region plane.

    The metric is a ``pcolormesh`` over the region's grid in screen units (positions
    in mm, angles in deg), masked where the point is not solved (``status != 0``) or
    not finite. The boundary of the solved points (reach and joint limits) is a
    contour line, near-singular points (``near_singular``) are hatched, and the colour
    bar is labelled from the variable's attributes, e.g. "min/max apparent mass ratio
    [-]". With ``arm`` and ``probe`` the arm is drawn at that point: its joint origins
    and tool point projected into the region plane.

    Parameters
    ----------
    ds : xarray.Dataset
        A map from :func:`inertia_review.metric_map` over a rectangle (or a box map cut
        to one layer with ``ds.isel(w_m=i)``).
    metric : str, default "mass_ratio"
        Name of a map variable.
    ax : matplotlib.axes.Axes, optional
        Axes to draw into; a new figure is made only when None.
    arm : Arm, optional
        The map's design, to draw at ``probe``.
    probe : (float, float) or (int, int), optional
        Grid point: (u, v) in m (the map's ``u_m``/``v_m`` coordinates, nearest point) or
        integer indices (iu, iv).
    select : dict, optional
        Picks one entry of the extra dims, e.g. ``{"joint": "elbow"}`` (label) or
        ``{"principal": 0}`` (position).
    cmap, norm, vmin, vmax : optional
        Colour scale (default: cividis over the solved values).
    colorbar, legend : bool, default True
    title : str, optional
        Default: the design name.
    caution : bool, default True
        Draw the stiffness caution under a stiffness, sag, frequency or payload map;
        ``False`` leaves it to the caller (a figure of several panels shows it once).
    **style
        Passed to ``pcolormesh``.

    Returns
    -------
    MapArtists
    """
    plane = map_plane(ds)
    values, da = grid_values(ds, metric, select)
    label, factor = variable_label(da, ds=ds, selection=select)
    ok = solved_mask(ds)
    with _style.plot_style():
        layout = _style.Layout(ax, equal=True)
        ax = layout.ax
        if norm is None and (vmin is not None or vmax is not None):
            import matplotlib.colors as mcolors
            norm = mcolors.Normalize(vmin=vmin, vmax=vmax)
        mesh = ax.pcolormesh(plane.u_mm, plane.v_mm, _masked(values * factor, ok),
                             shading="nearest", cmap=cmap or _style.CMAP_SEQUENTIAL, norm=norm,
                             rasterized=True, zorder=1, **style)
        reach = _reach_contour(ax, plane, ok)
        singular = _singular_hatch(ax, plane, ds, ok)
        seam = _seam_marks(ax, plane, ds)
        arm_line = marker = None
        if probe is not None:
            if arm is None:
                raise ValueError("`probe` needs `arm` (the map's design) to draw the arm")
            arm_line, marker = _draw_probe(ax, ds, plane, arm, probe)
        _frame(ax, plane, ds.attrs.get("design", "") if title is None else title)
        cbar = layout.figure.colorbar(mesh, ax=ax, label=label, shrink=0.9) if colorbar else None
        leg = (layout.legend(_handles(reach, singular, (arm_line, marker, seam))) if legend
               else None)
        note = None
        if caution and metric in STIFFNESS_VARIABLES:
            note = layout.caution(ds.attrs.get("stiffness_caution", STIFFNESS_CAUTION))
        layout.finish()
    return MapArtists(mesh, cbar, reach, singular, arm_line, marker, ax, label, leg, seam,
                      note)


@dataclass
class SmallMultiples:
    """Artists of :func:`plot_small_multiples`: one :class:`MapArtists` per map, one colour bar."""

    maps: list
    colorbar: object
    axes: list
    figure: object
    norm: object = field(default=None)
    caution: object = None   # the one stiffness caution Text of the figure (stiffness metrics)

    @property
    def meshes(self):
        return [m.mesh for m in self.maps]


def plot_small_multiples(maps, metric="mass_ratio", *, axes=None, select=None, cmap=None,
                         vmin=None, vmax=None, ncols=None, titles=None):
    """Several designs side by side on one shared colour scale with one colour bar.

    Parameters
    ----------
    maps : sequence of xarray.Dataset
        Maps from :func:`inertia_review.metric_map` (any regions).
    metric : str, default "mass_ratio"
    axes : sequence of Axes, optional
        One per map (e.g. from ``plt.subplots``); a new figure when None.
    select, cmap : optional
        As in :func:`plot_metric_map`.
    vmin, vmax : float, optional
        Shared colour limits in screen units (default: over every map's solved values).
    ncols : int, optional
        Columns of a new figure (default: all maps in one row, at most 4 per row).
    titles : sequence of str, optional
        Default: the design names (``ds.attrs["design"]``).

    Returns
    -------
    SmallMultiples
    """
    import matplotlib.colors as mcolors

    maps = list(maps)
    if not maps:
        raise ValueError("`maps` must hold at least one map")
    labels, finite = set(), []
    for ds in maps:
        values, da = grid_values(ds, metric, select)
        label, factor = variable_label(da, ds=ds, selection=select)
        labels.add(label)
        v = values[solved_mask(ds)] * factor
        finite.append(v[np.isfinite(v)])
    if len(labels) > 1:
        raise ValueError(f"maps disagree on the metric's units or name: {sorted(labels)}")
    allv = np.concatenate(finite) if finite else np.array([])
    lo = vmin if vmin is not None else (float(allv.min()) if allv.size else 0.0)
    hi = vmax if vmax is not None else (float(allv.max()) if allv.size else 1.0)
    norm = mcolors.Normalize(vmin=lo, vmax=hi)
    with _style.plot_style():
        notes, own = None, False
        if axes is None:
            import matplotlib.pyplot as plt

            ncols = ncols or min(4, len(maps))
            nrows = -(-len(maps) // ncols)
            fig = plt.figure(figsize=(3.4 * ncols + 1.3, 3.6 * nrows + 0.8), layout="constrained")
            grid = fig.add_gridspec(nrows + 1, ncols, height_ratios=[1.0] * nrows + [0.06])
            axes = []
            for i in range(len(maps)):
                share = axes[0] if axes else None
                axes.append(fig.add_subplot(grid[i // ncols, i % ncols], sharex=share,
                                            sharey=share))
            own = True
            notes = fig.add_subplot(grid[nrows, :])
            notes.set_axis_off()
        else:
            axes = list(np.ravel(np.asarray(axes, dtype=object)))
            if len(axes) != len(maps):
                raise ValueError(f"`axes` must hold one Axes per map: {len(maps)} maps, "
                                 f"{len(axes)} axes")
            fig = axes[0].figure
        titles = titles or [ds.attrs.get("design", f"map {i}") for i, ds in enumerate(maps)]
        drawn = [plot_metric_map(ds, metric, ax=a, select=select, cmap=cmap, norm=norm,
                                 colorbar=False, title=t, legend=False, caution=False)
                 for ds, a, t in zip(maps, axes, titles)]
        if own:
            # every panel keeps its x tick labels and x label (a panel is read on its own);
            # the shared y axis is labelled once per row
            for i, a in enumerate(axes):
                a.tick_params(labelbottom=True)
                if i % ncols:
                    a.tick_params(labelleft=False)
                    a.set_ylabel("")
        cbar = fig.colorbar(drawn[0].mesh, ax=axes, label=labels.pop(), shrink=0.85)
        reach = next((d.reach for d in drawn if d.reach is not None), None)
        singular = next((d.singular for d in drawn if d.singular is not None), None)
        handles = _handles(reach, singular)
        text = (" ".join(str(maps[0].attrs.get("stiffness_caution", STIFFNESS_CAUTION)).split())
                if metric in STIFFNESS_VARIABLES else None)
        legend = note = None
        if notes is not None:
            if handles:
                legend = notes.legend(handles=handles, loc="upper left", ncols=len(handles),
                                      frameon=False, borderaxespad=0.0)
            if text is not None:
                # one caution for the whole figure, under the legend, wrapped to its width
                chars = max(40, int((fig.get_figwidth() - 0.4) * 72.0
                                    / (0.6 * _style.CAUTION_FONTSIZE)))
                anchor = ("axes fraction", legend) if legend is not None else "axes fraction"
                note = notes.annotate(textwrap.fill(text, width=chars),
                                      xy=(0.0, 0.0) if legend is not None else (0.0, 1.0),
                                      xycoords=anchor, xytext=(0.0, -6.0),
                                      textcoords="offset points", ha="left", va="top",
                                      fontsize=_style.CAUTION_FONTSIZE, color=_style.COLORS["ink"],
                                      annotation_clip=False, gid="caution")
            if not handles and text is None:
                notes.set_visible(False)
        else:
            if handles:
                axes[0].legend(handles=handles, loc="best", framealpha=0.9)
            if text is not None:
                note = _style.add_caution(axes[-1], text)
    return SmallMultiples(drawn, cbar, axes, fig, norm, note)


def plot_difference_map(ds_b, ds_a, metric="mass_ratio", *, ax=None, select=None, cmap=None,
                        limit=None, title=None):
    """Design B minus design A on a diverging colour scale centred at zero.

    Drawn only where both maps are solved and finite; the colour limits are symmetric
    (``-limit, +limit``, default the largest absolute difference), so zero is the
    centre colour. Both maps must share the same grid (same region).

    Returns
    -------
    MapArtists
        ``mesh`` holds B - A in screen units.
    """
    import matplotlib.colors as mcolors

    plane_b, plane_a = map_plane(ds_b), map_plane(ds_a)
    same = (plane_a.u_mm.shape == plane_b.u_mm.shape and plane_a.v_mm.shape == plane_b.v_mm.shape
            and np.allclose(plane_a.u_mm, plane_b.u_mm, atol=1e-6)
            and np.allclose(plane_a.v_mm, plane_b.v_mm, atol=1e-6)
            and np.allclose(plane_a.axes, plane_b.axes, atol=1e-12))
    if not same:
        raise ValueError("maps of different grids cannot be subtracted: make both with the "
                         "same region")
    vb, da_b = grid_values(ds_b, metric, select)
    va, _ = grid_values(ds_a, metric, select)
    name_b, name_a = ds_b.attrs.get("design", "B"), ds_a.attrs.get("design", "A")
    label, factor = variable_label(da_b, ds=ds_b, selection=select, prefix="Δ ")
    ok = solved_mask(ds_a) & solved_mask(ds_b)
    diff = (vb - va) * factor
    both = ok & np.isfinite(diff)
    if limit is None:
        limit = float(np.max(np.abs(diff[both]))) if both.any() else 1.0
        limit = limit if limit > 0.0 else 1.0
    norm = mcolors.Normalize(vmin=-float(limit), vmax=float(limit))
    with _style.plot_style():
        layout = _style.Layout(ax, equal=True)
        ax = layout.ax
        mesh = ax.pcolormesh(plane_b.u_mm, plane_b.v_mm, _masked(diff, both), shading="nearest",
                             cmap=cmap or _style.CMAP_DIVERGING, norm=norm, rasterized=True,
                             zorder=1)
        reach = _reach_contour(ax, plane_b, ok)
        _frame(ax, plane_b, f"Δ = {name_b} − {name_a}" if title is None else title)
        cbar = layout.figure.colorbar(mesh, ax=ax, label=label, shrink=0.9)
        cbar.ax.axhline(0.0, color=COLORS["ink"], linewidth=0.8)
        leg = layout.legend(_handles(reach, None))
        layout.finish()
    return MapArtists(mesh, cbar, reach, None, None, None, ax, cbar.ax.get_ylabel(), leg)
