"""Design schema: validate a design mapping into its normalised full form (private).

The format is not the model: this module turns the TOML-shaped mapping of
arm-model.md into a normalised dict of plain floats and lists (the form that
``Arm.to_dict`` returns and ``save_design`` writes), collecting every problem
with its field path. :mod:`._params` turns the normalised form into arrays.
"""

import numpy as np

from ._errors import DesignError
from ._materials import MATERIALS
from ._rotation import inertia_tensor
from ._validate import (
    Problems,
    check_keys,
    get_list,
    get_number,
    get_string,
    get_table,
    get_vector,
    get_vector_item,
    join,
)

__all__ = ["normalise_design", "SUPPORTED_FORMATS", "STANDARD_GRAVITY"]

SUPPORTED_FORMATS = (1,)

#: Standard acceleration of gravity [m/s^2], exact by definition (3rd CGPM 1901; ISO 80000-3).
STANDARD_GRAVITY = 9.80665

TOP_KEYS = ("name", "format", "mount", "joints", "tool", "task", "cycles")
MOUNT_KEYS = ("xyz_m", "rpy_deg", "gravity_mps2")
JOINT_KEYS = ("name", "xyz_m", "rpy_deg", "axis", "limits_deg", "link", "actuator")
LINK_KEYS = ("mass_kg", "com_m", "inertia_kgm2", "point_masses", "tube")
TUBE_KEYS = ("length_m", "outer_diameter_m", "wall_m", "material", "density_kgm3")
POINT_MASS_KEYS = ("mass_kg", "xyz_m")
ACTUATOR_KEYS = ("peak_torque_Nm", "continuous_torque_Nm", "gear_ratio", "rotor_inertia_kgm2",
                 "rated_speed_rpm")
TOOL_KEYS = ("xyz_m", "payload_kg", "payload_inertia_kgm2")
TASK_KEYS = ("axes", "region", "accel_mps2", "payload_kg", "approach")

# --- stiffness keys (joint springs and link beams; see the stiffness schema block below) ----------
ACTUATOR_STIFFNESS_KEYS = ("stiffness_Nm_per_rad",)
LINK_STIFFNESS_KEYS = ("bending_stiffness_Nm2", "torsional_stiffness_Nm2")
ACTUATOR_KEYS = ACTUATOR_KEYS + ACTUATOR_STIFFNESS_KEYS
LINK_KEYS = LINK_KEYS + LINK_STIFFNESS_KEYS

_ZERO3 = (0.0, 0.0, 0.0)
_ZERO6 = (0.0,) * 6
_REL_TOL = 1e-9


def _check_inertia(problems, entries, field):
    """Symmetric PSD with principal moments meeting the triangle inequality (rel. tol 1e-9)."""
    moments = np.linalg.eigvalsh(inertia_tensor(entries))
    scale = max(float(np.max(np.abs(moments))), 1e-300)
    if moments[0] < -_REL_TOL * scale:
        problems.add(field, "inertia tensor must be positive semi-definite; principal moments "
                            f"are {', '.join(f'{m:.6g}' for m in moments)} kg m^2")
        return False
    a, b, c = moments
    if c > a + b + _REL_TOL * scale:
        problems.add(field, "principal moments must meet the triangle inequality (each at most the "
                            f"sum of the other two); got {a:.6g}, {b:.6g}, {c:.6g} kg m^2")
        return False
    return True


def _normalise_tube(problems, tube, path):
    check_keys(problems, tube, TUBE_KEYS, path)
    out = {}
    out["length_m"] = get_number(problems, tube, "length_m", path, low=0.0, low_open=True)
    out["outer_diameter_m"] = get_number(problems, tube, "outer_diameter_m", path, low=0.0,
                                         low_open=True)
    out["wall_m"] = get_number(problems, tube, "wall_m", path, low=0.0, low_open=True)
    if out["outer_diameter_m"] is not None and out["wall_m"] is not None \
            and out["wall_m"] > out["outer_diameter_m"] / 2.0:
        problems.add(join(path, "wall_m"), "must be at most half of outer_diameter_m (a solid bar); "
                                           f"got {out['wall_m']:g} with diameter "
                                           f"{out['outer_diameter_m']:g}")
    has_material, has_density = "material" in tube, "density_kgm3" in tube
    if has_material and has_density:
        problems.add(join(path, "density_kgm3"), "give either material or density_kgm3, not both")
    elif has_material:
        name = get_string(problems, tube, "material", path)
        if name is not None and name not in MATERIALS:
            import difflib
            close = difflib.get_close_matches(name, list(MATERIALS), n=1, cutoff=0.5)
            hint = f"did you mean '{close[0]}'?" if close else f"known: {', '.join(MATERIALS)}"
            problems.add(join(path, "material"), f"unknown material '{name}'; {hint}")
        out["material"] = name
    elif has_density:
        out["density_kgm3"] = get_number(problems, tube, "density_kgm3", path, low=0.0, low_open=True)
    else:
        problems.add(join(path, "material"), "required key is missing (or give density_kgm3)")
    return out


def _normalise_link(problems, link, path):
    check_keys(problems, link, LINK_KEYS, path)
    out = {}
    if "tube" in link:
        for key in ("mass_kg", "com_m", "inertia_kgm2"):
            if key in link:
                problems.add(join(path, key), "give either a tube or mass_kg/com_m/inertia_kgm2, not both")
        tube = get_table(problems, link, "tube", path)
        if tube is not None:
            out["tube"] = _normalise_tube(problems, tube, join(path, "tube"))
    else:
        out["mass_kg"] = get_number(problems, link, "mass_kg", path, low=0.0)
        out["com_m"] = list_or_none(get_vector(problems, link, "com_m", path, 3))
        inertia = get_vector(problems, link, "inertia_kgm2", path, 6)
        if inertia is not None:
            _check_inertia(problems, inertia, join(path, "inertia_kgm2"))
        out["inertia_kgm2"] = list_or_none(inertia)
    masses = get_list(problems, link, "point_masses", path)
    out["point_masses"] = []
    for i, pm in enumerate(masses or []):
        pm_path = join(join(path, "point_masses"), i)
        check_keys(problems, pm, POINT_MASS_KEYS, pm_path)
        out["point_masses"].append({
            "mass_kg": get_number(problems, pm, "mass_kg", pm_path, low=0.0),
            "xyz_m": list_or_none(get_vector(problems, pm, "xyz_m", pm_path, 3)),
        })
    _normalise_link_stiffness(problems, link, path, out)
    return out


def _normalise_actuator(problems, act, path):
    check_keys(problems, act, ACTUATOR_KEYS, path)
    out = {}
    for key in ("peak_torque_Nm", "continuous_torque_Nm", "rated_speed_rpm"):
        if key in act:
            out[key] = get_number(problems, act, key, path, low=0.0, low_open=True)
    out["gear_ratio"] = get_number(problems, act, "gear_ratio", path, default=1.0, low=0.0,
                                   low_open=True)
    out["rotor_inertia_kgm2"] = get_number(problems, act, "rotor_inertia_kgm2", path, default=0.0,
                                           low=0.0)
    peak, cont = out.get("peak_torque_Nm"), out.get("continuous_torque_Nm")
    if peak is not None and cont is not None and cont > peak:
        problems.add(join(path, "continuous_torque_Nm"),
                     f"must not exceed peak_torque_Nm ({peak:g}); got {cont:g}")
    _normalise_actuator_stiffness(problems, act, path, out)
    return out


# --- stiffness schema (optional keys; absent keys stay absent so files round-trip) --------
def _normalise_actuator_stiffness(problems, act, path, out):
    """``stiffness_Nm_per_rad``: joint torsional stiffness (gearbox and joint) > 0 [N m/rad]."""
    if "stiffness_Nm_per_rad" in act:
        out["stiffness_Nm_per_rad"] = get_number(problems, act, "stiffness_Nm_per_rad", path,
                                                 low=0.0, low_open=True)


def _normalise_link_stiffness(problems, link, path, out):
    """A link's own bending (EI) and torsional (GJ) stiffness [N m^2], both or neither, > 0."""
    given = [key for key in LINK_STIFFNESS_KEYS if key in link]
    for key in given:
        out[key] = get_number(problems, link, key, path, low=0.0, low_open=True)
    if len(given) == 1:
        missing = next(key for key in LINK_STIFFNESS_KEYS if key not in link)
        problems.add(join(path, missing), f"required with {given[0]} (give both link stiffness "
                                          "values, or neither for a tube's own or a rigid link)")


def list_or_none(vector):
    return None if vector is None else list(vector)


def _normalise_joint(problems, joint, index):
    path = join("joints", index)
    check_keys(problems, joint, JOINT_KEYS, path)
    out = {"name": get_string(problems, joint, "name", path, default=f"joint{index + 1}")}
    out["xyz_m"] = list_or_none(get_vector(problems, joint, "xyz_m", path, 3, default=_ZERO3))
    out["rpy_deg"] = list_or_none(get_vector(problems, joint, "rpy_deg", path, 3, default=_ZERO3))
    axis = get_vector(problems, joint, "axis", path, 3)
    if axis is not None:
        norm = float(np.linalg.norm(axis))
        if norm == 0.0:
            problems.add(join(path, "axis"), "must be a non-zero vector; got [0, 0, 0]")
            axis = None
        elif abs(norm - 1.0) > 1e-14:  # leave unit axes untouched, so that saving round-trips
            axis = [a / norm for a in axis]
        else:
            axis = list(axis)
    out["axis"] = axis
    limits = get_vector(problems, joint, "limits_deg", path, 2, default=(-180.0, 180.0))
    if limits is not None and not limits[0] < limits[1]:
        problems.add(join(path, "limits_deg"), f"must be increasing [lower, upper]; got {list(limits)}")
    out["limits_deg"] = list_or_none(limits)
    link = get_table(problems, joint, "link", path, required=True)
    out["link"] = None if link is None else _normalise_link(problems, link, join(path, "link"))
    if "actuator" in joint:
        act = get_table(problems, joint, "actuator", path)
        out["actuator"] = None if act is None else _normalise_actuator(problems, act,
                                                                       join(path, "actuator"))
    return out


def _normalise_task(problems, task, n_hint):
    """Task axes, region, acceleration, payload and approach; a rectangle without axes
    takes the arm's task axes later (``Arm.from_dict``)."""
    from ._regions import DEFER, parse_task

    check_keys(problems, task, TASK_KEYS, "task")
    out = {}
    if any(key in task for key in ("region", "accel_mps2", "payload_kg", "approach")):
        extras = {k: v for k, v in task.items() if k != "axes"}
        sub = Problems()
        parsed = parse_task(sub, extras, DEFER)
        # unknown keys of [task] itself are reported once, by check_keys above
        problems.items.extend(item for item in sub.items
                              if not (item[0].count(".") == 1 and "unknown key" in item[1]))
        if parsed is not None:
            out.update(parsed.to_dict())
    if "axes" in task:
        rows = task["axes"]
        if not isinstance(rows, (list, tuple)) or not 1 <= len(rows) <= 3:
            problems.add("task.axes", "must be a list of 1 to 3 vectors of 3 numbers")
            return out
        vectors = [get_vector_item(problems, rows, i, "task.axes", 3) for i in range(len(rows))]
        if any(v is None for v in vectors):
            return out
        a = np.array(vectors)
        if np.max(np.abs(a @ a.T - np.eye(len(vectors)))) > 1e-9:
            problems.add("task.axes", "rows must be orthonormal (within 1e-9)")
        out["axes"] = [list(v) for v in vectors]
    return out


def normalise_design(data, default_name="unnamed"):
    """Validate a design mapping; return its normalised full form or raise DesignError."""
    problems = Problems()
    if not isinstance(data, dict):
        raise DesignError(default_name, [("(design)", f"must be a table; got {type(data).__name__}")])
    name = get_string(problems, data, "name", "", default=default_name)
    display_name = name if name is not None else default_name
    check_keys(problems, data, TOP_KEYS, "")
    out = {"name": name}
    if "format" not in data:
        problems.add("format", f"required key is missing (supported formats: "
                               f"{', '.join(map(str, SUPPORTED_FORMATS))})")
    else:
        fmt = data["format"]
        if isinstance(fmt, bool) or fmt not in SUPPORTED_FORMATS:
            problems.add("format", f"unsupported format {fmt!r}; supported formats: "
                                   f"{', '.join(map(str, SUPPORTED_FORMATS))}")
    out["format"] = 1

    mount = get_table(problems, data, "mount", "")
    mount = mount if mount is not None else {}
    check_keys(problems, mount, MOUNT_KEYS, "mount")
    out["mount"] = {
        "xyz_m": list_or_none(get_vector(problems, mount, "xyz_m", "mount", 3, default=_ZERO3)),
        "rpy_deg": list_or_none(get_vector(problems, mount, "rpy_deg", "mount", 3, default=_ZERO3)),
        "gravity_mps2": list_or_none(get_vector(problems, mount, "gravity_mps2", "mount", 3,
                                                default=(0.0, 0.0, -STANDARD_GRAVITY))),
    }

    joints = get_list(problems, data, "joints", "", required=True)
    if joints is not None and not joints:
        problems.add("joints", "must have at least one joint")
    out["joints"] = [_normalise_joint(problems, j, i) for i, j in enumerate(joints or [])]
    names = [j["name"] for j in out["joints"]]
    for i, jname in enumerate(names):
        if jname is not None and names.index(jname) != i:
            problems.add(join(join("joints", i), "name"), f"duplicate joint name '{jname}'")

    tool = get_table(problems, data, "tool", "")
    tool = tool if tool is not None else {}
    check_keys(problems, tool, TOOL_KEYS, "tool")
    payload_inertia = get_vector(problems, tool, "payload_inertia_kgm2", "tool", 6, default=_ZERO6)
    if payload_inertia is not None:
        _check_inertia(problems, payload_inertia, "tool.payload_inertia_kgm2")
    out["tool"] = {
        "xyz_m": list_or_none(get_vector(problems, tool, "xyz_m", "tool", 3, default=_ZERO3)),
        "payload_kg": get_number(problems, tool, "payload_kg", "tool", default=0.0, low=0.0),
        "payload_inertia_kgm2": list_or_none(payload_inertia),
    }
    if "task" in data:
        task = get_table(problems, data, "task", "")
        if task is not None:
            out["task"] = _normalise_task(problems, task, len(out["joints"]))
    if "cycles" in data:
        from ._cycle_schema import normalise_cycles
        out["cycles"] = normalise_cycles(problems, data)
    if problems:
        raise DesignError(display_name, problems.items)
    return out
