"""Proposal explorer: the Pareto set of a design search, one proposal loaded for review (private)."""

import html

import ipywidgets as widgets
import numpy as np
import traitlets

from ..model._arm import Arm
from ..plots import plot_pareto
from ..plots._labels import parameter_label, score_label
from ..studies._cautions import TORQUE_CAUTION
from ._board import ComparisonBoard
from ._render import new_figure, png_bytes
from ._review import ReviewApp

__all__ = ["ProposalExplorer"]

#: scores always listed in the proposal table (besides objectives and constraints)
_SHOWN = ("reachable_fraction", "gci", "headroom_worst", "moving_mass_kg")


def _objective_names(results):
    return [o.partition(":")[2] for o in results.attrs.get("objectives", [])]


def _constraint_names(results):
    return [c.split()[0] for c in results.attrs.get("constraints", [])]


class ProposalExplorer(widgets.VBox):
    """Browse the Pareto set of a run :class:`~inertia_review.DesignSearch` and review a proposal.

    The Pareto plot is :func:`inertia_review.plots.plot_pareto`; click near a Pareto point
    (needs ``ipyevents``, as the map click of :class:`PointProbe`) or choose a row in the
    dropdown. The selected proposal (``search.design(evaluation)``) is shown as a table
    row of its parameter values and scores, loaded into a :class:`ReviewApp` and added to
    a :class:`ComparisonBoard` whose first design is the search's baseline.

    Traits: ``selected`` (``evaluation`` number of the selected proposal, -1 for none),
    ``x`` and ``y`` (plotted quantities: score variables or searched paths), ``proposal``
    (the selected Arm, or None).

    Parameters
    ----------
    search : DesignSearch
        A search after ``run()``.
    x, y : str, optional
        Plotted quantities (default: the first two objectives; for one objective, the
        first searched path and the objective).
    board : ComparisonBoard, optional
        Where proposals are added (default: a new board holding the baseline design).
        Each selection adds one proposal (the board keeps at most four designs: the
        last is replaced when full).
    parameters : list of str, optional
        Sliders of the review app (default: its defaults).
    metric : str
        Map metric of the review app and the board.
    """

    selected = traitlets.Int(-1, help="evaluation number of the selected proposal (-1: none)")
    x = traitlets.Unicode(help="quantity along x (score variable or searched path)")
    y = traitlets.Unicode(help="quantity along y (score variable or searched path)")
    proposal = traitlets.Any(None, help="the selected proposal as an Arm (None: none selected)")

    def __init__(self, search, x=None, y=None, *, board=None, parameters=None,
                 metric="mass_ratio", **kwargs):
        results = getattr(search, "results_", None)
        if results is None:
            raise ValueError("the design search has no results: call `search.run()` first")
        self.search = search
        self.results = results
        self._region = search.region if search.region is not None else search.arm.task
        self._map_options = {k: v for k, v in (("accel_mps2", search.accel_mps2),
                                               ("posture", search.posture),
                                               ("payload_kg", search.payload_kg))
                             if v is not None}
        self._parameters = parameters
        self._metric = metric
        paths = list(results.attrs.get("parameters", []))
        objectives = _objective_names(results)
        if x is None or y is None:
            default = objectives[:2] if len(objectives) >= 2 else [paths[0], objectives[0]]
            x = default[0] if x is None else x
            y = default[1] if y is None else y
        self.pareto_image = widgets.Image(format="png", layout=widgets.Layout(width="5.5in"))
        self.choice = widgets.Dropdown(description="proposal",
                                       layout=widgets.Layout(width="42em"))
        self.table = widgets.HTML()
        self.message = widgets.HTML()
        self.app_box = widgets.VBox()
        self.app = None
        self.board = board if board is not None else ComparisonBoard(
            [search.arm], self._region, metric=metric, map_options=self._map_options)
        self._figure = self._ax = self._artists = None
        super().__init__(children=[self.choice, self.pareto_image, self.table, self.message,
                                   self.app_box, self.board], **kwargs)
        self.x, self.y = x, y
        self._draw()
        self._fill_choices()
        widgets.link((self.choice, "value"), (self, "selected"))
        self.observe(self._on_selected, names="selected")
        self.observe(self._on_axes, names=["x", "y"])
        self._attach_click()

    # ------------------------------------------------------------------ state
    @property
    def proposals(self):
        """``evaluation`` numbers of the Pareto set, in the order of the plotted front."""
        return [int(i) for i in self._artists.indices]

    @traitlets.validate("selected")
    def _check_selected(self, proposal):
        value = int(proposal["value"])
        if value != -1 and value not in self.proposals:
            raise traitlets.TraitError(f"`selected` = {value} is not an evaluation of the Pareto "
                                       f"set ({', '.join(map(str, self.proposals))}); -1 for none")
        return value

    def _label(self, i):
        ds = self.results
        parts = []
        for name in list(ds.attrs.get("parameters", [])) + _objective_names(ds):
            if ds[name].dtype.kind in "UO":           # a name (e.g. a tube's material)
                parts.append(f"{parameter_label(name)[0]} {ds[name].values[i]}")
                continue
            value = float(ds[name].values[i])
            if name in ds.coords:
                label, factor = parameter_label(name)
                parts.append(f"{label.rsplit(' [', 1)[0]} {value * factor:.4g}")
            else:
                parts.append(f"{name} {value:.4g}")
        return f"#{i}: " + ", ".join(parts)

    def _fill_choices(self):
        self.choice.options = [("(none)", -1)] + [(self._label(i), i) for i in self.proposals]
        self.choice.value = self.selected

    # ------------------------------------------------------------------ drawing
    def _draw(self):
        fig = new_figure(6.4, 5.0)
        ax = fig.add_subplot()
        self._artists = plot_pareto(self.results, self.x, self.y, ax=ax)
        if self.selected != -1:
            k = self.proposals.index(self.selected)
            px, py = self._artists.pareto.get_offsets()[k]
            ax.scatter([px], [py], s=180, facecolors="none", edgecolors="black", linewidths=1.6,
                       zorder=6, label="selected proposal")
        self._figure, self._ax = fig, ax
        self.pareto_image.value = png_bytes(fig)     # draws: the transforms below are final

    def _on_axes(self, change):
        self._draw()
        self._fill_choices()

    # ------------------------------------------------------------------ clicks
    def _attach_click(self):
        try:
            from ipyevents import Event
        except ImportError:                      # clicking needs ipyevents; the dropdown works
            return
        self._events = Event(source=self.pareto_image, watched_events=["click"])
        self._events.on_dom_event(self._on_click)

    def _nearest(self, x_display, y_display):
        points = self._ax.transData.transform(np.asarray(self._artists.pareto.get_offsets(),
                                                         float))
        if not len(points):
            return -1
        d = np.hypot(points[:, 0] - x_display, points[:, 1] - y_display)
        return self.proposals[int(np.argmin(d))]

    def select_at(self, x, y):
        """Select the Pareto point nearest (on screen) to ``(x, y)`` in plotted units."""
        self.selected = self._nearest(*self._ax.transData.transform((float(x), float(y))))
        return self.selected

    def _on_click(self, event):
        fig_w, fig_h = self._figure.canvas.get_width_height()
        x = event["relativeX"] * fig_w / event["boundingRectWidth"]
        y = fig_h - event["relativeY"] * fig_h / event["boundingRectHeight"]
        self.selected = self._nearest(x, y)

    # ------------------------------------------------------------------ loading
    def _on_selected(self, change):
        self._draw()
        if self.selected == -1:
            self.proposal = None
            self.table.value = ""
            return
        arm = self.search.design(self.selected)
        spec = arm.to_dict()
        spec["name"] = f"{self.search.arm.name} proposal {self.selected}"
        arm = Arm.from_dict(spec)
        self.table.value = self._table_html(self.selected)
        old = self.app
        self.app = ReviewApp(arm, self._region, parameters=self._parameters,
                             metric=self._metric, map_options=self._map_options)
        self.app_box.children = [self.app]
        if old is not None:
            _close_tree(old)
        if arm.name not in [a.name for a in self.board.arms]:
            self.board.add(arm)
        self.message.value = (f"<div style='color:#b00020'>{html.escape(self.board.error)}</div>"
                              if self.board.error else "")
        self.proposal = arm

    def _columns(self):
        ds = self.results
        names = _objective_names(ds) + _constraint_names(ds) + list(_SHOWN)
        out = []
        for name in names:
            if name not in out and name in ds.data_vars and ds[name].dtype.kind == "f":
                out.append(name)
        return out

    def _rows(self, i):
        """[(label, value text)] of evaluation ``i``: parameters (screen units), then scores."""
        ds = self.results
        rows = []
        for path in ds.attrs.get("parameters", []):
            label, factor = parameter_label(path)
            value = ds[path].values[i]
            rows.append((label, str(value) if ds[path].dtype.kind in "UO"
                         else f"{float(value) * factor:.6g}"))
        for name in self._columns():
            rows.append((score_label(ds[name], name), f"{float(ds[name].values[i]):.4g}"))
        return rows

    def _table_html(self, i):
        head = "".join(f"<th>{html.escape(label)}</th>" for label, _ in self._rows(i))
        cells = "".join(f"<td style='text-align:right'>{html.escape(v)}</td>"
                        for _, v in self._rows(i))
        return (f"<table class='ir-proposal'><tr><th>proposal</th>{head}</tr><tr><th>"
                f"#{i}</th>{cells}</tr></table><div style='font-size:85%;color:#555'>"
                f"{html.escape(TORQUE_CAUTION)}</div>")

    def snapshot_text(self):
        """Plain text of the selected proposal's row (for :func:`snapshot`)."""
        if self.selected == -1:
            return "no proposal selected"
        rows = self._rows(self.selected)
        width = max(len(label) for label, _ in rows)
        return "\n".join([f"proposal #{self.selected} of {self.results.attrs.get('design', '')}"]
                         + [f"  {label:<{width}}  {value}" for label, value in rows])


def _close_tree(widget):
    for child in getattr(widget, "children", ()):
        _close_tree(child)
    widget.close()

