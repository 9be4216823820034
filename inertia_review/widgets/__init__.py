"""Review widgets (ipywidgets): state in traitlets, computation through the core.

DesignControls
    sliders bound to design parameters, reset to baseline, errors shown in place
MapPanel
    a chosen metric over the task region, updated in place, with a scores readout
PointProbe
    the arm's pose, apparent-mass ellipse beside the tool-stiffness ellipse, principal masses,
    first natural frequency, sag and torque bars at a point
ComparisonBoard
    2 to 4 alternatives on shared colour scales, scores and datasheet cards (best marked), a
    difference map
datasheet_card_html, datasheet_cards_html
    HTML cards of ``ir.datasheet`` results (with the stiffness caution)
SweepExplorer
    parameters and ranges, a run with a progress bar, the trade-off plot, send to board
ReviewApp, snapshot
    the quick-review layout (with the design's datasheet card); static images and text for
    saved notebooks
CyclePanel
    move-cycle torques against the ratings (one design, or several side by side)
ContactBoard
    permissible contact speed of 2 to 4 alternatives on one scale (follows a ComparisonBoard)
ContactMapPanel
    permissible transient-contact speed over the region for a body region (with cautions)
ProposalExplorer
    the Pareto set of a design search; a clicked or chosen proposal goes to a review app
    and to a comparison board next to the baseline
SensitivityPanel
    one-at-a-time sensitivity (tornado chart and table) of a score chosen from a dropdown

Layer rule: widgets may import every layer below them (``core``, ``model``, ``studies``,
``plots``) and the baseline tables of ``review``; they compute through those, never with
formulas of their own.
"""

from ._board import ComparisonBoard, scores_table_html
from ._controls import DesignControls, default_parameters
from ._datasheet_card import datasheet_card_html, datasheet_cards_html
from ._map_panel import MAP_METRICS, MapPanel, scores_html
from ._probe import PointProbe
from ._proposals import ProposalExplorer
from ._review import ReviewApp, snapshot
from ._safety_panels import ContactBoard, ContactMapPanel, CyclePanel
from ._sensitivity_panel import SensitivityPanel
from ._sweep_explorer import SweepExplorer

__all__ = ["DesignControls", "MapPanel", "PointProbe", "ComparisonBoard", "SweepExplorer",
           "ReviewApp", "snapshot", "ContactMapPanel", "ProposalExplorer", "SensitivityPanel",
           "CyclePanel", "ContactBoard", "default_parameters", "MAP_METRICS", "scores_html",
           "scores_table_html", "datasheet_card_html", "datasheet_cards_html"]
