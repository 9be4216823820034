"""The quick-review app and static snapshots for saved notebooks (private)."""

import html
import textwrap

import ipywidgets as widgets
import numpy as np
import traitlets

from ..review._baselines import baseline_table
from ..studies._cautions import TORQUE_CAUTION
from ..studies._datasheet import datasheet
from ._controls import DesignControls
from ._datasheet_card import datasheet_card_html
from ._map_panel import MapPanel
from ._probe import PointProbe
from ._render import png_bytes

__all__ = ["ReviewApp", "snapshot"]


class ReviewApp(widgets.VBox):
    """Design controls, a live map, a point probe and a datasheet card for one design.

    ``app.controls.arm`` feeds ``app.panel.arm``; the probe follows the panel. Trait
    ``datasheet``: the :class:`~inertia_review.Datasheet` of the current map
    (``ir.datasheet(arm, panel.ds)``), shown as a card with the stiffness caution and
    recomputed whenever the design changes (the last valid card stays when a map fails).
    """

    datasheet = traitlets.Any(None, help="Datasheet of the current design over the region")

    def __init__(self, arm, region=None, *, parameters=None, metric="mass_ratio",
                 map_options=None, **kwargs):
        region = region if region is not None else arm.task
        if region is None:
            raise ValueError(f"design '{arm.name}' has no [task] region: pass `region`")
        self.controls = DesignControls(arm, parameters)
        self.panel = MapPanel(arm, region, metric=metric, map_options=map_options)
        self.probe = PointProbe(self.panel)
        self.card = widgets.HTML()
        widgets.dlink((self.controls, "arm"), (self.panel, "arm"))
        caution = widgets.HTML(f"<div style='font-size:85%;color:#555;max-width:60em'>"
                               f"{TORQUE_CAUTION}</div>")
        super().__init__(children=[widgets.HBox([self.controls, widgets.VBox([self.panel,
                                                                              self.card])]),
                                   self.probe, caution], **kwargs)
        self.panel.observe(self._on_design, names="arm")   # after the panel's own recompute
        self._on_design(None)

    def _on_design(self, change):
        if self.panel.error or self.panel.ds is None:    # the panel keeps its last valid map
            return
        try:
            sheet = datasheet(self.panel.arm, self.panel.ds)
        except ValueError as exc:
            self.card.value = f"<div style='color:#b00020'>{html.escape(str(exc))}</div>"
            return
        self.datasheet = sheet
        self.card.value = datasheet_card_html(sheet)


def _images_of(widget):
    if isinstance(widget, widgets.Image):
        return [widget.value] if widget.value else []
    out = []
    for child in getattr(widget, "children", ()):
        out.extend(_images_of(child))
    return out


def snapshot(widget, *, title=None):
    """Write the widget's current images and a text table into the cell's output.

    A saved notebook then shows the state without a running kernel (on GitHub, in an
    HTML export): PNG images, and for map panels and review apps the scores as text.
    """
    from IPython.display import HTML, Image, Markdown, display

    if title:
        display(Markdown(f"**{title}**"))
    for data in _images_of(widget):
        display(Image(data=data, format="png"))
    panel = getattr(widget, "panel", widget)
    ds = getattr(panel, "ds", None)
    from ..studies._cautions import CONTACT_CAUTION
    caution = CONTACT_CAUTION if hasattr(panel, "body_choice") else TORQUE_CAUTION
    if getattr(panel, "error", ""):
        print(f"not computed: {panel.error}")
    if ds is not None and "isotropy" in ds:
        print(baseline_table([ds]))
    elif ds is not None and "permissible_speed" in ds:
        ok = ds["status"].values == 0
        speed = ds["permissible_speed"].values[ok]
        print(f"permissible contact speed, {ds.attrs.get('body_region_name', '')}: lowest "
              f"{speed.min():.4f} m/s, median {float(np.median(speed)):.4f} m/s")
        caution = ds.attrs.get("caution", caution)
    board_maps = getattr(widget, "maps", None)
    board_table = getattr(getattr(widget, "table", None), "value", "")
    if board_maps and "isotropy" in board_maps[0] and board_table:
        # the board's own compact table (a row per design, best value marked), not the
        # long checked text: that belongs to the notebook's NBVAL_CHECK_OUTPUT cells
        display(HTML(board_table))
    elif board_maps and "isotropy" in board_maps[0]:
        print(baseline_table(board_maps))
    elif board_maps:
        for m in board_maps:
            ok = m["status"].values == 0
            speed = m["permissible_speed"].values[ok]
            print(f"{m.attrs.get('design', '')}: permissible contact speed, "
                  f"{m.attrs.get('body_region_name', '')}: lowest {speed.min():.4f} m/s, "
                  f"median {float(np.median(speed)):.4f} m/s")
    sheets = getattr(widget, "sheets", None) or ([widget.datasheet] if getattr(
        widget, "datasheet", None) is not None else [])
    if sheets:
        # the same cards the live widget shows (best value marked, caution included)
        from ._datasheet_card import datasheet_cards_html
        display(HTML(datasheet_cards_html(list(sheets))))
    results = getattr(widget, "results", None)
    for result in results if isinstance(results, (list, tuple)) else []:
        if hasattr(result, "text"):
            print(result.text())
    if hasattr(widget, "snapshot_text"):
        print(widget.snapshot_text())
    print(textwrap.fill(" ".join(str(caution).split()), width=100))   # no word cut at the edge
    return None
