"""Actuator-sizing and contact-speed panels: move cycles and permissible speeds (private)."""

import html

import ipywidgets as widgets
import numpy as np
import traitlets

from ..studies._body_regions import load_body_regions
from ..studies._cautions import CONTACT_CAUTION
from ..studies._contact_maps import contact_speed_map
from ._map_panel import MapPanel

__all__ = ["ContactMapPanel", "CyclePanel", "ContactBoard"]

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
            f"<tr><td>median [m/s]</td><td><b>{scores['speed_median_mps']:.3f}</b></td></tr>"
            f"<tr><td>governing route</td><td class='ir-route'><b>"
            f"{html.escape(str(ds.attrs.get('governing_route', '')))}</b> (body area "
            f"{html.escape(str(ds.attrs.get('body_area_name', '')))}, contact area "
            f"{ds.attrs.get('contact_area_cm2', float('nan')):g} cm²)</td></tr>")
    scores["governing_route"] = ds.attrs.get("governing_route", "")
    return scores, f"<table class='ir-scores'>{rows}</table>{_CAUTION_HTML}"


class ContactMapPanel(MapPanel):
    """Permissible transient-contact speed over the task region for a chosen body region.

    The body region is chosen from the shipped (or a given) body-region table; the contact
    area [cm^2] is required (the speed is the lower of the force and pressure routes, and the
    readout names the governing one); the caution is shown under the map at all times.
    """

    def __init__(self, arm, region, *, body_region="hand", contact_area_cm2=None, regions=None,
                 direction=None, **kwargs):
        from ..studies._contact_model import _contact_area

        self._area = _contact_area(contact_area_cm2)
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
        return contact_speed_map(arm, region, self._body, contact_area_cm2=self._area,
                                 direction=self._direction, regions=self._regions, **options)

    def _on_body_change(self, change):
        self._body = change["new"]
        self._artists = None            # new quantity range: redraw with a fresh colour scale
        self._recompute()


class CyclePanel(widgets.VBox):
    """Torques of a move cycle against the ratings, for one design or side by side for several.

    Traits: ``arms`` (list of Arm; 1 to 4), ``cycle_name``. For one design it shows the
    torque-time plot per joint and the utilisation bars; for several, the bars side by side
    (usable beside a :class:`ComparisonBoard`). The caution is always shown.
    """

    arms = traitlets.List(help="designs reviewed (1 to 4)")
    cycle_name = traitlets.Unicode("", help="name of the cycle (from the first design's file)")
    error = traitlets.Unicode("")

    def __init__(self, arms, *, cycle=None, sample_rate_hz=1000.0, **kwargs):
        from ..model._cycle_schema import design_cycles

        arms = [arms] if not isinstance(arms, (list, tuple)) else list(arms)
        self._cycles = {c.name: c for c in design_cycles(arms[0])}
        if cycle is not None and not isinstance(cycle, str):
            self._cycles[cycle.name] = cycle
            cycle = cycle.name
        if not self._cycles:
            raise ValueError(f"design '{arms[0].name}' has no [[cycles]]: pass `cycle`")
        self._rate = float(sample_rate_hz)
        self.cycle_choice = widgets.Dropdown(options=list(self._cycles), description="cycle")
        self.torque_image = widgets.Image(format="png", layout=widgets.Layout(width="6.5in"))
        self.bars_image = widgets.Image(format="png", layout=widgets.Layout(width="6.5in"))
        self.table = widgets.HTML()
        self.message = widgets.HTML()
        super().__init__(children=[self.cycle_choice, self.torque_image, self.bars_image,
                                   self.table, self.message], **kwargs)
        self.results = []
        self.cycle_name = cycle or next(iter(self._cycles))
        self.cycle_choice.value = self.cycle_name
        widgets.link((self.cycle_choice, "value"), (self, "cycle_name"))
        self.arms = arms
        self.observe(self._recompute, names=["arms", "cycle_name"])
        self._recompute(None)

    def follow(self, board):
        """Review the same designs as ``board`` (a ComparisonBoard), now and after changes."""
        return traitlets.dlink((board, "arms"), (self, "arms"))

    def _recompute(self, change):
        from ..plots import plot_cycle_torques, plot_cycle_utilisation
        from ..studies._cycle_review import cycle_torques
        from ._render import new_figure, png_bytes

        cycle = self._cycles[self.cycle_name]
        try:
            results = [cycle_torques(arm, cycle, sample_rate_hz=self._rate) for arm in self.arms]
        except (ValueError, KeyError) as exc:
            self.error = str(exc)
            self.message.value = (f"<div class='ir-error' style='color:#b00020'><b>Not updated "
                                  f"(the last valid result stays on screen):</b> "
                                  f"{html.escape(str(exc))}</div>")
            return
        self.error, self.message.value = "", ""
        self.results = results
        if len(results) == 1:
            n = len(results[0].joint_names)
            fig = new_figure(7.0, 1.9 * n + 0.8)
            axes = fig.subplots(n, 1, sharex=True, squeeze=False)[:, 0]
            plot_cycle_torques(results[0], axes=axes)
            self.torque_image.value = png_bytes(fig)
            self.torque_image.layout.display = None
        else:
            self.torque_image.layout.display = "none"
        if len(results) == 1:
            fig = new_figure(6.4, 4.6, layout=None)
            plot_cycle_utilisation(results[0], ax=fig.add_subplot())
        else:
            import textwrap
            fig = new_figure(3.6 * len(results) + 0.6, 4.8)
            for i, result in enumerate(results):
                plot_cycle_utilisation(result, ax=fig.add_subplot(1, len(results), i + 1),
                                       title=result.design_name, caution=False,
                                       legend=i == len(results) - 1)
            fig.suptitle(f"cycle '{self.cycle_name}' against the ratings")
            fig.text(0.01, 0.0, textwrap.fill(results[0].caution, 40 * len(results)),
                     fontsize=7, va="bottom")
            fig.get_layout_engine().set(rect=(0, 0.14, 1, 0.86))
        self.bars_image.value = png_bytes(fig)
        tables = "".join(f"<h4>{html.escape(r.design_name)}</h4>"
                         f"{r.table().round(3).to_html(classes='ir-cycle-table')}" for r in results)
        self.table.value = tables + (f"<div class='ir-caution' style='font-size:85%;color:#7a4b00;"
                                     f"max-width:40em'>{html.escape(results[0].caution)}</div>")


class ContactBoard(widgets.VBox):
    """Permissible contact speed of 2 to 4 alternatives side by side, on one colour scale.

    Traits: ``arms`` (list of Arm), ``body_region``. ``contact_area_cm2`` is required (see
    :class:`ContactMapPanel`). Use :meth:`follow` to keep ``arms`` in step with a
    :class:`ComparisonBoard`. The caution is always shown.
    """

    arms = traitlets.List(help="the alternatives (1 to 4 arms)")
    body_region = traitlets.Unicode("hand", help="key of the body-region table")
    error = traitlets.Unicode("")

    def __init__(self, arms, region, *, body_region="hand", contact_area_cm2=None, regions=None,
                 direction=None, **kwargs):
        from ..studies._contact_model import _contact_area

        self._area = _contact_area(contact_area_cm2)
        self._region = region
        self._regions = regions if regions is not None else load_body_regions()
        self._direction = direction
        self.body_choice = widgets.Dropdown(options=list(self._regions), value=body_region,
                                            description="body region")
        self.image = widgets.Image(format="png")
        self.table = widgets.HTML()
        self.message = widgets.HTML()
        self.maps = []
        super().__init__(children=[self.body_choice, self.image, self.table, self.message],
                         **kwargs)
        self.body_region = body_region
        widgets.link((self.body_choice, "value"), (self, "body_region"))
        self.arms = list(arms)
        self.observe(self._recompute, names=["arms", "body_region"])
        self._recompute(None)

    def follow(self, board):
        """Show the same designs as ``board`` (a ComparisonBoard), now and after changes."""
        return traitlets.dlink((board, "arms"), (self, "arms"))

    def _recompute(self, change):
        from ..plots import plot_small_multiples
        from ._render import new_figure, png_bytes

        try:
            maps = [contact_speed_map(arm, self._region, self.body_region,
                                      contact_area_cm2=self._area, direction=self._direction,
                                      regions=self._regions)
                    for arm in self.arms]
        except (ValueError, KeyError) as exc:
            self.error = str(exc)
            self.message.value = (f"<div class='ir-error' style='color:#b00020'>"
                                  f"{html.escape(str(exc))}</div>")
            return
        self.error, self.message.value = "", ""
        self.maps = maps
        fig = new_figure(3.6 * len(maps) + 1.0, 3.8)
        axes = [fig.add_subplot(1, len(maps), i + 1) for i in range(len(maps))]
        plot_small_multiples(maps, "permissible_speed", axes=axes)
        self.image.value = png_bytes(fig)
        rows = "".join(f"<tr><th style='text-align:left'>{html.escape(arm.name)}</th>"
                       f"<td style='text-align:right'>{_contact_readout(ds)[0]['speed_min_mps']:.3f}"
                       f"</td><td style='text-align:right'>"
                       f"{_contact_readout(ds)[0]['speed_median_mps']:.3f}</td></tr>"
                       for arm, ds in zip(self.arms, maps))
        route = (f"<div class='ir-route'>governing route: <b>"
                 f"{html.escape(str(maps[0].attrs.get('governing_route', '')))}</b> (body area "
                 f"{html.escape(str(maps[0].attrs.get('body_area_name', '')))}, contact area "
                 f"{self._area:g} cm²)</div>") if maps else ""
        self.table.value = ("<table class='ir-scores'><tr><th>design</th><th>lowest [m/s]</th>"
                            f"<th>median [m/s]</th></tr>{rows}</table>{route}{_CAUTION_HTML}")
