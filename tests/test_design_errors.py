"""Design validation: every bad input of arm-model.md "Validation" raises one
``ir.DesignError`` that names the field path and the rule.

Paths and error format are the contract of arm-model.md and the lead's
briefing: str(err) = "design '<name>' has N problem(s):\n  - <path>: <reason>...",
``err.problems`` = [(path, reason), ...].  Tests match the path exactly and a key
word of the reason, never whole sentences.  All design data here is invented.
"""

from __future__ import annotations

import math
import re

import numpy as np
import pytest
import tomli_w

import inertia_review as ir


def base_design():
    """A valid 3-joint spatial arm (invented demo data)."""
    return {
        "name": "val_arm",
        "format": 1,
        "mount": {"xyz_m": [0.0, 0.0, 0.1], "rpy_deg": [0.0, 0.0, 30.0]},
        "joints": [
            {
                "name": "base_yaw",
                "xyz_m": [0.0, 0.0, 0.2],
                "axis": [0.0, 0.0, 1.0],
                "limits_deg": [-170.0, 170.0],
                "link": {
                    "mass_kg": 3.0,
                    "com_m": [0.0, 0.0, 0.1],
                    "inertia_kgm2": [0.02, 0.02, 0.01, 0.0, 0.0, 0.0],
                },
                "actuator": {
                    "peak_torque_Nm": 80.0,
                    "continuous_torque_Nm": 30.0,
                    "gear_ratio": 100.0,
                    "rotor_inertia_kgm2": 1.0e-5,
                },
            },
            {
                "name": "shoulder",
                "xyz_m": [0.0, 0.0, 0.15],
                "rpy_deg": [90.0, 0.0, 0.0],
                "axis": [0.0, 0.0, 1.0],
                "link": {
                    "mass_kg": 2.0,
                    "com_m": [0.2, 0.0, 0.0],
                    "inertia_kgm2": [0.001, 0.02, 0.02, 0.0, 0.0, 0.0],
                    "point_masses": [
                        {"mass_kg": 0.8, "xyz_m": [0.4, 0.0, 0.0]},
                        {"mass_kg": 0.2, "xyz_m": [0.1, 0.0, 0.05]},
                    ],
                },
                "actuator": {"peak_torque_Nm": 60.0, "continuous_torque_Nm": 25.0},
            },
            {
                "name": "elbow",
                "xyz_m": [0.4, 0.0, 0.0],
                "axis": [0.0, 0.0, 1.0],
                "link": {
                    "mass_kg": 1.0,
                    "com_m": [0.15, 0.0, 0.0],
                    "inertia_kgm2": [0.0005, 0.008, 0.008, 0.0, 0.0, 0.0],
                },
                "actuator": {"peak_torque_Nm": 20.0, "continuous_torque_Nm": 8.0},
            },
        ],
        "tool": {"xyz_m": [0.3, 0.0, 0.0], "payload_kg": 0.5},
    }


def tube_design():
    d = base_design()
    d["joints"][2]["link"] = {
        "tube": {"length_m": 0.3, "outer_diameter_m": 0.05, "wall_m": 0.003,
                 "material": "aluminium_6061"},
    }
    return d


def _set(path_fn, value):
    def mutate(d):
        obj, key = path_fn(d)
        obj[key] = value
    return mutate


def _del(path_fn):
    def mutate(d):
        obj, key = path_fn(d)
        del obj[key]
    return mutate


def J(i, *keys):
    """Accessor returning (container, last key) of joints[i].<keys...>."""
    def f(d):
        obj = d["joints"][i]
        for k in keys[:-1]:
            obj = obj[k]
        return obj, keys[-1]
    return f


def TOP(*keys):
    def f(d):
        obj = d
        for k in keys[:-1]:
            obj = obj[k]
        return obj, keys[-1]
    return f


def problems_of(err):
    assert isinstance(err, ValueError)
    probs = list(err.problems)
    assert all(isinstance(p, tuple) and len(p) == 2 for p in probs), probs
    return probs


def _path_re(path):
    # The path itself, or one entry of it (a vector field may be reported
    # element-wise, e.g. ``joints[1].xyz_m[1]``).
    return re.escape(path) + r"(\[\d+\])?"


def assert_reports(err, path, keyword):
    """err names `path` exactly, with a reason matching the regex `keyword`."""
    probs = problems_of(err)
    hits = [r for p, r in probs if re.fullmatch(_path_re(path), p)]
    assert hits, f"no problem reported for path {path!r}; got {probs}"
    assert any(re.search(keyword, r, re.IGNORECASE) for r in hits), (
        f"reason for {path!r} does not match {keyword!r}: {hits}")
    # The message lists the same problem as "  - <path>: <reason>".
    assert re.search(r"^  - " + _path_re(path) + r": ", str(err), re.MULTILINE), str(err)


# "N problem(s)": singular or plural wording both accepted.
PROBLEMS = r"problems?(\(s\))?"


NUMBER = r"(number|float|real|numeric|type)"
VECTOR = r"(vector|list|array|sequence|entries|3)"
FINITE = r"(finite|nan|inf)"
NONNEG = r"(negative|>= ?0|≥ ?0|at least 0)"
POSITIVE = r"(positive|> ?0|greater than 0)"
MISSING = r"(missing|required)"

# (id, mutation, expected path, keyword regex of the reason)
CASES = [
    # missing required keys (arm-model.md, Defaults: "Required: ...")
    ("missing-format", _del(TOP("format")), "format", MISSING),
    ("missing-joints", _del(TOP("joints")), "joints", MISSING),
    ("empty-joints", _set(TOP("joints"), []), "joints", r"(at least|empty|one|missing|required)"),
    ("missing-axis", _del(J(1, "axis")), "joints[1].axis", MISSING),
    ("missing-link", _del(J(0, "link")), "joints[0].link", MISSING),
    ("missing-mass", _del(J(2, "link", "mass_kg")), "joints[2].link.mass_kg", MISSING),
    ("missing-com", _del(J(1, "link", "com_m")), "joints[1].link.com_m", MISSING),
    ("missing-inertia", _del(J(0, "link", "inertia_kgm2")), "joints[0].link.inertia_kgm2", MISSING),
    ("missing-pm-mass", _del(J(1, "link", "point_masses", 1, "mass_kg")),
     "joints[1].link.point_masses[1].mass_kg", MISSING),
    # wrong types: "Booleans are not numbers; a number is not a vector"
    ("string-mass", _set(J(0, "link", "mass_kg"), "2.0"), "joints[0].link.mass_kg", NUMBER),
    ("bool-mass", _set(J(0, "link", "mass_kg"), True), "joints[0].link.mass_kg", r"(bool|number|float)"),
    ("bool-payload", _set(TOP("tool", "payload_kg"), False), "tool.payload_kg", r"(bool|number|float)"),
    ("bool-in-vector", _set(J(1, "xyz_m"), [0.0, True, 0.0]), "joints[1].xyz_m", r"(bool|number|float)"),
    ("string-in-vector", _set(TOP("mount", "xyz_m"), [0.0, "0", 0.0]), "mount.xyz_m", NUMBER),
    ("number-for-vector", _set(J(0, "link", "com_m"), 0.1), "joints[0].link.com_m", VECTOR),
    ("number-for-axis", _set(J(2, "axis"), 1.0), "joints[2].axis", VECTOR),
    ("short-rpy", _set(TOP("mount", "rpy_deg"), [0.0, 0.0]), "mount.rpy_deg", r"(3|entries|length)"),
    ("long-axis", _set(J(0, "axis"), [0.0, 0.0, 1.0, 0.0]), "joints[0].axis", r"(3|entries|length)"),
    ("short-inertia", _set(J(1, "link", "inertia_kgm2"), [0.01] * 5), "joints[1].link.inertia_kgm2",
     r"(6|entries|length)"),
    ("short-pm-xyz", _set(J(1, "link", "point_masses", 1, "xyz_m"), [0.1, 0.0]),
     "joints[1].link.point_masses[1].xyz_m", r"(3|entries|length)"),
    ("short-limits", _set(J(0, "limits_deg"), [-10.0]), "joints[0].limits_deg", r"(2|entries|length)"),
    ("string-name", _set(J(0, "name"), 5), "joints[0].name", r"(str|text|name|type)"),
    # NaN and infinity in a dict ("NaN and infinity are errors")
    ("nan-mass", _set(J(1, "link", "mass_kg"), float("nan")), "joints[1].link.mass_kg", FINITE),
    ("inf-com", _set(J(1, "link", "com_m"), [0.2, math.inf, 0.0]), "joints[1].link.com_m", FINITE),
    ("nan-inertia", _set(J(2, "link", "inertia_kgm2"), [0.0005, float("nan"), 0.008, 0.0, 0.0, 0.0]),
     "joints[2].link.inertia_kgm2", FINITE),
    ("inf-tool", _set(TOP("tool", "xyz_m"), [-math.inf, 0.0, 0.0]), "tool.xyz_m", FINITE),
    ("nan-limits", _set(J(0, "limits_deg"), [float("nan"), 90.0]), "joints[0].limits_deg", FINITE),
    ("inf-peak", _set(J(0, "actuator", "peak_torque_Nm"), math.inf), "joints[0].actuator.peak_torque_Nm",
     FINITE),
    # negative masses ("Masses >= 0")
    ("negative-link-mass", _set(J(1, "link", "mass_kg"), -2.0), "joints[1].link.mass_kg", NONNEG),
    ("negative-point-mass", _set(J(1, "link", "point_masses", 0, "mass_kg"), -0.1),
     "joints[1].link.point_masses[0].mass_kg", NONNEG),
    ("negative-payload", _set(TOP("tool", "payload_kg"), -0.5), "tool.payload_kg", NONNEG),
    # inertia tensors: symmetric PSD with principal moments meeting the triangle inequality
    ("negative-moment", _set(J(0, "link", "inertia_kgm2"), [0.02, 0.02, -0.001, 0.0, 0.0, 0.0]),
     "joints[0].link.inertia_kgm2", r"(semi-?definite|psd|negative|principal|eigen)"),
    # positive diagonal, but eigenvalues 0.1 +- 0.2: one principal moment is -0.1
    ("indefinite-offdiag", _set(J(0, "link", "inertia_kgm2"), [0.1, 0.1, 0.1, 0.2, 0.0, 0.0]),
     "joints[0].link.inertia_kgm2", r"(semi-?definite|psd|negative|principal|eigen)"),
    ("triangle-broken", _set(J(2, "link", "inertia_kgm2"), [0.01, 0.01, 0.05, 0.0, 0.0, 0.0]),
     "joints[2].link.inertia_kgm2", r"triangle"),
    ("negative-payload-inertia", _set(TOP("tool", "payload_inertia_kgm2"), [-0.01, 0.01, 0.01, 0, 0, 0]),
     "tool.payload_inertia_kgm2", r"(semi-?definite|psd|negative|principal|eigen)"),
    # axes
    ("zero-axis", _set(J(0, "axis"), [0.0, 0.0, 0.0]), "joints[0].axis", r"(zero|length|norm)"),
    ("nan-axis", _set(J(1, "axis"), [float("nan"), 0.0, 1.0]), "joints[1].axis", FINITE),
    ("inf-axis", _set(J(2, "axis"), [0.0, math.inf, 0.0]), "joints[2].axis", FINITE),
    # limits increasing
    ("limits-reversed", _set(J(0, "limits_deg"), [90.0, -90.0]), "joints[0].limits_deg",
     r"(increas|order|less|<|lower)"),
    ("limits-equal", _set(J(0, "limits_deg"), [10.0, 10.0]), "joints[0].limits_deg",
     r"(increas|order|less|<|lower)"),
    # actuator ratings
    ("zero-gear", _set(J(0, "actuator", "gear_ratio"), 0.0), "joints[0].actuator.gear_ratio", POSITIVE),
    ("negative-gear", _set(J(0, "actuator", "gear_ratio"), -5.0), "joints[0].actuator.gear_ratio", POSITIVE),
    ("zero-peak", _set(J(1, "actuator", "peak_torque_Nm"), 0.0), "joints[1].actuator.peak_torque_Nm",
     POSITIVE),
    ("negative-continuous", _set(J(2, "actuator", "continuous_torque_Nm"), -1.0),
     "joints[2].actuator.continuous_torque_Nm", POSITIVE),
    ("negative-rotor", _set(J(0, "actuator", "rotor_inertia_kgm2"), -1e-5),
     "joints[0].actuator.rotor_inertia_kgm2", NONNEG),
    # format
    ("format-2", _set(TOP("format"), 2), "format", r"support"),
    ("format-string", _set(TOP("format"), "1"), "format", r"(support|int|number|type)"),
    # task axes orthonormal within 1e-9
    ("task-not-orthogonal", _set(TOP("task"), {"axes": [[1.0, 0.0, 0.0], [1.0, 1.0, 0.0]]}), "task.axes",
     r"orthonormal"),
    ("task-not-unit", _set(TOP("task"), {"axes": [[2.0, 0.0, 0.0], [0.0, 1.0, 0.0]]}), "task.axes",
     r"orthonormal"),
    ("task-slightly-off", _set(TOP("task"), {"axes": [[1.0, 1e-7, 0.0], [0.0, 1.0, 0.0]]}), "task.axes",
     r"orthonormal"),
    # unknown keys, with a suggestion where one is close
    ("unknown-joint-key", _set(J(1, "axsi"), [0.0, 0.0, 1.0]), "joints[1].axsi",
     r"unknown key.*did you mean 'axis'"),
    ("unknown-link-key", _set(J(2, "link", "mass_kgg"), 1.0), "joints[2].link.mass_kgg",
     r"unknown key.*did you mean 'mass_kg'"),
    ("unknown-tool-key", _set(TOP("tool", "payload_k"), 1.0), "tool.payload_k",
     r"unknown key.*did you mean 'payload_kg'"),
    ("unknown-mount-key", _set(TOP("mount", "rpy"), [0.0, 0.0, 0.0]), "mount.rpy",
     r"unknown key.*did you mean 'rpy_deg'"),
    ("unknown-pm-key", _set(J(1, "link", "point_masses", 0, "xyz"), [0.0, 0.0, 0.0]),
     "joints[1].link.point_masses[0].xyz", r"unknown key.*did you mean 'xyz_m'"),
    ("unknown-actuator-key", _set(J(0, "actuator", "gear_ration"), 5.0), "joints[0].actuator.gear_ration",
     r"unknown key.*did you mean 'gear_ratio'"),
    ("unknown-top-key", _set(TOP("nmae"), "x"), "nmae", r"unknown key.*did you mean 'name'"),
    # booleans that Python would compare equal to a valid number (True == 1)
    ("bool-format", _set(TOP("format"), True), "format", r"(bool|number|int|type|support)"),
    ("bool-gear", _set(J(0, "actuator", "gear_ratio"), True), "joints[0].actuator.gear_ratio",
     r"(bool|number|float)"),
    # gravity override
    ("short-gravity", _set(TOP("mount", "gravity_mps2"), [0.0, -9.8]), "mount.gravity_mps2",
     r"(3|entries|length)"),
    ("nan-gravity", _set(TOP("mount", "gravity_mps2"), [0.0, 0.0, float("nan")]), "mount.gravity_mps2",
     FINITE),
    # wrong container types
    ("link-not-table", _set(J(0, "link"), 5.0), "joints[0].link", r"(table|dict|mapping|type)"),
    # reported on joints or on joints[0] (both name the field)
    ("joint-not-table", _set(TOP("joints"), [5.0]), "joints", r"(table|dict|mapping|type)"),
    ("joints-not-list", _set(TOP("joints"), {"axis": [0.0, 0.0, 1.0]}), "joints",
     r"(list|array|table|type|sequence)"),
    ("point-masses-not-list", _set(J(1, "link", "point_masses"), {"mass_kg": 1.0, "xyz_m": [0, 0, 0]}),
     "joints[1].link.point_masses", r"(list|array|table|type|sequence)"),
    ("mount-not-table", _set(TOP("mount"), [0.0, 0.0, 0.0]), "mount", r"(table|dict|mapping|type)"),
]


@pytest.mark.parametrize("mutate, path, keyword", [c[1:] for c in CASES], ids=[c[0] for c in CASES])
def test_bad_design_dict(mutate, path, keyword):
    d = base_design()
    mutate(d)
    with pytest.raises(ir.DesignError) as info:
        ir.Arm.from_dict(d)
    assert_reports(info.value, path, keyword)


def test_base_designs_are_valid():
    # The unmutated dicts load, so each failure above comes from its mutation.
    assert ir.Arm.from_dict(base_design()).dof == 3
    assert ir.Arm.from_dict(tube_design()).dof == 3


def test_design_error_is_value_error():
    assert issubclass(ir.DesignError, ValueError)


def test_unknown_key_without_close_match_has_no_suggestion():
    d = base_design()
    d["joints"][0]["zzqqxx"] = 1.0
    with pytest.raises(ir.DesignError) as info:
        ir.Arm.from_dict(d)
    assert_reports(info.value, "joints[0].zzqqxx", r"unknown key")
    reason = dict(problems_of(info.value))["joints[0].zzqqxx"]
    assert "did you mean" not in reason


def test_format_2_names_supported_format_1():
    d = base_design()
    d["format"] = 2
    with pytest.raises(ir.DesignError) as info:
        ir.Arm.from_dict(d)
    reason = dict(problems_of(info.value))["format"]
    assert re.search(r"\b1\b", reason), reason
    assert re.search(r"\b2\b", reason), reason  # the value got


# -- tubes -------------------------------------------------------------------

def test_tube_and_mass_both_given():
    d = tube_design()
    d["joints"][2]["link"]["mass_kg"] = 1.0
    with pytest.raises(ir.DesignError) as info:
        ir.Arm.from_dict(d)
    probs = problems_of(info.value)
    hits = [(p, r) for p, r in probs if p.startswith("joints[2].link")]
    assert hits, probs
    assert any(re.search(r"(tube|both|either|not both)", r, re.IGNORECASE) for _, r in hits), hits


def test_tube_unknown_material_suggests():
    d = tube_design()
    d["joints"][2]["link"]["tube"]["material"] = "aluminum_6061"
    with pytest.raises(ir.DesignError) as info:
        ir.Arm.from_dict(d)
    assert_reports(info.value, "joints[2].link.tube.material", r"did you mean 'aluminium_6061'")


def test_tube_unknown_key_suggests():
    d = tube_design()
    d["joints"][2]["link"]["tube"]["lenght_m"] = 0.3
    with pytest.raises(ir.DesignError) as info:
        ir.Arm.from_dict(d)
    assert_reports(info.value, "joints[2].link.tube.lenght_m", r"unknown key.*did you mean 'length_m'")


def test_tube_material_and_density_both_or_neither():
    d = tube_design()
    d["joints"][2]["link"]["tube"]["density_kgm3"] = 2700.0
    with pytest.raises(ir.DesignError) as info:
        ir.Arm.from_dict(d)
    assert any(p.startswith("joints[2].link.tube") for p, _ in problems_of(info.value))
    d = tube_design()
    del d["joints"][2]["link"]["tube"]["material"]
    with pytest.raises(ir.DesignError) as info:
        ir.Arm.from_dict(d)
    assert any(p.startswith("joints[2].link.tube") for p, _ in problems_of(info.value))


@pytest.mark.parametrize("key, value, keyword", [
    ("wall_m", -0.001, POSITIVE),
    ("wall_m", 0.0, POSITIVE),
    ("wall_m", 0.03, r"(half|radius|diameter)"),   # more than half of the 0.05 m diameter
    ("length_m", 0.0, POSITIVE),
    ("outer_diameter_m", -0.05, POSITIVE),
    ("length_m", "0.3", NUMBER),
])
def test_tube_geometry_errors(key, value, keyword):
    d = tube_design()
    d["joints"][2]["link"]["tube"][key] = value
    with pytest.raises(ir.DesignError) as info:
        ir.Arm.from_dict(d)
    assert_reports(info.value, f"joints[2].link.tube.{key}", keyword)


def test_tube_solid_bar_is_allowed():
    # wall = half the diameter is a solid round bar (Machinery's Handbook solid
    # cylinder entry is the r = 0 case of the hollow one, references.md item 7 [C]).
    d = tube_design()
    d["joints"][2]["link"]["tube"]["wall_m"] = 0.025
    ir.Arm.from_dict(d)


# -- singular mass matrix ------------------------------------------------------

def _massless_last_link(d):
    d["joints"][2]["link"] = {"mass_kg": 0.0, "com_m": [0.0, 0.0, 0.0],
                              "inertia_kgm2": [0.0] * 6}
    d["joints"][2].pop("actuator")
    d["tool"]["payload_kg"] = 0.0
    return d


def test_massless_end_joint_is_singular_and_named():
    d = _massless_last_link(base_design())
    with pytest.raises(ir.DesignError) as info:
        ir.Arm.from_dict(d)
    assert_reports(info.value, "joints[2]", r"singular")


def test_massless_end_joint_with_zero_rotor_is_singular():
    d = _massless_last_link(base_design())
    d["joints"][2]["actuator"] = {"peak_torque_Nm": 5.0, "continuous_torque_Nm": 2.0,
                                  "gear_ratio": 10.0, "rotor_inertia_kgm2": 0.0}
    with pytest.raises(ir.DesignError) as info:
        ir.Arm.from_dict(d)
    assert_reports(info.value, "joints[2]", r"singular")


def test_point_mass_on_the_last_axis_only_is_singular():
    # The only mass outboard of joint 3 sits on joint 3's axis, with no inertia
    # and no rotor: column 3 of M is zero at every q, so M is singular
    # (arm-model.md: "an arm whose mass matrix would be singular ... is an error").
    d = _massless_last_link(base_design())
    d["joints"][2]["link"]["point_masses"] = [{"mass_kg": 0.5, "xyz_m": [0.0, 0.0, 0.1]}]
    d["tool"]["xyz_m"] = [0.0, 0.0, 0.0]
    with pytest.raises(ir.DesignError) as info:
        ir.Arm.from_dict(d)
    assert_reports(info.value, "joints[2]", r"singular")


def test_massless_link_with_massive_outboard_links_is_fine():
    d = base_design()
    d["joints"][1]["link"] = {"mass_kg": 0.0, "com_m": [0.0, 0.0, 0.0], "inertia_kgm2": [0.0] * 6}
    arm = ir.Arm.from_dict(d)
    m = arm.mass_matrix(np.array([0.1, 0.4, -0.7]))
    assert np.all(np.linalg.eigvalsh(m) > 0)


def test_massless_last_link_with_payload_or_rotor_is_fine():
    d = _massless_last_link(base_design())
    d["tool"]["payload_kg"] = 0.3          # payload off joint 3's axis carries mass
    ir.Arm.from_dict(d)
    d = _massless_last_link(base_design())
    d["joints"][2]["actuator"] = {"peak_torque_Nm": 5.0, "continuous_torque_Nm": 2.0,
                                  "gear_ratio": 50.0, "rotor_inertia_kgm2": 1e-6}
    ir.Arm.from_dict(d)                    # rotor inertia alone keeps M regular


def test_zero_moment_inertias_are_allowed():
    # Thin rod and point-mass like tensors: zero principal moments are allowed (arm-model.md).
    d = base_design()
    d["joints"][1]["link"]["inertia_kgm2"] = [0.0, 0.02, 0.02, 0.0, 0.0, 0.0]
    d["joints"][2]["link"]["inertia_kgm2"] = [0.0] * 6
    ir.Arm.from_dict(d)


# -- tolerances: values on the boundary of a rule are valid ------------------

def _with_inertia(entries, joint=2):
    d = base_design()
    d["joints"][joint]["link"]["inertia_kgm2"] = list(map(float, entries))
    return d


def test_triangle_equality_is_allowed():
    # A thin flat plate has Izz = Ixx + Iyy exactly (perpendicular-axis theorem,
    # common practice, no source): on the boundary of the triangle inequality, valid.
    ir.Arm.from_dict(_with_inertia([0.003, 0.005, 0.008, 0.0, 0.0, 0.0]))


def test_triangle_inequality_tolerance():
    # arm-model.md: relative tolerance 1e-9.  Violation by 1e-12 (relative) is
    # accepted as rounding; violation by 1e-6 is an error.
    ir.Arm.from_dict(_with_inertia([0.003, 0.005, 0.008 * (1 + 1e-12), 0.0, 0.0, 0.0]))
    with pytest.raises(ir.DesignError) as info:
        ir.Arm.from_dict(_with_inertia([0.003, 0.005, 0.008 * (1 + 1e-6), 0.0, 0.0, 0.0]))
    assert_reports(info.value, "joints[2].link.inertia_kgm2", r"triangle")


def _rotated(principal, rpy_deg):
    from scipy.spatial.transform import Rotation
    r = Rotation.from_euler("xyz", rpy_deg, degrees=True).as_matrix()
    t = r @ np.diag(principal) @ r.T
    return [t[0, 0], t[1, 1], t[2, 2], t[0, 1], t[0, 2], t[1, 2]]


@pytest.mark.parametrize("rpy", [[10.0, 20.0, 30.0], [33.0, -71.0, 150.0], [0.1, 89.9, -45.0]])
def test_rotated_thin_rod_and_plate_are_allowed(rpy):
    # Zero principal moment (thin rod) and the triangle equality (flat plate),
    # turned into a general orientation: float rounding of the rotation must not
    # make them invalid (tolerance 1e-9, arm-model.md).  Rotation by scipy.
    rod = _rotated([0.0, 0.02, 0.02], rpy)
    plate = _rotated([0.003, 0.005, 0.008], rpy)
    d = _with_inertia(rod, joint=1)
    d["joints"][2]["link"]["inertia_kgm2"] = list(map(float, plate))
    ir.Arm.from_dict(d)


def test_slightly_negative_moment_beyond_tolerance_is_an_error():
    with pytest.raises(ir.DesignError) as info:
        ir.Arm.from_dict(_with_inertia([0.02, 0.02, -1e-6, 0.0, 0.0, 0.0]))
    assert_reports(info.value, "joints[2].link.inertia_kgm2", r"(semi-?definite|psd|negative|principal|eigen)")


def test_task_axes_within_tolerance_are_allowed():
    d = base_design()
    d["task"] = {"axes": [[1.0, 1e-12, 0.0], [0.0, 1.0, 0.0]]}
    arm = ir.Arm.from_dict(d)
    assert arm.task_axes.shape == (2, 3)


def test_mass_along_nearly_unit_u_is_accepted():
    arm = _arm()
    q = np.array([0.1, 0.5, -0.5])
    m1 = ir.mass_along(arm, q, np.array([1.0 + 1e-12, 0.0, 0.0]))
    m0 = ir.mass_along(arm, q, np.array([1.0, 0.0, 0.0]))
    assert math.isclose(m1, m0, rel_tol=1e-9)


# -- several problems at once --------------------------------------------------

def test_all_problems_reported_in_one_error():
    d = base_design()
    d["tool"]["payload_kg"] = -1.0
    d["mount"]["rpy_degs"] = [0.0, 0.0, 0.0]
    d["joints"][1]["limits_deg"] = [50.0, -50.0]
    d["joints"][2]["actuator"]["gear_ratio"] = 0.0
    with pytest.raises(ir.DesignError) as info:
        ir.Arm.from_dict(d)
    err = info.value
    paths = [p for p, _ in problems_of(err)]
    expected = ["tool.payload_kg", "mount.rpy_degs", "joints[1].limits_deg", "joints[2].actuator.gear_ratio"]
    assert sorted(paths) == sorted(expected), paths
    assert re.match(r"design 'val_arm' has 4 " + PROBLEMS + r":\n", str(err)), str(err)
    for p in expected:
        assert re.search(r"^  - " + re.escape(p) + r": ", str(err), re.MULTILINE)


def test_all_problems_reported_from_file(tmp_path):
    d = base_design()
    d["joints"][0]["link"]["mass_kg"] = -3.0
    d["joints"][2]["axis"] = [0.0, 0.0, 0.0]
    path = tmp_path / "two_bad.toml"
    path.write_text(tomli_w.dumps(d))
    with pytest.raises(ir.DesignError) as info:
        ir.load_design(path)
    paths = {p for p, _ in problems_of(info.value)}
    assert {"joints[0].link.mass_kg", "joints[2].axis"} <= paths
    assert re.search(r"has \d+ " + PROBLEMS + ":", str(info.value))


# -- NaN / inf written in a TOML file -----------------------------------------

@pytest.mark.parametrize("literal", ["nan", "inf", "-inf", "+nan"])
def test_toml_nan_inf_in_file(tmp_path, literal):
    d = base_design()
    d["joints"][1]["link"]["mass_kg"] = 123.456
    d["tool"]["xyz_m"] = [0.3, 654.321, 0.0]
    text = tomli_w.dumps(d)
    assert text.count("123.456") == 1 and text.count("654.321") == 1
    text = text.replace("123.456", literal).replace("654.321", literal)
    path = tmp_path / "nonfinite.toml"
    path.write_text(text)
    with pytest.raises(ir.DesignError) as info:
        ir.load_design(path)
    assert_reports(info.value, "joints[1].link.mass_kg", FINITE)
    assert_reports(info.value, "tool.xyz_m", FINITE)


def test_toml_syntax_error_names_file(tmp_path):
    path = tmp_path / "broken_syntax.toml"
    path.write_text('name = "x"\nformat = 1\n[[joints]\naxis = [0, 0, 1]\n')
    with pytest.raises(ir.DesignError) as info:
        ir.load_design(path)
    assert "broken_syntax.toml" in str(info.value)


def test_error_name_defaults_to_file_stem(tmp_path):
    d = base_design()
    del d["name"]
    d["tool"]["payload_kg"] = -1.0
    path = tmp_path / "stem_named.toml"
    path.write_text(tomli_w.dumps(d))
    with pytest.raises(ir.DesignError) as info:
        ir.load_design(path)
    assert re.match(r"design 'stem_named' has 1 " + PROBLEMS + ":", str(info.value)), str(info.value)


# -- argument checks of the core ------------------------------------------------

def _arm():
    return ir.Arm.from_dict(base_design())


QCALLS = {
    "tool_position": lambda arm, q: arm.tool_position(q),
    "jacobian": lambda arm, q: arm.jacobian(q),
    "mass_matrix": lambda arm, q: arm.mass_matrix(q),
    "gravity_torque": lambda arm, q: arm.gravity_torque(q),
    "velocity_torque[q]": lambda arm, q: arm.velocity_torque(q, np.zeros(3)),
    "velocity_torque[qd]": lambda arm, q: arm.velocity_torque(np.zeros(3), q),
    "inverse_dynamics[q]": lambda arm, q: arm.inverse_dynamics(q, np.zeros(3), np.zeros(3)),
    "inverse_dynamics[qd]": lambda arm, q: arm.inverse_dynamics(np.zeros(3), q, np.zeros(3)),
    "inverse_dynamics[qdd]": lambda arm, q: arm.inverse_dynamics(np.zeros(3), np.zeros(3), q),
    "apparent_mass": lambda arm, q: ir.apparent_mass(arm, q),
    "isotropy_index": lambda arm, q: ir.isotropy_index(arm, q),
    "principal_masses": lambda arm, q: ir.principal_masses(arm, q),
    "mass_ratio": lambda arm, q: ir.mass_ratio(arm, q),
    "mass_along": lambda arm, q: ir.mass_along(arm, q, np.array([1.0, 0.0, 0.0])),
    "manipulability": lambda arm, q: ir.manipulability(arm, q),
    "near_singular": lambda arm, q: ir.near_singular(arm, q),
    "torque_headroom": lambda arm, q: ir.torque_headroom(arm, q),
    "acceleration_along": lambda arm, q: ir.acceleration_along(arm, q, np.array([0.0, 0.0, 1.0])),
    "acceleration_capability": lambda arm, q: ir.acceleration_capability(arm, q),
}


@pytest.mark.parametrize("bad_shape", [(4,), (2,), (5, 2), (3, 1)], ids=str)
@pytest.mark.parametrize("name", sorted(QCALLS))
def test_wrong_last_axis_raises(name, bad_shape):
    arm = _arm()
    with pytest.raises(ValueError, match=re.escape("(..., 3)")):
        QCALLS[name](arm, np.zeros(bad_shape))


@pytest.mark.parametrize("name", ["mass_matrix", "apparent_mass", "velocity_torque[qd]"])
def test_scalar_q_raises(name):
    with pytest.raises(ValueError, match=re.escape("(..., 3)")):
        QCALLS[name](_arm(), np.float64(0.3))


@pytest.mark.parametrize("u", [[2.0, 0.0, 0.0], [0.0, 0.0, 0.0], [0.6, 0.6, 0.0], [1.0 + 1e-6, 0.0, 0.0]])
def test_mass_along_non_unit_u_raises(u):
    arm = _arm()
    with pytest.raises(ValueError, match=r"unit"):
        ir.mass_along(arm, np.array([0.1, 0.5, -0.5]), np.array(u))


def _planar_arm():
    # Planar 2R in the world x-y plane (axes along z): task span is the x-y plane.
    return ir.Arm.from_dict({
        "name": "planar2",
        "format": 1,
        "joints": [
            {"axis": [0.0, 0.0, 1.0],
             "link": {"mass_kg": 2.0, "com_m": [0.5, 0.0, 0.0],
                      "inertia_kgm2": [0.0, 1 / 6, 1 / 6, 0.0, 0.0, 0.0]}},
            {"xyz_m": [1.0, 0.0, 0.0], "axis": [0.0, 0.0, 1.0],
             "link": {"mass_kg": 1.0, "com_m": [0.4, 0.0, 0.0],
                      "inertia_kgm2": [0.0, 0.8**2 / 12, 0.8**2 / 12, 0.0, 0.0, 0.0]}},
        ],
        "tool": {"xyz_m": [0.8, 0.0, 0.0]},
    })


@pytest.mark.parametrize("u", [[0.0, 0.0, 1.0], [0.6, 0.0, 0.8]])
def test_mass_along_outside_task_span_raises(u):
    arm = _planar_arm()
    assert arm.task_axes.shape == (2, 3)
    with pytest.raises(ValueError, match=r"(task|span|plane)"):
        ir.mass_along(arm, np.array([0.2, 1.0]), np.array(u))


def test_mass_along_in_span_accepted():
    # The positive control for the two tests above: a unit u in the plane works.
    arm = _planar_arm()
    m = ir.mass_along(arm, np.array([0.2, 1.0]), np.array([0.6, 0.8, 0.0]))
    assert np.isfinite(m) and m > 0


def test_torque_headroom_without_ratings_raises():
    d = base_design()
    for j in d["joints"]:
        j.pop("actuator")
    arm = ir.Arm.from_dict(d)
    with pytest.raises(ValueError, match=r"(rat|actuator)"):
        ir.torque_headroom(arm, np.zeros(3))
