"""Stateful views of one arm configuration: mass ellipse and torque bars (private).

Display objects split computing from drawing (the scikit-learn Display pattern):
``from_arm`` computes through the core and plots; ``plot`` draws the stored results
and keeps the artists (``*_`` attributes); ``update(q)`` recomputes through the core
and changes the same artists in place (``set_data``, ``set_width``, ``set_height``
...), then asks the canvas for a redraw (``draw_idle``). Widgets and the HTML report
reuse them.
"""

import numpy as np

from ..core import _api
from ..studies._cautions import TORQUE_CAUTION
from . import _style
from ._ellipses import plane_ellipses
from ._labels import axis_label
from ._map_plots import arm_points
from ._plane import MapPlane
from ._style import COLORS

__all__ = ["MassEllipseDisplay", "TorqueBarsDisplay"]


def _single_q(arm, q):
    q = np.asarray(q, dtype=float)
    if q.shape != (arm.dof,):
        raise ValueError(f"Expected `q` with shape ({arm.dof},) for design '{arm.name}' (one "
                         f"configuration), got {q.shape}.")
    return q


def _q_text(q):
    return "(" + ", ".join(f"{v:.1f}" for v in np.degrees(q)) + ") deg"


def _plane_from(arm, plane_axes):
    if plane_axes is None:
        axes = arm.task_axes if arm.task_axes.shape[0] == 2 else np.array(
            [[1.0, 0.0, 0.0], [0.0, 0.0, 1.0]])
    else:
        axes = np.asarray(plane_axes, float)
        if axes.shape != (2, 3) or np.max(np.abs(axes @ axes.T - np.eye(2))) > 1e-9:
            raise ValueError("`plane_axes` must be 2 orthonormal rows of 3 numbers (world "
                             f"directions); got {np.asarray(plane_axes).tolist()}")
    empty = np.zeros(0)
    return MapPlane(axes, empty, empty, axis_label(axes[0], "u"), axis_label(axes[1], "v"))


def _region_outline(region, plane):
    """Screen points [mm] of a task region in the plane: a closed outline (rectangle, box) or
    the points (point list); None without a region."""
    region = getattr(region, "region", region)          # a Task carries its region
    if region is None:
        return None, False
    kind = getattr(region, "kind", None)
    if kind in ("rectangle", "box"):
        axes = np.asarray(region.axes, float)
        half = 0.5 * np.asarray(region.size_m, float)
        signs = np.array(np.meshgrid(*[[-1.0, 1.0]] * len(half), indexing="ij")).reshape(
            len(half), -1).T
        corners = plane.project(np.asarray(region.center_m, float) + (signs * half) @ axes)
        return _hull(corners), True
    points, _ = region.sample()
    return plane.project(np.asarray(points, float).reshape(-1, 3)), False


def _hull(xy):
    """Convex hull of a few 2-D points, closed (Andrew's monotone chain; common practice)."""
    pts = sorted(set(map(tuple, np.round(np.asarray(xy, float), 9))))
    if len(pts) < 3:
        return np.asarray(pts + pts[:1], float)

    def half(points):
        out = []
        for p in points:
            while len(out) >= 2 and ((out[-1][0] - out[-2][0]) * (p[1] - out[-2][1]) -
                                     (out[-1][1] - out[-2][1]) * (p[0] - out[-2][0])) <= 0:
                out.pop()
            out.append(p)
        return out

    lower, upper = half(pts), half(pts[::-1])
    ring = lower[:-1] + upper[:-1]
    return np.asarray(ring + ring[:1], float)


class MassEllipseDisplay:
    """The arm in a plane with its apparent-mass ellipse at the tool point.

    The ellipse follows the convention of :func:`inertia_review.plots.plot_ellipse_field`:
    the generalized inertia ellipsoid x^T Lambda x = 1 (Asada 1983), semi-axes
    ``scale / sqrt(mass)`` [mm] along the principal directions (its shadow on the
    plane for a 3-D task), so it is short along heavy directions.

    Do not compute with the constructor: use :meth:`from_arm`. The constructor only
    stores results (screen units, mm and deg).

    Parameters
    ----------
    arm_xy_mm : ndarray (n+1, 2)
        Joint origins and tool point projected into the plane [mm].
    width_mm, height_mm, angle_deg : float
        Ellipse full axes [mm] (width along ``angle_deg`` from the plane's first axis).
    masses_kg : ndarray (k,)
        Principal apparent masses, ascending.
    plane_axes : ndarray (2, 3)
    scale : float
        [mm sqrt(kg)].
    title : str, optional
    region_xy_mm : ndarray (m, 2), optional
        The task region in the plane [mm]: a closed outline (``region_closed``) or points.

    The view is fitted to what it shows: the arm, the ellipse and the task region, with a
    margin; :meth:`update` widens it when the arm or the ellipse would leave it (never
    narrows it, so that successive probes compare).

    Attributes
    ----------
    ellipse_ : matplotlib.patches.Ellipse
    region_ : matplotlib.lines.Line2D or None
        The task region's outline (or points) in the plane.
    arm_line_ : matplotlib.lines.Line2D
    text_ : matplotlib.text.Text
        The principal masses.
    ax_, figure_ : Axes, Figure
    """

    def __init__(self, *, arm_xy_mm, width_mm, height_mm, angle_deg, masses_kg, plane_axes,
                 scale, title=None, region_xy_mm=None, region_closed=True):
        self.region_xy_mm = region_xy_mm
        self.region_closed = region_closed
        self.arm_xy_mm = arm_xy_mm
        self.width_mm = width_mm
        self.height_mm = height_mm
        self.angle_deg = angle_deg
        self.masses_kg = masses_kg
        self.plane_axes = plane_axes
        self.scale = scale
        self.title = title
        self._arm = None

    def __repr__(self):
        masses = ", ".join(f"{m:.4g}" for m in np.asarray(self.masses_kg, float))
        return f"MassEllipseDisplay(title={self.title!r}, masses_kg=[{masses}])"

    @staticmethod
    def _compute(arm, q, plane, scale):
        q = _single_q(arm, q)
        pm = _api.principal_masses(arm, q)
        major, minor, angle = plane_ellipses(pm.masses, pm.directions, plane.axes)
        points = arm_points(arm, q)
        if scale is None:
            reach_mm = 1000.0 * float(np.sum(np.linalg.norm(np.diff(points, axis=0), axis=1)))
            scale = 0.3 * reach_mm / float(major) if major > 0 else 1.0
        return dict(arm_xy_mm=plane.project(points), width_mm=2.0 * scale * float(major),
                    height_mm=2.0 * scale * float(minor), angle_deg=float(angle),
                    masses_kg=np.asarray(pm.masses, float), plane_axes=plane.axes,
                    scale=float(scale), title=f"{arm.name} at q = {_q_text(q)}")

    @classmethod
    def from_arm(cls, arm, q, *, plane_axes=None, scale=None, region="task", ax=None,
                 figure=None):
        """Compute through the core (``ir.principal_masses``, ``arm.link_frames``) and plot.

        Parameters
        ----------
        arm : Arm
        q : array_like, shape (n,)
            One configuration [rad].
        plane_axes : array_like (2, 3), optional
            Drawing plane (orthonormal world rows). Default: the arm's task plane for a
            planar task, else world x (across) and z (up).
        scale : float, optional
            [mm sqrt(kg)]; default: the ellipse's longest semi-axis is 0.3 of the arm's
            reach at ``q``. Kept for later :meth:`update` calls so sizes compare.
        region : Rectangle, Box, PointSet, Task, "task" or None, default "task"
            Task region drawn (projected) and included in the view; "task": the design's
            own task region (none if the design has no task).
        ax : Axes, optional
        figure : Figure, optional
            An empty figure (e.g. off-screen) to lay the display out in, as a new figure.
        """
        plane = _plane_from(arm, plane_axes)
        if isinstance(region, str):
            if region != "task":
                raise ValueError(f"`region` must be a region, a Task, 'task' or None; got "
                                 f"{region!r}")
            region = arm.task
        outline, closed = _region_outline(region, plane)
        disp = cls(**cls._compute(arm, q, plane, scale), region_xy_mm=outline,
                   region_closed=closed)
        disp._arm = arm
        disp._plane = plane
        disp._reach_mm = float(np.sum(np.linalg.norm(np.diff(disp.arm_xy_mm, axis=0), axis=1)))
        return disp.plot(ax=ax, figure=figure)

    def _content_box(self):
        """(x0, x1, y0, y1) [mm] around the arm, the ellipse and the region, with a margin."""
        xy = np.asarray(self.arm_xy_mm, float)
        semi = 0.5 * max(self.width_mm, self.height_mm)
        parts = [xy, xy[-1] + semi * np.array([[-1.0, -1.0], [1.0, 1.0]])]
        if self.region_xy_mm is not None and len(self.region_xy_mm):
            parts.append(np.asarray(self.region_xy_mm, float))
        pts = np.vstack(parts)
        lo, hi = pts.min(axis=0), pts.max(axis=0)
        pad = 0.08 * float(max(hi - lo)) + 10.0
        return lo[0] - pad, hi[0] + pad, lo[1] - pad, hi[1] + pad

    def _fit_view(self, ax, widen_only=False):
        x0, x1, y0, y1 = self._content_box()
        if widen_only:
            (a0, a1), (b0, b1) = ax.get_xlim(), ax.get_ylim()
            if x0 >= a0 and x1 <= a1 and y0 >= b0 and y1 <= b1:
                return
            x0, x1, y0, y1 = min(x0, a0), max(x1, a1), min(y0, b0), max(y1, b1)
        ax.set_xlim(x0, x1)
        ax.set_ylim(y0, y1)

    def _text(self):
        masses = ", ".join("unbounded" if not np.isfinite(m) else f"{m:.3g}"
                           for m in self.masses_kg)
        return f"principal apparent masses: {masses} kg"

    def plot(self, ax=None, figure=None):
        """Draw the stored results; sets ``ellipse_``, ``arm_line_``, ``region_``, ``text_``,
        ``ax_``, ``figure_`` and returns self (``figure``: an empty figure to lay out in)."""
        from matplotlib.lines import Line2D
        from matplotlib.patches import Ellipse

        axes = np.asarray(self.plane_axes, float)
        with _style.plot_style():
            layout = _style.Layout(ax, width_in=6.0, height_in=6.0, equal=True, figure=figure)
            ax = layout.ax
            ax.grid(True, color=COLORS["grid"], linewidth=0.6, zorder=0)
            ax.set_axisbelow(True)
            xy = np.asarray(self.arm_xy_mm, float)
            self.region_ = None
            if self.region_xy_mm is not None and len(self.region_xy_mm):
                rxy = np.asarray(self.region_xy_mm, float)
                (self.region_,) = ax.plot(rxy[:, 0], rxy[:, 1], color=COLORS["muted"],
                                          linewidth=1.2, linestyle=(0, (4, 2)) if
                                          self.region_closed else "none",
                                          marker=None if self.region_closed else ".",
                                          zorder=3, label="task region (projected)")
            (self.arm_line_,) = ax.plot(xy[:, 0], xy[:, 1], color=COLORS["arm"], linewidth=3.0,
                                        marker="o", markersize=6, markerfacecolor=COLORS["joint"],
                                        markeredgecolor=COLORS["arm"], zorder=4,
                                        solid_capstyle="round", label="arm (projected)")
            self.ellipse_ = Ellipse(xy[-1], self.width_mm, self.height_mm, angle=self.angle_deg,
                                    facecolor=COLORS["light"], alpha=0.25,
                                    edgecolor=COLORS["light"], linewidth=1.8, zorder=5)
            ax.add_patch(self.ellipse_)
            self.text_ = ax.text(0.02, 0.02, self._text(), transform=ax.transAxes, fontsize=9,
                                 va="bottom", ha="left",
                                 bbox=dict(boxstyle="round,pad=0.3", facecolor="white",
                                           alpha=0.85, edgecolor=COLORS["grid"]), zorder=8)
            self._fit_view(ax)
            ax.set_aspect("equal", adjustable="box")
            ax.set_xlabel(axis_label(axes[0], "u"))
            ax.set_ylabel(axis_label(axes[1], "v"))
            if self.title:
                _style.set_title(ax, self.title)
            key = Line2D([], [], linestyle="none", marker="o", markersize=10,
                         markerfacecolor=COLORS["light"], markeredgecolor=COLORS["light"],
                         alpha=0.6, label=f"apparent-mass ellipse: semi-axis = {self.scale:.3g} "
                                          "mm / √(m / kg), short = heavy")
            layout.legend([self.arm_line_, key, self.region_], ncols=1)
            layout.finish()
        self.ax_, self.figure_ = ax, ax.figure
        return self

    def update(self, q):
        """Recompute at ``q`` (n,) [rad] through the core and change the artists in place."""
        if self._arm is None:
            raise ValueError("update() needs a display made with MassEllipseDisplay.from_arm")
        if not hasattr(self, "ellipse_"):
            raise ValueError("call plot() before update()")
        values = self._compute(self._arm, q, self._plane, self.scale)
        for name, value in values.items():
            setattr(self, name, value)
        xy = np.asarray(self.arm_xy_mm, float)
        self.arm_line_.set_data(xy[:, 0], xy[:, 1])
        self.ellipse_.set_center(xy[-1])
        self.ellipse_.set_width(self.width_mm)
        self.ellipse_.set_height(self.height_mm)
        self.ellipse_.set_angle(self.angle_deg)
        self.text_.set_text(self._text())
        self._fit_view(self.ax_, widen_only=True)
        _style.set_title(self.ax_, self.title)
        self.figure_.canvas.draw_idle()
        return self


class TorqueBarsDisplay:
    """Per-joint torque bars at rest: static (gravity) and worst-case torque against ratings.

    For each joint: the static torque |g_j(q)| and the worst torque |g_j| + a
    ||row_j(J_t^T Lambda)|| (the largest over all task directions of the required
    tool acceleration a, see :func:`inertia_review.torque_headroom`), with the peak
    rating (solid mark) and the continuous rating (dashed mark). Above each pair: the
    worst torque as a share of the peak rating and the static torque as a share of
    the continuous rating. The caution text is placed under the bars.

    Use :meth:`from_arm`; the constructor only stores results.

    Attributes
    ----------
    static_bars_, worst_bars_ : matplotlib.container.BarContainer
    peak_marks_, continuous_marks_ : matplotlib.collections.LineCollection
    labels_ : list of Text
    legend_ : Legend
        Under the bars (own figure) or right of the Axes (given Axes), clear of the labels.
    caution_ : Text
    ax_, figure_ : Axes, Figure
    """

    def __init__(self, *, joint_names, static_torque_Nm, worst_torque_Nm, utilisation,
                 static_utilisation, peak_torque_Nm, continuous_torque_Nm, accel_mps2,
                 caution=TORQUE_CAUTION, title=None):
        self.joint_names = joint_names
        self.static_torque_Nm = static_torque_Nm
        self.worst_torque_Nm = worst_torque_Nm
        self.utilisation = utilisation
        self.static_utilisation = static_utilisation
        self.peak_torque_Nm = peak_torque_Nm
        self.continuous_torque_Nm = continuous_torque_Nm
        self.accel_mps2 = accel_mps2
        self.caution = caution
        self.title = title
        self._arm = None

    def __repr__(self):
        return (f"TorqueBarsDisplay(title={self.title!r}, joints={list(self.joint_names)!r}, "
                f"accel_mps2={self.accel_mps2!r})")

    @staticmethod
    def _compute(arm, q, accel_mps2):
        q = _single_q(arm, q)
        head = _api.torque_headroom(arm, q, accel_mps2)
        return dict(static_torque_Nm=np.asarray(head.static_torque_Nm, float),
                    worst_torque_Nm=np.asarray(head.worst_torque_Nm, float),
                    utilisation=np.asarray(head.utilisation, float),
                    static_utilisation=np.asarray(head.static_utilisation, float),
                    title=(f"{arm.name}: joint torque at rest, tool acceleration "
                           f"{float(accel_mps2):g} m/s²\nq = {_q_text(q)}"))

    @classmethod
    def from_arm(cls, arm, q, accel_mps2=0.0, *, ax=None, figure=None):
        """Compute through the core (``ir.torque_headroom``) at ``q`` (n,) [rad] and plot.

        ``figure``: an empty figure (e.g. off-screen) to lay the display out in.

        Raises ValueError (from the core) when no joint has a torque rating.
        """
        values = cls._compute(arm, q, accel_mps2)
        disp = cls(joint_names=tuple(arm.joint_names), peak_torque_Nm=arm.peak_torque,
                   continuous_torque_Nm=arm.continuous_torque, accel_mps2=float(accel_mps2),
                   **values)
        disp._arm = arm
        return disp.plot(ax=ax, figure=figure)

    def _label_texts(self):
        out = []
        for util, sutil in zip(self.utilisation, self.static_utilisation):
            if not np.isfinite(util):
                out.append("not rated")
            else:
                cont = f"\nstatic {sutil:.0%} of cont." if np.isfinite(sutil) else ""
                out.append(f"{util:.0%} of peak{cont}")
        return out

    def _label_heights(self):
        tops = np.fmax(np.nan_to_num(self.worst_torque_Nm), np.nan_to_num(self.peak_torque_Nm))
        return tops

    def _ylim(self):
        values = np.concatenate([np.nan_to_num(np.asarray(a, float)) for a in
                                 (self.worst_torque_Nm, self.static_torque_Nm,
                                  self.peak_torque_Nm, self.continuous_torque_Nm)])
        return 1.3 * float(values.max()) if values.max() > 0 else 1.0

    def plot(self, ax=None, figure=None):
        """Draw the stored results; sets the artists (see class docs) and returns self.

        The legend never covers the per-joint labels: in a new (or given empty) figure it
        sits in the notes strip under the bars; in a given Axes, outside it on the right.
        """
        from matplotlib.lines import Line2D
        from matplotlib.patches import Patch

        n = len(self.joint_names)
        x = np.arange(n, dtype=float)
        with _style.plot_style():
            layout = _style.Layout(ax, width_in=6.4, height_in=4.6, figure=figure)
            ax = layout.ax
            ax.grid(True, axis="y", color=COLORS["grid"], linewidth=0.6)
            ax.set_axisbelow(True)
            self.static_bars_ = ax.bar(x - 0.19, np.nan_to_num(self.static_torque_Nm), width=0.36,
                                       color=COLORS["static"], label="static |gravity torque|",
                                       zorder=2)
            self.worst_bars_ = ax.bar(x + 0.19, np.nan_to_num(self.worst_torque_Nm), width=0.36,
                                      color=COLORS["worst"], label="worst torque with acceleration",
                                      zorder=2)
            peak = np.asarray(self.peak_torque_Nm, float)
            cont = np.asarray(self.continuous_torque_Nm, float)
            rated = np.isfinite(peak)
            self.peak_marks_ = ax.hlines(peak[rated], x[rated] - 0.45, x[rated] + 0.45,
                                         colors=COLORS["peak"], linewidths=2.2, zorder=3)
            crated = np.isfinite(cont)
            self.continuous_marks_ = ax.hlines(cont[crated], x[crated] - 0.45, x[crated] + 0.45,
                                               colors=COLORS["continuous"], linewidths=2.0,
                                               linestyles=(0, (4, 2)), zorder=3)
            self.labels_ = [ax.annotate(text, xy=(xi, top), xytext=(0, 4),
                                        textcoords="offset points", ha="center", va="bottom",
                                        fontsize=8.5, zorder=4)
                            for xi, top, text in zip(x, self._label_heights(),
                                                     self._label_texts())]
            ax.set_xticks(x, list(self.joint_names))
            ax.set_xlim(-0.6, n - 0.4)
            ax.set_ylim(0.0, self._ylim())
            ax.set_xlabel("joint")
            ax.set_ylabel("joint torque [N·m]")
            if self.title:
                _style.set_title(ax, self.title)
            handles = [Patch(color=COLORS["static"], label="static |gravity torque|"),
                       Patch(color=COLORS["worst"], label="worst torque incl. acceleration"),
                       Line2D([], [], color=COLORS["peak"], linewidth=2.2, label="peak rating"),
                       Line2D([], [], color=COLORS["continuous"], linewidth=2.0,
                              linestyle=(0, (4, 2)), label="continuous rating")]
            if layout.notes is not None:
                self.legend_ = layout.legend(handles, ncols=2)
            else:
                self.legend_ = ax.legend(handles=handles, loc="upper left",
                                         bbox_to_anchor=(1.02, 1.0), borderaxespad=0.0,
                                         framealpha=0.9)
            self.caution_ = layout.caution(self.caution)
            layout.finish()
        self.ax_, self.figure_ = ax, ax.figure
        return self

    def update(self, q):
        """Recompute at ``q`` (n,) [rad] through the core and change the bars in place."""
        if self._arm is None:
            raise ValueError("update() needs a display made with TorqueBarsDisplay.from_arm")
        if not hasattr(self, "static_bars_"):
            raise ValueError("call plot() before update()")
        for name, value in self._compute(self._arm, q, self.accel_mps2).items():
            setattr(self, name, value)
        for bar, h in zip(self.static_bars_, np.nan_to_num(self.static_torque_Nm)):
            bar.set_height(h)
        for bar, h in zip(self.worst_bars_, np.nan_to_num(self.worst_torque_Nm)):
            bar.set_height(h)
        for label, top, text in zip(self.labels_, self._label_heights(), self._label_texts()):
            label.xy = (label.xy[0], top)
            label.set_text(text)
        low, high = self.ax_.get_ylim()
        if self._ylim() > high:
            self.ax_.set_ylim(low, self._ylim())
        _style.set_title(self.ax_, self.title)
        self.figure_.canvas.draw_idle()
        return self
