"""Contact-speed map panel (private); the cycle panel joins it when move cycles land."""

import html

import ipywidgets as widgets
import numpy as np

from .._cautions import CONTACT_CAUTION
from .._contact import contact_speed_map, load_body_regions
from ._map_panel import MapPanel

__all__ = ["ContactMapPanel"]

_CAUTION_HTML = (f"<div class='ir-caution' style='font-size:85%;color:#7a4b00;max-width:40em'>"
                 f"{html.escape(CONTACT_CAUTION)}</div>")


def _contact_readout(ds):
    ok = ds["status"].values == 0
    speed = ds["permissible_speed"].values[ok]
    scores = {"body_region": ds.attrs.get("body_region", ""),
              "speed_min_mps": float(speed.min()) if speed.size else np.nan,
              "speed_median_mps": float(np.median(speed)) if speed.size else np.nan}
    rows = (f"<tr><td>body region</td><td><b>{html.escape(str(ds.attrs.get('body_region_name', '')))}"
            f"</b></td></tr><tr><td>lowest permissible speed [m/s]</td><td class='ir-score' "
            f"data-score='speed_min_mps'><b>{scores['speed_min_mps']:.3f}</b></td></tr>"
            f"<tr><td>median [m/s]</td><td><b>{scores['speed_median_mps']:.3f}</b></td></tr>")
    return scores, f"<table class='ir-scores'>{rows}</table>{_CAUTION_HTML}"


class ContactMapPanel(MapPanel):
    """Permissible transient-contact speed over the task region for a chosen body region.

    The body region is chosen from the shipped (or a given) body-region table; the caution
    is shown under the map at all times.
    """

    def __init__(self, arm, region, *, body_region="hand", regions=None, direction=None,
                 **kwargs):
        self._regions = regions if regions is not None else load_body_regions()
        self._body = body_region
        self._direction = direction
        names = [k for k in self._regions]
        self.body_choice = widgets.Dropdown(options=names, value=body_region,
                                            description="body region")
        super().__init__(arm, region, metric="permissible_speed",
                         compute=self._compute_contact,
                         metrics=("permissible_speed", "effective_mass"),
                         readout=_contact_readout, **kwargs)
        self.children = (self.body_choice,) + tuple(self.children)
        self.body_choice.observe(self._on_body_change, names="value")

    def _compute_contact(self, arm, region, **options):
        options.pop("initial_q", None)
        return contact_speed_map(arm, region, self._body, direction=self._direction,
                                 regions=self._regions, **options)

    def _on_body_change(self, change):
        self._body = change["new"]
        self._artists = None            # new quantity range: redraw with a fresh colour scale
        self._recompute()
