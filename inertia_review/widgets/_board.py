"""Comparison board: alternatives side by side on shared colour scales (private)."""

import html

import ipywidgets as widgets
import numpy as np
import traitlets

from ..plots import plot_difference_map, plot_small_multiples
from ..studies._datasheet import datasheet
from ..studies._maps import METRIC_ATTRS, metric_map
from ..studies._scores import BETTER, SCORE_COLUMNS, scores_table
from ._datasheet_card import datasheet_cards_html
from ._map_panel import MAP_METRICS
from ._render import new_figure, png_bytes

__all__ = ["ComparisonBoard", "scores_table_html", "BETTER"]

def scores_table_html(table):
    """HTML of a scores DataFrame with the best value of each column marked (bold, ★)."""
    head = "".join(f"<th title='{html.escape(SCORE_COLUMNS[c][1])}'>{html.escape(c)} "
                   f"[{SCORE_COLUMNS[c][0] or '-'}]</th>" for c in table.columns)
    best = {}
    for column in table.columns:
        rule = BETTER.get(column)
        values = table[column]
        if rule is None or not np.issubdtype(values.dtype, np.number) or values.isna().all():
            continue
        best[column] = values.idxmax() if rule else values.idxmin()
    rows = []
    for name, row in table.iterrows():
        cells = []
        for column in table.columns:
            value = row[column]
            text = value if isinstance(value, str) else ("n/a" if np.isnan(value) else f"{value:.4g}")
            mark = best.get(column) == name
            cells.append(f"<td style='text-align:right'>{'<b>★ ' if mark else ''}"
                         f"{html.escape(str(text))}{'</b>' if mark else ''}</td>")
        rows.append(f"<tr><th style='text-align:left'>{html.escape(str(name))}</th>{''.join(cells)}</tr>")
    return ("<table class='ir-board-scores'><tr><th>design</th>" + head + "</tr>" + "".join(rows) +
            "</table><div style='font-size:85%;color:#555'>★ best value of the column. Torque "
            "and acceleration numbers are design-stage estimates, not a validation; standards, "
            "local regulations and licensed practice decide.</div>")


class ComparisonBoard(widgets.VBox):
    """Two to four alternatives on one region: small multiples on a shared colour scale,
    the scores table (best per column marked), one datasheet card per design side by side
    (best value marked, with the stiffness caution) and a difference map against the baseline.

    Traits: ``arms`` (list of Arm), ``metric``, ``baseline`` (index into ``arms``),
    ``sheets`` (the :class:`~inertia_review.Datasheet` of each design, ``ir.datasheet`` over
    its map).
    """

    arms = traitlets.List(help="the alternatives (2 to 4 arms)")
    metric = traitlets.Unicode("mass_ratio", help="map variable compared")
    baseline = traitlets.Int(0, help="index of the baseline design for the difference map")
    error = traitlets.Unicode("")
    sheets = traitlets.List(help="Datasheet of each design over the region, in board order")

    def __init__(self, arms, region, *, metric="mass_ratio", map_options=None, **kwargs):
        self._region = region
        self._map_options = dict(map_options or {})
        self.metric_choice = widgets.Dropdown(options=[(METRIC_ATTRS[m][1], m) for m in MAP_METRICS],
                                              value=metric, description="metric")
        self.baseline_choice = widgets.Dropdown(description="baseline")
        self.maps_image = widgets.Image(format="png")
        self.diff_image = widgets.Image(format="png", layout=widgets.Layout(width="5.5in"))
        self.table = widgets.HTML()
        self.cards = widgets.HTML()
        self.message = widgets.HTML()
        self.maps = []
        super().__init__(children=[widgets.HBox([self.metric_choice, self.baseline_choice]),
                                   self.maps_image, self.table, self.cards, self.diff_image,
                                   self.message],
                         **kwargs)
        self.metric = metric
        self.baseline_choice.options = [a.name for a in arms]
        self.baseline_choice.index = 0
        self.arms = list(arms)
        widgets.link((self.metric_choice, "value"), (self, "metric"))
        widgets.link((self.baseline_choice, "index"), (self, "baseline"))
        self.observe(self._on_arms, names="arms")
        self.observe(self._on_view, names=["metric", "baseline"])
        self._on_arms(None)

    @traitlets.validate("arms")
    def _check_arms(self, proposal):
        arms = proposal["value"]
        if not 1 <= len(arms) <= 4:
            raise traitlets.TraitError(f"a comparison board holds 1 to 4 designs; got {len(arms)}")
        return arms

    def add(self, arm):
        """Add (or, when four are shown, replace the last) alternative."""
        arms = list(self.arms)
        if len(arms) >= 4:
            arms[-1] = arm
        else:
            arms.append(arm)
        self.arms = arms

    def _on_arms(self, change):
        try:
            self.maps = [metric_map(arm, self._region, **self._map_options) for arm in self.arms]
        except (ValueError, KeyError) as exc:
            self.error = str(exc)
            self.message.value = f"<div style='color:#b00020'>{html.escape(str(exc))}</div>"
            return
        self.error = ""
        self.message.value = ""
        names = [a.name for a in self.arms]
        baseline = min(self.baseline, len(names) - 1)
        self.baseline_choice.options = list(names)
        self.baseline_choice.index = baseline
        self.scores = scores_table(self.maps)
        self.table.value = scores_table_html(self.scores)
        self.sheets = [datasheet(arm, ds) for arm, ds in zip(self.arms, self.maps)]
        self.cards.value = datasheet_cards_html(self.sheets)
        self._on_view(None)

    def _on_view(self, change):
        if not self.maps:
            return
        count = len(self.maps)
        fig = new_figure(3.6 * count + 1.0, 3.8)
        axes = [fig.add_subplot(1, count, i + 1) for i in range(count)]
        plot_small_multiples(self.maps, self.metric, axes=axes)
        self.maps_image.value = png_bytes(fig)
        if count >= 2:
            base = self.maps[self.baseline]
            other = self.maps[1 if self.baseline == 0 else 0]
            fig2 = new_figure(5.6, 4.4)
            plot_difference_map(other, base, self.metric, ax=fig2.add_subplot())
            self.diff_image.value = png_bytes(fig2)
