"""Screen labels and units: SI inside, mm / deg / kg on screen (private)."""

import re

import numpy as np

__all__ = ["screen_units", "variable_label", "axis_label", "parameter_label", "score_label"]

# SI units attribute -> (screen unit, factor from SI to screen)
_SCREEN = {
    "1": ("-", 1.0),
    "": ("-", 1.0),
    "m": ("mm", 1000.0),
    "rad": ("deg", 180.0 / np.pi),
    "kg": ("kg", 1.0),
    "m s^-2": ("m/s²", 1.0),
    "m s^-1": ("m/s", 1.0),
    "s": ("s", 1.0),
    "rad s^-1": ("deg/s", 180.0 / np.pi),
    "N m": ("N·m", 1.0),
    "kg m^2": ("kg·m²", 1.0),
    "m^2": ("m²", 1.0),
    "m^3": ("m³", 1.0),
    "Hz": ("Hz", 1.0),
    "N m^-1": ("N/mm", 1.0e-3),          # tool stiffness: N/mm on screen (common practice)
}
_SUPERSCRIPT = {"2": "²", "3": "³"}


def screen_units(units, *, k=None):
    """(screen unit text, factor) for an SI ``units`` attribute.

    ``"m^k"`` (manipulability: m^k per rad^k) is written with the task dimension ``k``.
    """
    units = "" if units is None else str(units)
    if units == "m^k":
        if k in (2, 3):
            sup = _SUPERSCRIPT[str(k)]
            return f"m{sup}/rad{sup}", 1.0
        return "m^k/rad^k", 1.0
    return _SCREEN.get(units, (units, 1.0))


def _task_dim(ds):
    axes = ds.attrs.get("task_axes") if ds is not None else None
    return len(axes) // 3 if axes else None


def variable_label(da, *, ds=None, selection=None, prefix=""):
    """``"long name, selection [unit]"`` and the SI-to-screen factor of a map variable."""
    unit, factor = screen_units(da.attrs.get("units"), k=_task_dim(ds))
    name = da.attrs.get("long_name", da.name or "value")
    if selection:
        name = f"{name}, " + ", ".join(f"{v}" if isinstance(v, str) else f"{k} {v}"
                                       for k, v in selection.items())
    return f"{prefix}{name} [{unit}]", factor


_WORLD = {(1, 0, 0): "x", (0, 1, 0): "y", (0, 0, 1): "height z"}


def axis_label(axis_vector, fallback):
    """Axis label for a region axis given as a world unit vector, in mm.

    World-aligned axes read ``"x [mm]"``, ``"height z [mm]"`` (``"-x [mm]"`` when reversed);
    other axes read e.g. ``"u [mm] along (0.71, 0.71, 0.00)"``. The plotted coordinate is
    the world position projected on the axis.
    """
    a = np.asarray(axis_vector, float)
    rounded = np.round(a, 9)
    for vec, name in _WORLD.items():
        if np.array_equal(np.abs(rounded), vec):
            sign = "-" if float(np.dot(a, vec)) < 0 else ""
            return f"{sign}{name} [mm]"
    shown = np.round(a, 2) + 0.0                     # no "-0.00"
    return f"{fallback} [mm] along ({shown[0]:.2f}, {shown[1]:.2f}, {shown[2]:.2f})"


_RPY = ("roll", "pitch", "yaw")
_SUFFIX_UNITS = (
    ("_kgm2", "kg·m²", 1.0),
    ("_Nm", "N·m", 1.0),
    ("_mps2", "m/s²", 1.0),
    ("_kg", "kg", 1.0),
    ("_deg", "deg", 1.0),
    ("_m", "mm", 1000.0),
)
_DERIVED = {
    "derived.link_ratio": ("link ratio (distal / proximal)", "-", 1.0),
    "derived.reach_m": ("reach of the last two links", "mm", 1000.0),
}


def _path_words(head):
    """Readable words for the head of a parameter path: joints[elbow].link -> elbow link."""
    words = []
    for part in head.split(".") if head else []:
        m = re.fullmatch(r"([A-Za-z_]+)\[([^\]]+)\]", part)
        if m and m.group(1) == "joints":
            key = m.group(2)
            words.append(f"joints[{key}]" if re.fullmatch(r"-?\d+", key) else key)
        elif m and m.group(1) == "point_masses":
            words.append(f"point mass {m.group(2)}")
        elif part == "actuator":
            continue
        else:
            words.append(part.replace("_", " "))
    return words


def parameter_label(path):
    """(label, factor) for a sweep parameter path, e.g. ``mount.rpy_deg[1]`` -> mount pitch [deg].

    ``factor`` converts the path's SI value to the screen unit (m -> mm).
    """
    if path in _DERIVED:
        name, unit, factor = _DERIVED[path]
        return f"{name} [{unit}]", factor
    head, _, last = path.rpartition(".")
    index = None
    m = re.fullmatch(r"(.+)\[(\d+)\]", last)
    if m:
        last, index = m.group(1), int(m.group(2))
    unit, factor = "-", 1.0
    for suffix, u, f in _SUFFIX_UNITS:
        if last.endswith(suffix):
            last, unit, factor = last[: -len(suffix)], u, f
            break
    if last == "rpy" and index is not None and index < 3:
        last, index = _RPY[index], None
    elif last == "xyz" and index is not None and index < 3:
        last, index = "xyz"[index], None
    elif last == "com" and index is not None and index < 3:
        last, index = f"centre of mass {'xyz'[index]}", None
    elif last == "along":
        last = "position (fraction of link)"
    words = _path_words(head)
    name = last.replace("_", " ")
    if index is not None:
        name = f"{name}[{index}]"
    if not (name == "mass" and words and words[-1].startswith("point mass")):
        words.append(name)
    if last == "material" and index is None:         # a name (a discrete choice): no unit
        return " ".join(words), factor
    return " ".join(words) + f" [{unit}]", factor


_SCORE_NAMES = {
    "reachable_fraction": "reachable share of the region",
    "gci": "global conditioning index (GCI)",
    "isotropy_worst": "worst isotropy index",
    "isotropy_p5": "isotropy index, 5th percentile",
    "mass_ratio_worst": "worst min/max apparent mass ratio",
    "mass_ratio_p5": "min/max apparent mass ratio, 5th percentile",
    "headroom_worst": "worst torque headroom",
    "headroom_positive_fraction": "share of points with torque headroom > 0",
    "accel_capability_min": "lowest acceleration capability",
    "moving_mass_kg": "moving mass",
}


def score_label(da, name):
    """Screen label of a sweep score variable."""
    unit, _ = screen_units(da.attrs.get("units", ""))
    return f"{_SCORE_NAMES.get(name, da.attrs.get('long_name', name))} [{unit}]"
