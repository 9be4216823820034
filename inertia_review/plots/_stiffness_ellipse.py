"""Tool-stiffness ellipse beside the apparent-mass ellipse at one configuration (private).

Both ellipses follow the convention of :mod:`._ellipses` (Asada's generalized inertia
ellipsoid x^T Lambda x = 1, semi-axes 1 / sqrt(mass)); the stiffness ellipse is the same
construction for the translational tool stiffness, x^T K_t x = 1 (semi-axes 1 / sqrt(k)
along the principal stiffness directions), drawn as its shadow on the plane with
:func:`._ellipses.plane_ellipses` (the stiffness along an in-plane direction u with the other
directions free, 1 / (u^T K_t^-1 u)). So the mass ellipse is short along heavy directions and
the stiffness ellipse is long along soft ones: a direction where the stiffness ellipse is long
and the mass ellipse short is soft and heavy, which is where the lowest natural frequencies
live (for one decoupled direction omega = sqrt(k / m), the ratio of the two semi-axes).
"""

from dataclasses import dataclass

import numpy as np

from ..core import _api, _api_stiffness
from ..studies._cautions import STIFFNESS_CAUTION
from . import _style
from ._displays import _plane_from, _q_text, _single_q
from ._ellipses import plane_ellipses
from ._style import COLORS

__all__ = ["StiffnessEllipseArtists", "plot_stiffness_ellipse"]

#: default drawn size [mm] of the longest semi-axis of each ellipse at the first probe
_SEMI_MM = 40.0


@dataclass
class StiffnessEllipseArtists:
    """Artists and drawn values of :func:`plot_stiffness_ellipse`.

    Coordinates are drawing millimetres, centred on the tool point (the ellipses are
    drawn to a scale, not to the arm's size).

    Attributes
    ----------
    stiffness_ellipse : matplotlib.patches.Ellipse
        Semi-axis [mm] = ``stiffness_scale`` / sqrt(k [N/mm]); long = soft.
    mass_ellipse : matplotlib.patches.Ellipse or None
        Semi-axis [mm] = ``mass_scale`` / sqrt(m [kg]); short = heavy (None with ``mass=False``).
    softest_line, heaviest_line : Line2D or None
        The in-plane direction of lowest stiffness and of heaviest apparent mass.
    mode_line : Line2D or None
        Tool motion of the first mode projected on the plane (None if it does not move
        the tool in the plane).
    sag_arrow : matplotlib.text.Annotation or None
        Direction of the static sag projected on the plane (its length is not to scale).
    caution : Text or None
    stiffness_scale : float
        [mm sqrt(N/mm)].
    mass_scale : float or None
        [mm sqrt(kg)].
    plane_stiffness_N_per_mm : ndarray (2,)
        In-plane stiffnesses, softest first (the ellipse's major then minor axis) [N/mm].
    softest_angle_deg : float
        Angle of the softest in-plane direction from the plane's first axis [deg], in
        [-90, 90) (a direction has no sign).
    heaviest_angle_deg : float or None
        Angle of the heaviest in-plane direction from the plane's first axis [deg], in
        [-90, 90).
    f1_hz : float
        First natural frequency [Hz].
    mode_direction : ndarray (3,)
        Unit tool motion of the first mode in W (zeros if the mode does not move the tool).
    sag_mm : ndarray (3,)
        Static tool sag under gravity in W [mm].
    plane_axes : ndarray (2, 3)
    ax : Axes
    """

    stiffness_ellipse: object
    mass_ellipse: object
    softest_line: object
    heaviest_line: object
    mode_line: object
    sag_arrow: object
    caution: object
    stiffness_scale: float
    mass_scale: object
    plane_stiffness_N_per_mm: np.ndarray
    softest_angle_deg: float
    heaviest_angle_deg: object
    f1_hz: float
    mode_direction: np.ndarray
    sag_mm: np.ndarray
    plane_axes: np.ndarray
    ax: object


def _unit(angle_deg):
    a = np.radians(angle_deg)
    return np.array([np.cos(a), np.sin(a)])


def _fmt(value, spec):
    return "unbounded (rigid)" if not np.isfinite(value) else f"{value:{spec}}"


def plot_stiffness_ellipse(arm, q, *, ax=None, figure=None, plane_axes=None, mass=True,
                           stiffness_scale=None, mass_scale=None, caution=True, title=None):
    """Tool-stiffness ellipse and apparent-mass ellipse at one configuration, overlaid.

    Computes through the core: ``ir.principal_stiffnesses`` (the eigen-decomposition of the
    translational tool stiffness ``ir.tool_stiffness`` [N/m], shown in N/mm),
    ``ir.principal_masses``, ``ir.natural_frequencies`` (first frequency [Hz] and its tool
    motion) and ``ir.tool_deflection`` (static sag [m], shown in mm). Both ellipses are the
    shadows on the drawing plane of x^T K_t x = 1 and x^T Lambda x = 1 (Asada 1983; module
    notes), centred on the tool point, each to its own scale, with lines along the softest
    and the heaviest in-plane directions, the first mode's tool motion and the sag direction.

    Parameters
    ----------
    arm : Arm
        A design with an elastic joint or link (else ValueError from the core).
    q : array_like, shape (n,)
        One configuration [rad].
    ax : Axes, optional
    figure : Figure, optional
        An empty figure (e.g. off-screen) to lay the plot out in.
    plane_axes : array_like (2, 3), optional
        Drawing plane (orthonormal world rows); default as :class:`MassEllipseDisplay`.
    mass : bool, default True
        Also draw the apparent-mass ellipse and the heaviest direction.
    stiffness_scale : float, optional
        [mm sqrt(N/mm)]: semi-axis [mm] = scale / sqrt(k [N/mm]). Default: the longest
        semi-axis is 40 mm. Pass the value of an earlier call so that sizes compare.
    mass_scale : float, optional
        [mm sqrt(kg)]: semi-axis [mm] = scale / sqrt(m [kg]). Default: longest semi-axis 40 mm.
    caution : bool, default True
        Place :data:`STIFFNESS_CAUTION` under the plot.
    title : str, optional

    Returns
    -------
    StiffnessEllipseArtists
    """
    from matplotlib.lines import Line2D
    from matplotlib.patches import Ellipse

    q = _single_q(arm, q)
    plane = _plane_from(arm, plane_axes)
    axes = plane.axes
    ps = _api_stiffness.principal_stiffnesses(arm, q)
    k_major, k_minor, k_angle = plane_ellipses(ps.stiffnesses, ps.directions, axes)  # sqrt(m/N)
    k_major, k_minor = float(k_major), float(k_minor)
    k_angle = (float(k_angle) + 90.0) % 180.0 - 90.0            # an axis: angle in [-90, 90)
    # in-plane stiffness [N/mm] = 1 / (1000 semi^2); semi 0 means rigid in that direction
    with np.errstate(divide="ignore"):
        plane_k = np.array([1.0 / (1e3 * s * s) if s > 0 else np.inf for s in (k_major, k_minor)])
    raw_k = np.array([k_major, k_minor]) * np.sqrt(1e3)        # 1 / sqrt(N/mm)
    if stiffness_scale is None:
        stiffness_scale = _SEMI_MM / raw_k[0] if raw_k[0] > 0 else 1.0
    stiffness_scale = float(stiffness_scale)
    modes = _api_stiffness.natural_frequencies(arm, q)
    f1 = float(modes.frequencies_hz[0])
    mode_dir = np.asarray(modes.first_mode_tool_direction, float)
    sag_mm = 1e3 * np.asarray(_api_stiffness.tool_deflection(arm, q), float)

    m_semi = m_angle = None
    if mass:
        pm = _api.principal_masses(arm, q)
        m_major, m_minor, m_angle = (float(v) for v in plane_ellipses(pm.masses, pm.directions,
                                                                      axes))
        m_semi = np.array([m_major, m_minor])                  # 1 / sqrt(kg)
        if mass_scale is None:
            mass_scale = _SEMI_MM / m_major if m_major > 0 else 1.0
        mass_scale = float(mass_scale)
    with np.errstate(divide="ignore"):
        heavy_mass = (1.0 / m_semi[1] ** 2 if m_semi is not None and m_semi[1] > 0 else np.inf)

    with _style.plot_style():
        layout = _style.Layout(ax, width_in=6.0, height_in=6.0, equal=True, figure=figure)
        ax = layout.ax
        ax.grid(True, color=COLORS["grid"], linewidth=0.6, zorder=0)
        ax.set_axisbelow(True)
        sw, sh = 2.0 * stiffness_scale * raw_k
        stiff = Ellipse((0.0, 0.0), sw, sh, angle=k_angle, facecolor=COLORS["probe"], alpha=0.2,
                        edgecolor=COLORS["probe"], linewidth=1.8, zorder=4)
        ax.add_patch(stiff)
        extent = [0.5 * max(sw, sh)]
        handles = [Line2D([], [], linestyle="none", marker="o", markersize=10,
                          markerfacecolor=COLORS["probe"], markeredgecolor=COLORS["probe"],
                          alpha=0.5, label=f"tool-stiffness ellipse: semi-axis = "
                                           f"{stiffness_scale:.3g} mm / √(k / (N/mm)), long = soft")]
        reach = max(extent[0], 1.0)
        softest = _unit(k_angle) * 1.15 * reach
        (soft_line,) = ax.plot([-softest[0], softest[0]], [-softest[1], softest[1]],
                               color=COLORS["probe"], linewidth=2.0, linestyle="-", zorder=6,
                               label=f"softest in-plane direction: "
                                     f"{_fmt(plane_k[0], '.4g')} N/mm")
        handles.append(soft_line)
        mass_patch = heavy_line = None
        heavy_angle = None
        if m_semi is not None:
            mw, mh = 2.0 * mass_scale * m_semi
            mass_patch = Ellipse((0.0, 0.0), mw, mh, angle=m_angle, facecolor="none",
                                 edgecolor=COLORS["light"], linewidth=1.8, linestyle="--",
                                 zorder=5)
            ax.add_patch(mass_patch)
            extent.append(0.5 * max(mw, mh))
            handles.append(Line2D([], [], color=COLORS["light"], linestyle="--", linewidth=1.8,
                                  label=f"apparent-mass ellipse: semi-axis = {mass_scale:.3g} "
                                        "mm / √(m / kg), short = heavy"))
            heavy_angle = m_angle + 90.0                        # minor axis of the mass ellipse
            heavy_angle = (heavy_angle + 90.0) % 180.0 - 90.0
            heavy = _unit(heavy_angle) * 1.15 * max(extent)
            (heavy_line,) = ax.plot([-heavy[0], heavy[0]], [-heavy[1], heavy[1]],
                                    color=COLORS["heavy"], linewidth=2.0, linestyle=(0, (1, 1)),
                                    zorder=6, label=f"heaviest in-plane direction: "
                                                    f"{_fmt(heavy_mass, '.3g')} kg")
            handles.append(heavy_line)
        size = max(extent) if max(extent) > 0 else 1.0
        mode_line = None
        mode_xy = axes @ mode_dir
        share = float(np.linalg.norm(mode_xy))
        if share > 1e-9 and np.isfinite(f1):
            end = mode_xy * 1.3 * size            # shorter when mostly out of the plane
            (mode_line,) = ax.plot([-end[0], end[0]], [-end[1], end[1]], color=COLORS["middle"],
                                   linewidth=2.2, linestyle=(0, (5, 2)), zorder=7,
                                   label=f"first mode tool motion: f1 = {f1:.1f} Hz "
                                         f"(in-plane share {share:.2f})")
            handles.append(mode_line)
        sag_arrow = None
        sag_xy = axes @ sag_mm
        sag_total = float(np.linalg.norm(sag_mm))
        if sag_total > 0 and np.linalg.norm(sag_xy) > 1e-9 * sag_total:
            end = sag_xy / sag_total * 0.8 * size
            sag_arrow = ax.annotate("", xy=tuple(end), xytext=(0.0, 0.0), zorder=8,
                                    arrowprops={"arrowstyle": "-|>", "color": COLORS["ink"],
                                                "linewidth": 1.6, "mutation_scale": 14})
            handles.append(Line2D([], [], color=COLORS["ink"], marker=">", markersize=6,
                                  linewidth=1.6, label=f"static sag direction (not to scale): "
                                                       f"|sag| = {sag_total:.4f} mm"))
        lim = 1.45 * size
        ax.set_xlim(-lim, lim)
        ax.set_ylim(-lim, lim)
        ax.set_aspect("equal", adjustable="box")
        labels = [plane.u_label, plane.v_label]
        ax.set_xlabel("along " + labels[0].replace(" [mm]", "") + " [mm, drawing scale]")
        ax.set_ylabel("along " + labels[1].replace(" [mm]", "") + " [mm, drawing scale]")
        _style.set_title(ax, title if title is not None else
                     f"{arm.name}: tool stiffness and apparent mass\nq = {_q_text(q)}")
        layout.legend(handles, ncols=1)
        caution_text = layout.caution(STIFFNESS_CAUTION) if caution else None
        layout.finish()
    return StiffnessEllipseArtists(
        stiffness_ellipse=stiff, mass_ellipse=mass_patch, softest_line=soft_line,
        heaviest_line=heavy_line, mode_line=mode_line, sag_arrow=sag_arrow,
        caution=caution_text, stiffness_scale=stiffness_scale, mass_scale=mass_scale,
        plane_stiffness_N_per_mm=plane_k, softest_angle_deg=k_angle,
        heaviest_angle_deg=heavy_angle, f1_hz=f1, mode_direction=mode_dir, sag_mm=sag_mm,
        plane_axes=axes, ax=ax)
