"""Point probe: the arm's pose, its apparent-mass ellipse, principal masses and torque bars."""

import html

import ipywidgets as widgets
import numpy as np
import traitlets

from ..core._api import principal_masses, torque_headroom
from ..plots import MassEllipseDisplay, TorqueBarsDisplay
from ..studies._ik_status import SOLVED
from ._render import new_figure, png_bytes

__all__ = ["PointProbe"]


class PointProbe(widgets.VBox):
    """Inspect one point of a :class:`MapPanel`: click on the map or type u and v in mm.

    Traits: ``u_mm``, ``v_mm`` (the probed point in the region plane), ``q`` (its solved
    joint angles [rad], or None). Computation goes through the core and the Display
    objects of :mod:`inertia_review.plots`.
    """

    u_mm = traitlets.Float(0.0, help="probed point along the region's first axis [mm]")
    v_mm = traitlets.Float(0.0, help="probed point along the region's second axis [mm]")
    q = traitlets.Any(None, help="joint angles of the probed point [rad] (None if not solved)")

    def __init__(self, panel, *, accel_mps2=None, **kwargs):
        self.panel = panel
        self._accel = (panel.ds.attrs.get("accel_mps2", 0.0) if accel_mps2 is None
                       else float(accel_mps2))
        self.u_box = widgets.BoundedFloatText(description="u [mm]", min=-1e6, max=1e6, step=5)
        self.v_box = widgets.BoundedFloatText(description="v [mm]", min=-1e6, max=1e6, step=5)
        self.text = widgets.HTML()
        self.ellipse_image = widgets.Image(format="png", layout=widgets.Layout(width="4.2in"))
        self.torque_image = widgets.Image(format="png", layout=widgets.Layout(width="4.2in"))
        self._ellipse = self._bars = None
        self._fig_e = new_figure(6.0, 6.0, layout=None)   # the displays lay themselves out
        self._fig_t = new_figure(6.0, 4.2, layout=None)
        super().__init__(children=[widgets.HBox([self.u_box, self.v_box]), self.text,
                                   widgets.HBox([self.ellipse_image, self.torque_image])], **kwargs)
        widgets.link((self.u_box, "value"), (self, "u_mm"))
        widgets.link((self.v_box, "value"), (self, "v_mm"))
        self.observe(self._on_point_change, names=["u_mm", "v_mm"])
        panel.observe(self._on_panel_change, names=["arm", "probe_index"])
        self._attach_click()
        ds = panel.ds
        self.u_mm = float(ds["u_m"].values[len(ds["u_m"]) // 2] * 1000.0)
        self.v_mm = float(ds["v_m"].values[len(ds["v_m"]) // 2] * 1000.0)
        self._on_point_change(None)

    def _attach_click(self):
        try:
            from ipyevents import Event
        except ImportError:                      # clicking needs ipyevents; typing still works
            return
        self._events = Event(source=self.panel.image, watched_events=["click"])
        self._events.on_dom_event(self._on_click)

    def _on_click(self, event):
        iv, iu = self.panel.index_at_pixel(event["relativeX"], event["relativeY"],
                                           event["boundingRectWidth"], event["boundingRectHeight"])
        ds = self.panel.ds
        with self.hold_trait_notifications():
            self.u_mm = float(ds["u_m"].values[iu] * 1000.0)
            self.v_mm = float(ds["v_m"].values[iv] * 1000.0)

    def _on_point_change(self, change):
        self.panel.probe_index = self.panel.index_of(self.u_mm / 1000.0, self.v_mm / 1000.0)

    def _on_panel_change(self, change):
        self._refresh()

    def _refresh(self):
        ds, arm = self.panel.ds, self.panel.arm
        if ds is None or self.panel.probe_index is None:
            return
        iv, iu = self.panel.probe_index
        status = int(ds["status"].values[iv, iu])
        if status not in SOLVED:                      # 'ok' and 'branch_seam' are solved
            meaning = ds["status"].attrs["flag_meanings"].split()[status]
            self.q = None
            self.text.value = (f"<b>point ({ds['u_m'].values[iu] * 1000:.0f}, "
                               f"{ds['v_m'].values[iv] * 1000:.0f}) mm</b>: not solved "
                               f"({html.escape(meaning.replace('_', ' '))})")
            return
        q = ds["q"].values[iv, iu]
        self.q = q
        masses = principal_masses(arm, q).masses
        mass_text = ", ".join("unbounded" if not np.isfinite(m) else f"{m:.3g}" for m in masses)
        angles = ", ".join(f"{np.rad2deg(a):.1f}" for a in q)
        self.text.value = (f"<b>point ({ds['u_m'].values[iu] * 1000:.0f}, "
                           f"{ds['v_m'].values[iv] * 1000:.0f}) mm</b>: joint angles [{angles}] "
                           f"deg; principal apparent masses {mass_text} kg")
        if self._ellipse is None:
            self._ellipse = MassEllipseDisplay.from_arm(arm, q, figure=self._fig_e,
                                                        region=self.panel._region or "task")
        else:
            self._ellipse._arm = arm
            self._ellipse.update(q)
        rated = np.any(np.isfinite(arm.peak_torque))
        if rated:
            if self._bars is None:
                self._bars = TorqueBarsDisplay.from_arm(arm, q, self._accel,
                                                        figure=self._fig_t)
            else:
                self._bars._arm = arm
                self._bars.update(q)
            self.torque_image.value = png_bytes(self._fig_t)
            self.headroom = torque_headroom(arm, q, self._accel)
        self.ellipse_image.value = png_bytes(self._fig_e)
