"""Sensitivity panel: a tornado chart of one score, chosen from a dropdown (private)."""

import html

import ipywidgets as widgets
import traitlets

from ..plots import plot_tornado
from ..plots._labels import parameter_label, screen_units
from ..studies._scores import SCORE_COLUMNS
from ..studies._sensitivity import one_at_a_time
from ._render import new_figure, png_bytes

__all__ = ["SensitivityPanel"]

#: scores offered by default (numeric score columns)
SENSITIVITY_SCORES = tuple(c for c in SCORE_COLUMNS if c != "headroom_worst_joint")


class SensitivityPanel(widgets.VBox):
    """One-at-a-time sensitivity of a chosen score: the tornado chart and its table.

    The table is :func:`inertia_review.one_at_a_time` (each path alone at the ends of its
    range, the others at the design's values), the chart :func:`inertia_review.plots.
    plot_tornado`. Tables are kept per score, so going back to a score is instant.

    Traits: ``score`` (the score shown), ``table`` (its DataFrame, None after an error),
    ``error`` (why the score could not be shown, '' otherwise).

    Parameters
    ----------
    arm : Arm
        The design.
    vary : dict of {path: (low, high)}
        Parameter paths and ranges, in the path's own units (SI, degrees for ``*_deg``).
    region : Task or region, optional
        Where to score (default: the design's ``[task]``).
    scores : sequence of str, optional
        Scores in the dropdown (default: every numeric score column).
    score : str, default "gci"
    accel_mps2, posture, payload_kg
        As for :func:`inertia_review.one_at_a_time`.
    """

    score = traitlets.Unicode("gci", help="score of the tornado chart")
    table = traitlets.Any(None, help="one_at_a_time table of the score (None after an error)")
    error = traitlets.Unicode("", help="why the score could not be shown ('' when shown)")

    def __init__(self, arm, vary, region=None, *, scores=None, score="gci", accel_mps2=None,
                 posture="elbow_up", payload_kg=None, **kwargs):
        self.arm = arm
        self.vary = dict(vary)
        self._region = region
        self._options = {"accel_mps2": accel_mps2, "posture": posture, "payload_kg": payload_kg}
        scores = list(scores) if scores is not None else list(SENSITIVITY_SCORES)
        if score not in scores:
            raise ValueError(f"`score` = {score!r} is not among the offered scores "
                             f"({', '.join(scores)})")
        self._tables = {}
        self.artists = None
        self.score_choice = widgets.Dropdown(options=scores, value=score, description="score")
        self.image = widgets.Image(format="png", layout=widgets.Layout(width="6in"))
        self.table_html = widgets.HTML()
        self.message = widgets.HTML()
        super().__init__(children=[self.score_choice, self.image, self.table_html,
                                   self.message], **kwargs)
        self.score = score
        widgets.link((self.score_choice, "value"), (self, "score"))
        self.observe(self._on_score, names="score")
        self._on_score(None)

    def _compute(self, score):
        if score not in self._tables:
            self._tables[score] = one_at_a_time(self.arm, self.vary, score, self._region,
                                                **self._options)
        return self._tables[score]

    def _on_score(self, change):
        try:
            table = self._compute(self.score)
        except ValueError as exc:
            self.error = str(exc)
            self.table = None
            self.artists = None
            self.image.value = b""
            self.table_html.value = ""
            self.message.value = f"<div style='color:#b00020'>{html.escape(str(exc))}</div>"
            return
        self.error = ""
        self.message.value = ""
        fig = new_figure(7.2, 1.6 + 0.6 * len(table))
        self.artists = plot_tornado(table, ax=fig.add_subplot())
        self.image.value = png_bytes(fig)
        self.table_html.value = _table_html(table)
        self.table = table

    def snapshot_text(self):
        """Plain text of the shown table (for :func:`snapshot`)."""
        if self.table is None:
            return f"not computed: {self.error}"
        return (f"one-at-a-time sensitivity of {self.score} ({self.arm.name})\n"
                + self.table.round(4).to_string())


def _table_html(table):
    unit_text, scale = screen_units(table.attrs.get("units", ""))
    rows = []
    for path, row in table.iterrows():
        label, factor = parameter_label(path)
        unit = label.rsplit(" [", 1)[1][:-1]
        rows.append(f"<tr><th style='text-align:left'>{html.escape(label)}</th>"
                    f"<td>{row['low'] * factor:.4g} to {row['high'] * factor:.4g} "
                    f"{html.escape(unit)}</td>"
                    + "".join(f"<td style='text-align:right'>{row[c] * scale:.4g}</td>"
                              for c in ("score_low", "score_high", "swing")) + "</tr>")
    score = html.escape(f"{table.attrs.get('score', 'score')} [{unit_text}]")
    caution = table.attrs.get("caution", "")
    return ("<table class='ir-sensitivity'><tr><th>path</th><th>range</th>"
            f"<th>{score} at low</th><th>{score} at high</th><th>swing</th></tr>"
            + "".join(rows) + "</table>"
            + (f"<div style='font-size:85%;color:#555'>{html.escape(caution)}</div>"
               if caution else ""))
