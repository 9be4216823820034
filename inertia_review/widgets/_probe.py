"""Point probe: the arm's pose, its apparent-mass ellipse beside its tool-stiffness ellipse,
principal masses, first natural frequency, sag and torque bars."""

import html

import ipywidgets as widgets
import numpy as np
import traitlets

from ..core._api import principal_masses, torque_headroom
from ..plots import MassEllipseDisplay, TorqueBarsDisplay, plot_stiffness_ellipse
from ..studies._cautions import STIFFNESS_CAUTION
from ..studies._ik_status import SOLVED
from ._render import new_figure, png_bytes

__all__ = ["PointProbe"]


class PointProbe(widgets.VBox):
    """Inspect one point of a :class:`MapPanel`: click on the map or type u and v in mm.

    Traits: ``u_mm``, ``v_mm`` (the probed point in the region plane), ``q`` (its solved
    joint angles [rad], or None), ``stiffness`` (the
    :class:`~inertia_review.plots.StiffnessEllipseArtists` of the stiffness ellipse drawn
    beside the mass ellipse, or None for a rigid design), ``f1_hz`` and ``sag_mm`` (first
    natural frequency [Hz] and static tool sag [mm] at the point, or None). Computation goes
    through the core and the plots of :mod:`inertia_review.plots`; the stiffness caution is
    shown under the stiffness readout.
    """

    u_mm = traitlets.Float(0.0, help="probed point along the region's first axis [mm]")
    v_mm = traitlets.Float(0.0, help="probed point along the region's second axis [mm]")
    q = traitlets.Any(None, help="joint angles of the probed point [rad] (None if not solved)")
    stiffness = traitlets.Any(None, help="StiffnessEllipseArtists at the point (None if not drawn)")
    f1_hz = traitlets.Float(None, allow_none=True, help="first natural frequency [Hz] at the point")
    sag_mm = traitlets.Float(None, allow_none=True, help="static tool sag at the point [mm]")

    def __init__(self, panel, *, accel_mps2=None, **kwargs):
        self.panel = panel
        self._accel = (panel.ds.attrs.get("accel_mps2", 0.0) if accel_mps2 is None
                       else float(accel_mps2))
        self.u_box = widgets.BoundedFloatText(description="u [mm]", min=-1e6, max=1e6, step=5)
        self.v_box = widgets.BoundedFloatText(description="v [mm]", min=-1e6, max=1e6, step=5)
        self.text = widgets.HTML()
        self.ellipse_image = widgets.Image(format="png", layout=widgets.Layout(width="4.2in"))
        self.torque_image = widgets.Image(format="png", layout=widgets.Layout(width="4.2in"))
        self.stiffness_image = widgets.Image(format="png", layout=widgets.Layout(width="4.2in"))
        self.stiffness_text = widgets.HTML()
        self.caution = widgets.HTML(f"<div style='font-size:85%;color:#555;max-width:60em' "
                                    f"class='ir-caution'>{html.escape(STIFFNESS_CAUTION)}</div>")
        self._ellipse = self._bars = None
        self._scales = (None, None)      # stiffness and mass drawing scales, kept to compare
        self._fig_e = new_figure(6.0, 6.0, layout=None)   # the displays lay themselves out
        self._fig_t = new_figure(6.0, 4.2, layout=None)
        self._fig_s = new_figure(6.0, 6.0, layout=None)
        super().__init__(children=[widgets.HBox([self.u_box, self.v_box]), self.text,
                                   widgets.HBox([self.ellipse_image, self.stiffness_image]),
                                   self.stiffness_text, self.caution, self.torque_image],
                         **kwargs)
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
            self._clear_stiffness("")
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
        self._draw_stiffness(arm, q)

    def _clear_stiffness(self, message):
        self.stiffness = None
        self.f1_hz = self.sag_mm = None
        self.stiffness_image.value = b""
        self.stiffness_text.value = message

    def _draw_stiffness(self, arm, q):
        """The stiffness ellipse beside the mass ellipse, f1 and sag (all through the core)."""
        self._fig_s.clear()
        try:
            art = plot_stiffness_ellipse(arm, q, figure=self._fig_s, stiffness_scale=self._scales[0],
                                         mass_scale=self._scales[1])
        except ValueError as exc:                # a rigid design: stiffness is not defined
            self._clear_stiffness(f"<div class='ir-stiffness'>tool stiffness, natural frequency "
                                  f"and sag not shown: {html.escape(str(exc))}</div>")
            return
        self._scales = (art.stiffness_scale, art.mass_scale)
        self.stiffness = art
        self.f1_hz = art.f1_hz
        self.sag_mm = float(np.linalg.norm(art.sag_mm))
        k_soft, k_stiff = art.plane_stiffness_N_per_mm
        mode = ", ".join(f"{c:.2f}" for c in art.mode_direction)
        sag = ", ".join(f"{c:.4f}" for c in art.sag_mm)
        f1 = f"{art.f1_hz:.1f} Hz" if np.isfinite(art.f1_hz) else "n/a (all joints held)"
        self.stiffness_text.value = (
            f"<div class='ir-stiffness'>tool stiffness in the drawing plane: softest "
            f"{k_soft:.4g} N/mm at {art.softest_angle_deg:.0f} deg from the plane's first axis, "
            f"stiffest {k_stiff:.4g} N/mm; "
            f"first natural frequency <b>{f1}</b>, first-mode tool motion ({mode}) in world "
            f"x, y, z; static sag <b>{self.sag_mm:.4f} mm</b> ({sag}) mm</div>")
        self.stiffness_image.value = png_bytes(self._fig_s)
