"""Design controls: sliders bound to named design parameters (private)."""

import ipywidgets as widgets
import traitlets

from ..model._arm import Arm
from ..model._errors import DesignError
from ..model._paths import get_value, parameter_paths, path_choices

__all__ = ["DesignControls", "default_parameters", "screen_unit"]


def screen_unit(path):
    """(unit label, factor from SI to screen) for a parameter path: mm, deg, kg or -."""
    leaf = path.rsplit(".", 1)[-1]
    if leaf.startswith("rpy_deg") or leaf.startswith("limits_deg"):
        return "deg", 1.0
    if leaf.endswith("_m") or "xyz_m" in leaf or leaf.startswith("com_m"):
        return "mm", 1000.0
    if leaf.endswith("_kg") or leaf.startswith("mass_kg"):
        return "kg", 1.0
    if leaf.endswith("_Nm"):
        return "N m", 1.0
    if leaf.startswith("rotor_inertia"):
        return "kg m^2", 1.0
    return "-", 1.0


def default_parameters(arm):
    """The parameters designers move first: link lengths, link and motor masses, the mount
    angles, the payload and the gear ratios (those the design has)."""
    paths = parameter_paths(arm)
    keep = []
    for name in arm.joint_names:
        length = f"joints[{name}].link_length_m"
        if paths.get(length, 0.0) > 0.0:
            keep.append(length)
    for name in arm.joint_names:
        for key in (f"joints[{name}].link.mass_kg",
                    f"joints[{name}].link.point_masses[0].mass_kg"):
            if key in paths:
                keep.append(key)
    keep += ["mount.rpy_deg[0]", "mount.rpy_deg[1]", "tool.payload_kg"]
    keep += [f"joints[{n}].actuator.gear_ratio" for n in arm.joint_names
             if f"joints[{n}].actuator.gear_ratio" in paths]
    return keep


def _range(path, value):
    unit, _ = screen_unit(path)
    if unit == "deg":
        return value - 90.0, value + 90.0, 1.0
    if unit == "mm":
        return 0.5 * value, 1.5 * value, max(value * 0.01, 1e-4)
    if path.endswith("gear_ratio"):
        return max(1.0, 0.25 * value), 2.0 * value, max(value * 0.01, 0.1)
    upper = 2.0 * value if value > 0 else 1.0
    return 0.0, upper, max(upper / 200.0, 1e-4)


def _short_label(path):
    """A readable slider label with its unit, e.g. 'shoulder motor mass [kg]'."""
    import re
    words = re.sub(r"^joints\[([^\]]+)\]\.", r"\1 ", path)
    words = re.sub(r"link\.point_masses\[(\d+)\]\.mass_kg$",
                   lambda m: f"link point mass {m.group(1)}",
                   words)
    words = (words.replace("link.mass", "link mass").replace("link.", "").replace("actuator.", "").replace("mount.rpy_deg[0]", "mount roll")
             .replace("mount.rpy_deg[1]", "mount pitch").replace("mount.rpy_deg[2]", "mount yaw")
             .replace("tool.", "").replace(".", " ").replace("_", " "))
    unit, _ = screen_unit(path)
    for suffix in (" m", " kg", " deg"):
        if words.endswith(suffix):
            words = words[: -len(suffix)]
    return f"{words} [{unit}]"


class DesignControls(widgets.VBox):
    """Sliders for design parameters, in screen units, with a reset to the baseline.

    State lives in traits: ``values`` ({path: SI value}) and ``arm`` (the last *valid*
    design). A value that makes the design invalid leaves ``arm`` unchanged and shows the
    error in ``message`` (nothing typed is lost: the slider keeps the value).
    Sliders update on release (``continuous_update=False``), so dragging stays smooth.
    """

    arm = traitlets.Instance(Arm, help="the current valid design")
    values = traitlets.Dict(help="{parameter path: value in SI units}")
    error = traitlets.Unicode("", help="the last validation error, '' when the design is valid")

    def __init__(self, base, parameters=None, **kwargs):
        self._base = base
        self._paths = list(parameters) if parameters is not None else default_parameters(base)
        spec = base.to_dict()
        for path in self._paths:
            if path_choices(path) is not None:
                raise ValueError(f"parameter '{path}' holds a name (one of "
                                 f"{', '.join(path_choices(path))}), not a number: a slider "
                                 "needs a numeric path (compare names with ir.Sweep)")
        self._baseline = {p: float(get_value(spec, p)) for p in self._paths}
        self._sliders = {}
        for path in self._paths:
            unit, factor = screen_unit(path)
            value = self._baseline[path]
            low, high, step = _range(path, value)
            slider = widgets.FloatSlider(value=value * factor, min=low * factor,
                                         max=high * factor, step=step * factor,
                                         description=_short_label(path), continuous_update=False,
                                         readout_format=".3g", style={"description_width": "15em"},
                                         layout=widgets.Layout(width="34em"))
            slider.observe(self._on_slider_change, names="value")
            self._sliders[path] = slider
        self.reset_button = widgets.Button(description="reset to baseline", icon="undo")
        self.reset_button.on_click(lambda _: self.reset())
        self.message = widgets.HTML("")
        super().__init__(children=[*self._sliders.values(), self.reset_button, self.message],
                         **kwargs)
        self.values = dict(self._baseline)
        self.arm = base

    @property
    def sliders(self):
        """{path: FloatSlider}."""
        return dict(self._sliders)

    def set_value(self, path, value_si):
        """Set one parameter in SI units (as if its slider moved).

        A value outside the slider's range widens the range rather than being clamped, so
        the value is applied (or rejected with its error) exactly as given.
        """
        unit, factor = screen_unit(path)
        slider = self._sliders[path]
        screen = value_si * factor
        if screen < slider.min:
            slider.min = screen
        if screen > slider.max:
            slider.max = screen
        slider.value = screen

    def reset(self):
        """Every slider back to the baseline design."""
        with self.hold_trait_notifications():
            for path, value in self._baseline.items():
                _, factor = screen_unit(path)
                self._sliders[path].unobserve(self._on_slider_change, names="value")
                self._sliders[path].value = value * factor
                self._sliders[path].observe(self._on_slider_change, names="value")
        self._apply(dict(self._baseline))

    def _on_slider_change(self, change):
        values = dict(self.values)
        for path, slider in self._sliders.items():
            if slider is change["owner"]:
                _, factor = screen_unit(path)
                values[path] = change["new"] / factor
        self._apply(values)

    def _apply(self, values):
        self.values = values
        changed = {p: v for p, v in values.items() if v != self._baseline[p]}
        try:
            arm = self._base.with_values(changed) if changed else self._base
        except DesignError as exc:
            self.error = str(exc)
            self.message.value = ("<div style='color:#b00020' class='ir-error'><b>Not applied (the last valid "
                                  "design stays on screen):</b><pre>" + _escape(str(exc)) +
                                  "</pre></div>")
            return
        self.error = ""
        self.message.value = ""
        self.arm = arm


def _escape(text):
    return text.replace("&", "&amp;").replace("<", "&lt;").replace(">", "&gt;")
