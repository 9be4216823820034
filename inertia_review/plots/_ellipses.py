"""Apparent-mass ellipses and principal directions over a map, and their geometry (private).

Convention (used everywhere in inertia_review.plots): an apparent-mass ellipse is the
generalized inertia ellipsoid of Asada (1983), x^T Lambda x = 1, whose semi-axes are
1 / sqrt(mass) along the principal directions, times a drawing scale. So the ellipse is
*short* along the heavy directions and long along the light ones; a circle means the
tool feels equally heavy in every direction of the plane.

In a plane (2 unit rows P in W) the drawn ellipse is the ellipsoid's shadow on the
plane: the ellipse y^T (P Lambda^-1 P^T)^-1 y = 1. Its semi-axes are the square roots
of the eigenvalues of P Lambda^-1 P^T with Lambda^-1 = sum_i d_i d_i^T / m_i (1/inf = 0),
so the mass it shows along an in-plane unit vector u is 1 / (u^T Lambda^-1 u), the
apparent mass felt along u with every other direction free (``ir.mass_along``). When
the plane is the task plane of a planar arm, the semi-axes are exactly 1 / sqrt(m_i).
"""

from dataclasses import dataclass

import numpy as np

from . import _style
from ._map_plots import _frame, _handles, _reach_contour, plot_metric_map
from ._plane import map_plane, solved_mask
from ._style import COLORS

__all__ = ["plane_ellipses", "plot_ellipse_field", "plot_principal_directions", "EllipseField",
           "PrincipalArrows"]


def plane_ellipses(masses, directions, plane_axes):
    """Shadow of the generalized inertia ellipsoid on a plane, per configuration.

    Parameters
    ----------
    masses : array_like, shape (..., k)
        Principal apparent masses [kg] (``inf`` allowed: unbounded directions).
    directions : array_like, shape (..., 3, k)
        Unit principal directions in W (columns).
    plane_axes : array_like, shape (2, 3)
        Orthonormal rows in W spanning the drawing plane.

    Returns
    -------
    major, minor : ndarray (...,)
        Semi-axes [1/sqrt(kg)], major >= minor (0 along unbounded-mass directions).
    angle_deg : ndarray (...,)
        Angle of the major axis from the plane's first axis [deg].
    """
    m = np.asarray(masses, float)
    d = np.asarray(directions, float)
    p = np.asarray(plane_axes, float)
    with np.errstate(divide="ignore"):
        w = np.where(np.isinf(m), 0.0, 1.0 / m)                  # (..., k) 1/kg
    b = np.einsum("ac,...ci->...ai", p, d)                       # (..., 2, k)
    s = np.einsum("...ai,...i,...bi->...ab", b, w, b)            # P Lambda^-1 P^T (..., 2, 2)
    vals, vecs = np.linalg.eigh(s)
    vals = np.clip(vals, 0.0, None)
    major, minor = np.sqrt(vals[..., 1]), np.sqrt(vals[..., 0])
    angle = np.degrees(np.arctan2(vecs[..., 1, 1], vecs[..., 0, 1]))
    return major, minor, angle


def _samples(ds, every):
    every = int(every)
    if every < 1:
        raise ValueError(f"`every` must be an integer >= 1; got {every}")
    ok = solved_mask(ds)
    iv, iu = np.meshgrid(np.arange(0, ok.shape[0], every), np.arange(0, ok.shape[1], every),
                         indexing="ij")
    iv, iu = iv.ravel(), iu.ravel()
    keep = ok[iv, iu]
    return np.stack([iv[keep], iu[keep]], axis=-1), every


def _principal(ds, idx):
    masses = np.asarray(ds["principal_mass"].transpose("v_m", "u_m", "principal").values, float)
    dirs = np.asarray(ds["principal_direction"].transpose("v_m", "u_m", "component",
                                                          "principal").values, float)
    return masses[idx[:, 0], idx[:, 1]], dirs[idx[:, 0], idx[:, 1]]


def _base_marker(ax, plane, arm):
    origins, _ = arm.link_frames(np.zeros(arm.dof))
    xy = plane.project(origins[0])
    (line,) = ax.plot([xy[0]], [xy[1]], linestyle="none", marker="^", markersize=9,
                      color=COLORS["arm"], zorder=6, label=f"base of '{arm.name}'")
    return line


@dataclass
class EllipseField:
    """Artists of :func:`plot_ellipse_field`.

    Attributes
    ----------
    ellipses : matplotlib.collections.EllipseCollection
        One ellipse per sampled solved point; widths/heights in mm (data units).
    scale : float
        Drawing scale [mm sqrt(kg)]: semi-axis [mm] = scale / sqrt(mass [kg]).
    indices : ndarray (N, 2)
        Grid indices (iv, iu) of the sampled points, in the order of the ellipses.
    background : MapArtists or None
    base : Line2D or None
    ax : Axes
    """

    ellipses: object
    scale: float
    indices: np.ndarray
    background: object
    base: object
    reach: object
    ax: object


def plot_ellipse_field(ds, arm=None, *, every=5, ax=None, scale=None, background=None,
                       color=None, title=None):
    """Apparent-mass ellipses at sample points of a map.

    Convention: the generalized inertia ellipsoid of Asada (1983), x^T Lambda x = 1:
    semi-axes proportional to 1 / sqrt(mass) along the principal directions, i.e. an
    ellipse is short where the tool feels heavy. For a 3-D task the ellipsoid's
    shadow on the region plane is drawn (see the module notes): along any in-plane
    direction it shows the apparent mass with the other directions free.

    Parameters
    ----------
    ds : xarray.Dataset
        A map over a rectangle (:func:`inertia_review.metric_map`).
    arm : Arm, optional
        The map's design; when given, its base (first joint origin) is marked.
    every : int, default 5
        Take every ``every``-th grid point along both grid axes, starting at index 0
        (``ds.isel(v_m=slice(0, None, every), u_m=slice(0, None, every))``); only
        solved points are drawn.
    ax : Axes, optional
    scale : float, optional
        Semi-axis [mm] = ``scale`` / sqrt(mass [kg]). Default: the longest semi-axis
        is 0.45 of the sample pitch, so neighbouring ellipses do not overlap.
    background : str, optional
        A map variable drawn underneath (with its colour bar), e.g. "mass_ratio".
    color : colour, optional
    title : str, optional

    Returns
    -------
    EllipseField
    """
    from matplotlib.collections import EllipseCollection

    plane = map_plane(ds)
    idx, every = _samples(ds, every)
    masses, dirs = _principal(ds, idx)
    major, minor, angle = plane_ellipses(masses, dirs, plane.axes)
    pitch = plane.pitch_mm * every
    if scale is None:
        top = float(np.max(major)) if major.size else 0.0
        scale = 0.45 * pitch / top if top > 0.0 else 1.0
    scale = float(scale)
    xy = np.column_stack([plane.u_mm[idx[:, 1]], plane.v_mm[idx[:, 0]]]) if idx.size else \
        np.zeros((0, 2))
    with _style.plot_style():
        layout = _style.Layout(ax, equal=True)
        ax = layout.ax
        back = None
        if background is not None:
            back = plot_metric_map(ds, background, ax=ax, legend=False, title="",
                                   alpha=0.85)
        coll = EllipseCollection(2.0 * scale * major, 2.0 * scale * minor, angle, units="xy",
                                 offsets=xy, offset_transform=ax.transData,
                                 facecolors="none", edgecolors=color or COLORS["ellipse"],
                                 linewidths=1.1, zorder=5)
        ax.add_collection(coll)
        reach = back.reach if back is not None else _reach_contour(ax, plane, solved_mask(ds))
        base = _base_marker(ax, plane, arm) if arm is not None else None
        if idx.size:
            ax.update_datalim(np.vstack([xy - pitch / 2, xy + pitch / 2]))
        ax.autoscale_view()
        _frame(ax, plane, (f"{ds.attrs.get('design', '')}: apparent-mass ellipses"
                           if title is None else title))
        from matplotlib.lines import Line2D
        key = Line2D([], [], linestyle="none", marker="o", markerfacecolor="none",
                     markeredgecolor=color or COLORS["ellipse"], markersize=9,
                     label=f"semi-axis = {scale:.3g} mm / √(m / kg): short = heavy")
        layout.legend(_handles(reach, None, (key, base)))
        layout.finish()
    return EllipseField(coll, scale, idx, back, base, reach, ax)


@dataclass
class PrincipalArrows:
    """Artists of :func:`plot_principal_directions`.

    Attributes
    ----------
    quivers : list of matplotlib.quiver.Quiver
        One per principal mass (lightest first); arrow U, V [kg] = mass x the
        direction projected on the plane axes; points with an unbounded mass omitted.
    unbounded : Line2D or None
        Markers at points with an unbounded principal mass (singular).
    background : MapArtists or None
    scale : float
        Drawing scale [kg per mm]: arrow length [mm] = mass [kg] / scale.
    indices : list of ndarray (N_i, 2)
        Grid indices (iv, iu) of each quiver's arrows.
    """

    quivers: list
    unbounded: object
    scale: float
    indices: list
    background: object
    ax: object


def plot_principal_directions(ds, *, every=5, ax=None, scale=None, background=None,
                              title=None):
    """Quiver of the principal directions of the apparent mass, length by mass.

    At every sampled solved point (as in :func:`plot_ellipse_field`) one headless
    arrow per principal mass, centred on the point, along its direction (projected on
    the region plane for a 3-D task), of length proportional to the mass [kg]
    (lightest: blue, heaviest: orange). Principal directions have no sign, so the
    arrows have no heads. Points where a mass is unbounded (singular) get a marker
    instead of that arrow.

    Parameters
    ----------
    scale : float, optional
        kg per mm of arrow. Default: the 95th percentile of the finite masses spans
        0.9 of the sample pitch.
    background : str, optional
        A map variable drawn underneath (with its colour bar), e.g. "mass_ratio".

    Returns
    -------
    PrincipalArrows
    """
    from matplotlib.lines import Line2D

    plane = map_plane(ds)
    idx, every = _samples(ds, every)
    masses, dirs = _principal(ds, idx)
    k = masses.shape[-1] if masses.ndim == 2 else ds.sizes["principal"]
    pitch = plane.pitch_mm * every
    finite = masses[np.isfinite(masses)]
    if scale is None:
        ref = float(np.percentile(finite, 95)) if finite.size else 1.0
        scale = ref / (0.9 * pitch) if ref > 0 else 1.0
    scale = float(scale)
    xy = np.column_stack([plane.u_mm[idx[:, 1]], plane.v_mm[idx[:, 0]]]) if idx.size else \
        np.zeros((0, 2))
    names = ["lightest", "middle", "heaviest"] if k == 3 else ["lightest", "heaviest"][:k]
    colors = _style.principal_colors(k)
    with _style.plot_style():
        layout = _style.Layout(ax, equal=True)
        ax = layout.ax
        back = None
        if background is not None:
            back = plot_metric_map(ds, background, ax=ax, legend=False, title="", alpha=0.6)
        reach = back.reach if back is not None else _reach_contour(ax, plane, solved_mask(ds))
        quivers, indices = [], []
        for i in range(k):
            m = masses[:, i] if masses.size else np.zeros(0)
            good = np.isfinite(m)
            vec = np.einsum("ac,nc->na", plane.axes, dirs[good, :, i]) * m[good, None]
            qv = ax.quiver(xy[good, 0], xy[good, 1], vec[:, 0], vec[:, 1], angles="xy",
                           scale_units="xy", scale=scale, pivot="middle", headwidth=1.0,
                           headlength=0.0, headaxislength=0.0, width=0.004,
                           color=colors[i], zorder=5, label=f"{names[i]} principal mass")
            quivers.append(qv)
            indices.append(idx[good])
        bad = ~np.all(np.isfinite(masses), axis=-1) if masses.size else np.zeros(0, bool)
        unbounded = None
        if bad.any():
            (unbounded,) = ax.plot(xy[bad, 0], xy[bad, 1], linestyle="none", marker="x",
                                   color=COLORS["probe"], markersize=6, zorder=6,
                                   label="unbounded mass (singular)")
        if idx.size:
            ax.update_datalim(np.vstack([xy - pitch / 2, xy + pitch / 2]))
        ax.autoscale_view()
        _frame(ax, plane, (f"{ds.attrs.get('design', '')}: principal apparent masses"
                           if title is None else title))
        ref = _round_ref(float(np.percentile(finite, 95)) if finite.size else 1.0)
        handles = [Line2D([], [], color=c, linewidth=2.5, label=f"{n} principal mass")
                   for c, n in zip(colors, names)]
        handles.append(Line2D([], [], color=COLORS["ink"], linewidth=0.0,
                              label=f"arrow length: {ref / scale:.3g} mm = {ref:g} kg"))
        if unbounded is not None:
            handles.append(unbounded)
        layout.legend(_handles(reach, None, handles))
        layout.finish()
    return PrincipalArrows(quivers, unbounded, scale, indices, back, ax)


def _round_ref(value):
    """A round reference value (1, 2 or 5 times a power of ten) near ``value``."""
    if not np.isfinite(value) or value <= 0:
        return 1.0
    exp = np.floor(np.log10(value))
    for step in (1.0, 2.0, 5.0, 10.0):
        if step * 10 ** exp >= value:
            return float(step * 10 ** exp)
    return float(10 ** (exp + 1))
