"""Live map panel: one metric over the task region, updated in place (private)."""

import html

import ipywidgets as widgets
import numpy as np
import traitlets

from ..model._arm import Arm
from ..plots import _map_plots, _style
from ..plots._labels import variable_label
from ..plots._plane import grid_values, map_plane, solved_mask
from ..studies._maps import METRIC_ATTRS, metric_map
from ..studies._scores import design_scores
from ._render import new_figure, png_bytes, rgba_png

__all__ = ["MapPanel", "MAP_METRICS", "scores_html"]

#: metrics offered in the panel's list (scalar per point, or per joint via select)
MAP_METRICS = ("mass_ratio", "isotropy", "min_margin", "accel_capability", "manipulability",
               "mass_along_approach")

_SCORE_LABELS = (("reachable_fraction", "reachable", "{:.1%}"), ("gci", "GCI", "{:.3f}"),
                 ("isotropy_worst", "isotropy worst", "{:.3f}"),
                 ("mass_ratio_worst", "mass ratio worst", "{:.3f}"),
                 ("headroom_worst", "torque headroom worst", "{:+.3f}"),
                 ("headroom_worst_joint", "limiting joint", "{}"),
                 ("accel_capability_min", "accel. capability min [m/s^2]", "{:.2f}"),
                 ("moving_mass_kg", "moving mass [kg]", "{:.3f}"))


def _metric_name(metric):
    return METRIC_ATTRS[metric][1] if metric in METRIC_ATTRS else metric.replace("_", " ")


def scores_html(scores):
    """A small HTML readout of a design's scores (with the torque caution)."""
    cells = []
    for key, label, fmt in _SCORE_LABELS:
        value = scores.get(key)
        text = "n/a" if value is None or (isinstance(value, float) and np.isnan(value)) \
            else fmt.format(value)
        cells.append(f"<tr><td>{label}</td><td class='ir-score' data-score='{key}' "
                     f"style='text-align:right;padding-left:1em'><b>{html.escape(text)}</b></td></tr>")
    return ("<table class='ir-scores'>" + "".join(cells) + "</table>"
            "<div style='font-size:85%;color:#555;max-width:38em'>Torque headroom and acceleration "
            "are design-stage estimates from a rigid-body model, not a validation; the applicable "
            "standards, local regulations and licensed engineering practice decide.</div>")


class MapPanel(widgets.VBox):
    """A chosen metric over the task region for the current design, updated in place.

    Traits: ``arm`` (set it, e.g. from :class:`DesignControls`, to recompute), ``metric``,
    ``probe_index`` ((iv, iu) grid indices of the probed point, or None), ``scores``
    (read-only readout) and ``error``. The figure is made once; changes update the mesh,
    the reach boundary and the hatching, then re-render the image.
    """

    arm = traitlets.Instance(Arm, help="design shown")
    metric = traitlets.Unicode("mass_ratio", help="map variable shown")
    probe_index = traitlets.Any(None, help="(iv, iu) grid indices of the probed point")
    scores = traitlets.Dict(help="scores of the current map")
    error = traitlets.Unicode("", help="last computation error, '' when fine")

    def __init__(self, arm, region, *, metric="mass_ratio", map_options=None,
                 size_in=(6.4, 4.8), compute=None, metrics=None, readout=None, **kwargs):
        # compute(arm, region, **options) -> map Dataset; readout(ds) -> (scores dict, html)
        self._compute = compute            # None: metric_map (looked up at each call)
        self._readout = readout or (lambda ds: (lambda sc: (sc, scores_html(sc)))(design_scores(ds)))
        metrics = metrics or MAP_METRICS
        self._region = region
        self._map_options = dict(map_options or {})
        self.figure = new_figure(*size_in)
        self.ax = self.figure.add_subplot()
        self.image = widgets.Image(format="png", layout=widgets.Layout(width=f"{size_in[0]}in"))
        self.metric_choice = widgets.Dropdown(options=[(_metric_name(m), m) for m in metrics],
                                              value=metric, description="metric")
        self.readout = widgets.HTML()
        self.message = widgets.HTML()
        self.ds = None
        self._artists = None
        self._background = None
        self._warm_start = True
        super().__init__(children=[self.metric_choice, self.image, self.readout, self.message],
                         **kwargs)
        self.metric = metric
        self.arm = arm
        self._recompute()
        self.observe(self._on_arm_change, names="arm")
        self.observe(self._on_metric_change, names="metric")
        self.observe(self._on_probe_change, names="probe_index")
        widgets.link((self.metric_choice, "value"), (self, "metric"))

    # ------------------------------------------------------------------ reactions
    def _on_arm_change(self, change):
        self._recompute()

    def _on_metric_change(self, change):
        if self.ds is not None:
            self._redraw()

    def _on_probe_change(self, change):
        if self.ds is not None:
            self._redraw()

    def _recompute(self):
        options = dict(self._map_options)
        if self.ds is not None and self._warm_start:
            options.setdefault("initial_q", self.ds["q"].values)   # small change: warm start
        try:
            ds = (self._compute or metric_map)(self.arm, self._region, **options)
        except (ValueError, KeyError) as exc:
            self._show_error(exc)
            return
        if self.metric not in ds:
            self._show_error(KeyError(f"metric '{self.metric}' is not in this map"))
            return
        self.ds = ds
        self.error = ""
        self.message.value = ""
        self.scores, self.readout.value = self._readout(ds)
        self._redraw()

    def _show_error(self, exc):
        self.error = f"{type(exc).__name__}: {exc}"
        self.message.value = ("<div style='color:#b00020' class='ir-error'><b>Not updated (the "
                              "last valid map stays on screen):</b> " + html.escape(str(exc)) +
                              "</div>")

    # ------------------------------------------------------------------ drawing
    def _redraw(self):
        if self._artists is None or self._artists.label_metric != self.metric:
            self._draw_first()
        else:
            self._update_in_place()
        self.image.value = self._render()

    def _dynamic(self):
        art = self._artists
        return [a for a in (art.mesh, art.reach, art.singular, art.probe_line, art.legend)
                if a is not None]

    def _draw_first(self):
        """Full draw: axes, colour bar (its scale then stays fixed), legend; then keep the
        static background so that later changes redraw only the data artists (blitting)."""
        self.figure.clear()
        self.figure.set_layout_engine("constrained")
        self.ax = self.figure.add_subplot()
        artists = _map_plots.plot_metric_map(self.ds, self.metric, ax=self.ax, legend=True)
        artists.label_metric = self.metric
        artists.probe_line = None
        self._artists = artists
        self._frame_with_base()
        self._draw_probe()
        for artist in self._dynamic():
            artist.set_animated(True)
        canvas = self.figure.canvas
        canvas.draw()                                 # lays out; animated artists are skipped
        self.figure.set_layout_engine("none")         # keep that layout for the updates
        self._background = canvas.copy_from_bbox(self.figure.bbox)

    def _frame_with_base(self):
        """Fix the axes limits to the region plus the arm's base, so that the arm drawn at any
        probe later fits the kept background."""
        plane = map_plane(self.ds)
        origins, _ = self.arm.link_frames(np.zeros(self.arm.dof))
        base = plane.project(origins[:1])[0]
        x0, x1 = self.ax.get_xlim()
        y0, y1 = self.ax.get_ylim()
        pad = 0.05 * max(x1 - x0, y1 - y0)
        self.ax.set_xlim(min(x0, base[0] - pad), max(x1, base[0] + pad))
        self.ax.set_ylim(min(y0, base[1] - pad), max(y1, base[1] + pad))
        self.ax.set_autoscale_on(False)

    def _render(self):
        """PNG of the background plus the data artists drawn on top."""
        canvas = self.figure.canvas
        canvas.restore_region(self._background)
        for artist in self._dynamic():
            self.ax.draw_artist(artist)
        return rgba_png(canvas)

    def _update_in_place(self):
        ds, art = self.ds, self._artists
        plane = map_plane(ds)
        values, da = grid_values(ds, self.metric, None)
        label, factor = variable_label(da, ds=ds)
        ok = solved_mask(ds)
        shown = _map_plots._masked(values * factor, ok)
        art.mesh.set_array(shown)
        # the colour scale stays that of the first draw, so changes read against one scale
        with _style.plot_style():
            for old in (art.reach, art.singular):
                if old is not None:
                    old.remove()
            art.reach = _map_plots._reach_contour(self.ax, plane, ok)
            art.singular = _map_plots._singular_hatch(self.ax, plane, ds, ok)
        self._draw_probe()
        for artist in self._dynamic():
            artist.set_animated(True)

    def _draw_probe(self):
        art = self._artists
        if art.probe_line is not None:
            art.probe_line.remove()
            art.probe_line = None
        if self.probe_index is None:
            return
        iv, iu = self.probe_index
        ds = self.ds
        if ds["status"].values[iv, iu] != 0:
            return
        q = ds["q"].values[iv, iu]
        plane = map_plane(ds)
        with _style.plot_style():
            art.probe_line = _map_plots.draw_arm(self.ax, plane, _map_plots.arm_points(self.arm, q))
        art.probe_line.set_animated(True)

    # ------------------------------------------------------------------ probing
    def index_of(self, u_m, v_m):
        """Nearest grid indices (iv, iu) of region coordinates (u, v) [m]."""
        iu = int(np.argmin(np.abs(self.ds["u_m"].values - u_m)))
        iv = int(np.argmin(np.abs(self.ds["v_m"].values - v_m)))
        return iv, iu

    def index_at_pixel(self, x_px, y_px, width_px, height_px):
        """Grid indices under a click at (x, y) pixels of the displayed image (top-left origin)."""
        fig_w, fig_h = self.figure.canvas.get_width_height()
        x = x_px * fig_w / width_px
        y = fig_h - y_px * fig_h / height_px
        u_mm, v_mm = self.ax.transData.inverted().transform((x, y))
        return self.index_of(u_mm / 1000.0, v_mm / 1000.0)
