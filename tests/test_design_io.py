"""Design files: load/save round trip, defaults, normalisation, safe saving.

The rules are those of arm-model.md ("Round trip", "Defaults", "Validation").
All designs here are invented test data.
"""

from __future__ import annotations

import math
import os
import tomllib
from pathlib import Path

import numpy as np
import pytest
import tomli_w
from hypothesis import HealthCheck, given, settings

import inertia_review as ir

try:  # tests/ may or may not be a package
    from . import strategies as S
except ImportError:
    import strategies as S

FULL_TOML = """\
name = "io_full"
format = 1

[mount]
xyz_m = [0.1, -0.2, 0.5]
rpy_deg = [10.0, -20.0, 33.3]
gravity_mps2 = [0.0, 0.5, -9.7]

[[joints]]
name = "shoulder"
xyz_m = [0.0, 0.0, 0.1]
rpy_deg = [0.0, 0.0, 0.0]
axis = [0.0, 0.0, 1.0]
limits_deg = [-170.0, 170.0]
[joints.link]
mass_kg = 2.0
com_m = [0.2, 0.0, 0.0]
inertia_kgm2 = [0.001, 0.02, 0.02, 0.0, 0.0, 0.0]
point_masses = [{ mass_kg = 0.8, xyz_m = [0.4, 0.0, 0.0] }]
[joints.actuator]
peak_torque_Nm = 60.0
continuous_torque_Nm = 25.0
gear_ratio = 100.0
rotor_inertia_kgm2 = 1.0e-5

[[joints]]
name = "elbow"
xyz_m = [0.4, 0.0, 0.0]
rpy_deg = [90.0, 0.0, 12.5]
axis = [0.0, 0.3, 0.9]
[joints.link]
tube = { length_m = 0.5, outer_diameter_m = 0.06, wall_m = 0.003, material = "aluminium_6061" }
[joints.actuator]
peak_torque_Nm = 30.0
continuous_torque_Nm = 12.0

[[joints]]
axis = [1.0, 0.0, 0.0]
[joints.link]
tube = { length_m = 0.2, outer_diameter_m = 0.04, wall_m = 0.002, density_kgm3 = 1700.0 }
point_masses = [{ mass_kg = 0.3, xyz_m = [0.2, 0.0, 0.0] }, { mass_kg = 0.0, xyz_m = [0.1, 0.01, 0.0] }]

[tool]
xyz_m = [0.2, 0.0, 0.0]
payload_kg = 0.5
payload_inertia_kgm2 = [0.001, 0.001, 0.001, 0.0, 0.0, 0.0]
"""

MINIMAL_TOML = """\
format = 1

[[joints]]
axis = [0, 0, 2]
[joints.link]
mass_kg = 2
com_m = [0, 0, 1]
inertia_kgm2 = [1, 1, 1, 0, 0, 0]
[joints.actuator]
peak_torque_Nm = 10
continuous_torque_Nm = 4

[[joints]]
axis = [1, 1, 0]
[joints.link]
mass_kg = 1
com_m = [0.5, 0, 0]
inertia_kgm2 = [0.01, 0.02, 0.02, 0, 0, 0]
"""

QS = [np.zeros(3), np.array([0.3, -1.2, 2.0]), np.array([[1.0, 0.5, -0.5], [-2.0, 3.0, 0.1]])]


def _write(tmp_path, text, name="design.toml"):
    p = tmp_path / name
    p.write_text(text)
    return p


def assert_arms_identical(a, b, qs):
    """Every array of two arms is exactly equal (arm-model.md: 'exactly equal')."""
    assert a.to_dict() == b.to_dict()
    assert a.dof == b.dof and a.name == b.name and a.joint_names == b.joint_names
    assert np.array_equal(a.task_axes, b.task_axes)
    assert np.array_equal(a.gravity, b.gravity)
    for q in qs:
        assert np.array_equal(a.mass_matrix(q), b.mass_matrix(q))
        assert np.array_equal(a.jacobian(q), b.jacobian(q))
        assert np.array_equal(a.tool_position(q), b.tool_position(q))
        assert np.array_equal(a.gravity_torque(q), b.gravity_torque(q))


def test_round_trip_full_file(tmp_path):
    p = _write(tmp_path, FULL_TOML, "full.toml")
    arm = ir.load_design(p)
    out = tmp_path / "full_saved.toml"
    ir.save_design(arm, out)
    again = ir.load_design(out)
    assert_arms_identical(arm, again, QS)
    # Saving the reloaded arm writes the same text: the form is stable.
    out2 = tmp_path / "full_saved2.toml"
    ir.save_design(again, out2)
    assert out2.read_text() == out.read_text()


def test_saved_file_is_plain_toml_of_to_dict(tmp_path):
    arm = ir.load_design(_write(tmp_path, FULL_TOML))
    out = tmp_path / "saved.toml"
    ir.save_design(arm, out)
    with open(out, "rb") as f:
        data = tomllib.load(f)
    assert data["format"] == 1
    assert data["name"] == "io_full"
    assert ir.Arm.from_dict(data).to_dict() == arm.to_dict()


def test_round_trip_keeps_values_and_degrees(tmp_path):
    d = ir.load_design(_write(tmp_path, FULL_TOML)).to_dict()
    assert d["name"] == "io_full"
    assert d["mount"]["rpy_deg"] == [10.0, -20.0, 33.3]       # degrees, as given
    assert d["mount"]["xyz_m"] == [0.1, -0.2, 0.5]
    assert d["joints"][1]["rpy_deg"] == [90.0, 0.0, 12.5]
    assert d["joints"][0]["limits_deg"] == [-170.0, 170.0]
    assert d["joints"][0]["actuator"]["gear_ratio"] == 100.0
    assert d["tool"]["payload_kg"] == 0.5


def test_from_dict_to_dict_is_idempotent(tmp_path):
    arm = ir.load_design(_write(tmp_path, FULL_TOML))
    d1 = arm.to_dict()
    d2 = ir.Arm.from_dict(d1).to_dict()
    assert d1 == d2
    # to_dict returns a fresh dict: mutating it does not change the arm.
    d1["joints"][0]["link"]["mass_kg"] = 99.0
    assert arm.to_dict() == d2


@pytest.mark.parametrize("axis", [[0.0, 1.0, 1.0], [1.0, 1.0, 1.0], [0.0, 0.0, 2.0], [0.3, -0.4, 1.2]], ids=str)
def test_round_trip_non_unit_axis(tmp_path, axis):
    # Axes are normalised on load; saving and loading again must not move them
    # by even one ulp (arm-model.md, Round trip: arrays exactly equal).
    d = {"format": 1, "name": "axis_rt",
         "joints": [{"axis": axis, "link": {"mass_kg": 1.0, "com_m": [0.3, 0.0, 0.0],
                                            "inertia_kgm2": [0.01, 0.01, 0.01, 0.0, 0.0, 0.0]}}]}
    arm = ir.Arm.from_dict(d)
    out = tmp_path / "axis_rt.toml"
    ir.save_design(arm, out)
    assert_arms_identical(arm, ir.load_design(out), [np.array([0.7]), np.array([[0.1], [-2.0]])])


def test_axis_normalisation_is_idempotent_for_many_axes():
    # 300 random non-unit axes: from_dict -> to_dict -> from_dict -> to_dict is a
    # fixed point, so a save never moves a normalised axis (arm-model.md, Round trip).
    rng = np.random.default_rng(12)
    axes = rng.normal(size=(300, 3)) * rng.choice([0.01, 1.0, 7.0], size=(300, 1))
    for axis in axes:
        d = {"format": 1, "name": "axes",
             "joints": [{"axis": axis.tolist(),
                         "link": {"mass_kg": 1.0, "com_m": [0.3, 0.0, 0.0],
                                  "inertia_kgm2": [0.01, 0.01, 0.01, 0.0, 0.0, 0.0]}}]}
        once = ir.Arm.from_dict(d).to_dict()
        twice = ir.Arm.from_dict(once).to_dict()
        assert once["joints"][0]["axis"] == twice["joints"][0]["axis"], axis
        np.testing.assert_allclose(once["joints"][0]["axis"], axis / np.linalg.norm(axis), rtol=0, atol=4e-16)


@settings(max_examples=25, deadline=None, suppress_health_check=[HealthCheck.function_scoped_fixture])
@given(design=S.designs(task=True, gravity=True))
def test_round_trip_random_designs(tmp_path, design):
    p = tmp_path / "random_in.toml"
    p.write_text(tomli_w.dumps(design))
    arm = ir.load_design(p)
    out = tmp_path / "random_out.toml"
    ir.save_design(arm, out)
    again = ir.load_design(out)
    n = arm.dof
    rng = np.random.default_rng(n)
    qs = [np.zeros(n), rng.uniform(-3, 3, size=n), rng.uniform(-3, 3, size=(2, n))]
    assert_arms_identical(arm, again, qs)
    # from_dict of the same dict gives the same arm as the file route.
    direct = ir.Arm.from_dict(design)
    assert np.array_equal(direct.mass_matrix(qs[1]), arm.mass_matrix(qs[1]))


def test_defaults_filled_in(tmp_path):
    p = _write(tmp_path, MINIMAL_TOML, "minimal_arm.toml")
    arm = ir.load_design(p)
    d = arm.to_dict()
    # design name defaults to the file's stem (arm-model.md, Defaults)
    assert arm.name == "minimal_arm" and d["name"] == "minimal_arm"
    assert d["format"] == 1
    assert d["mount"]["xyz_m"] == [0.0, 0.0, 0.0]
    assert d["mount"]["rpy_deg"] == [0.0, 0.0, 0.0]
    assert [j["name"] for j in d["joints"]] == ["joint1", "joint2"]
    assert arm.joint_names == ("joint1", "joint2")
    for j in d["joints"]:
        assert j["xyz_m"] == [0.0, 0.0, 0.0]
        assert j["rpy_deg"] == [0.0, 0.0, 0.0]
        assert j["limits_deg"] == [-180.0, 180.0]
        assert j["link"].get("point_masses", []) == []
    act = d["joints"][0]["actuator"]
    assert act["gear_ratio"] == 1.0
    assert act["rotor_inertia_kgm2"] == 0.0
    assert act["peak_torque_Nm"] == 10.0
    # no [joints.actuator] table: no ratings (absent or None, never invented)
    assert d["joints"][1].get("actuator") is None
    assert d["tool"]["xyz_m"] == [0.0, 0.0, 0.0]
    assert d["tool"]["payload_kg"] == 0.0
    assert d["tool"]["payload_inertia_kgm2"] == [0.0] * 6
    # default gravity: standard gravity, 3rd CGPM (1901) [C] (references.md item 7)
    assert np.array_equal(arm.gravity, np.array([0.0, 0.0, -9.80665]))


def test_axes_normalised_on_load(tmp_path):
    d = ir.load_design(_write(tmp_path, MINIMAL_TOML)).to_dict()
    a0, a1 = d["joints"][0]["axis"], d["joints"][1]["axis"]
    assert a0 == [0.0, 0.0, 1.0]
    np.testing.assert_allclose(a1, [1 / math.sqrt(2), 1 / math.sqrt(2), 0.0], rtol=0, atol=1e-15)
    assert abs(math.fsum(x * x for x in a1) - 1.0) < 1e-15


def test_axis_scale_does_not_change_the_arm(tmp_path):
    # An axis given as [0, 0, 2] is the same joint as [0, 0, 1].
    a = ir.load_design(_write(tmp_path, MINIMAL_TOML, "a.toml"))
    b = ir.load_design(_write(tmp_path, MINIMAL_TOML.replace("axis = [0, 0, 2]", "axis = [0, 0, 1]"), "b.toml"))
    q = np.array([0.4, -0.9])
    np.testing.assert_allclose(a.mass_matrix(q), b.mass_matrix(q), rtol=1e-14, atol=1e-15)
    np.testing.assert_allclose(a.jacobian(q), b.jacobian(q), rtol=1e-14, atol=1e-15)


def _walk_numbers(obj, path=""):
    if isinstance(obj, dict):
        for k, v in obj.items():
            yield from _walk_numbers(v, f"{path}.{k}" if path else k)
    elif isinstance(obj, list):
        for i, v in enumerate(obj):
            yield from _walk_numbers(v, f"{path}[{i}]")
    elif isinstance(obj, (int, float)) and not isinstance(obj, bool):
        yield path, obj


def test_ints_come_back_as_floats(tmp_path):
    d = ir.load_design(_write(tmp_path, MINIMAL_TOML)).to_dict()
    assert d["joints"][0]["link"]["mass_kg"] == 2.0
    assert type(d["joints"][0]["link"]["mass_kg"]) is float
    assert all(type(x) is float for x in d["joints"][0]["link"]["com_m"])
    assert all(type(x) is float for x in d["joints"][0]["link"]["inertia_kgm2"])
    assert type(d["joints"][0]["actuator"]["peak_torque_Nm"]) is float
    wrong = [(p, v) for p, v in _walk_numbers(d) if p != "format" and type(v) is not float]
    assert wrong == [], wrong


def test_to_dict_has_plain_python_types(tmp_path):
    d = ir.load_design(_write(tmp_path, FULL_TOML)).to_dict()
    # tomli_w accepts it as is (no numpy scalars or arrays inside)
    assert tomllib.loads(tomli_w.dumps(d)) == d


# -- saving safely ---------------------------------------------------------------

def _listing(directory):
    return sorted(os.listdir(directory))


def test_save_overwrites_existing_file(tmp_path):
    arm = ir.load_design(_write(tmp_path, FULL_TOML, "src.toml"))
    target = tmp_path / "target.toml"
    target.write_text("old contents\n")
    ir.save_design(arm, target)
    assert ir.load_design(target).to_dict() == arm.to_dict()
    assert _listing(tmp_path) == ["src.toml", "target.toml"]


def test_save_into_missing_directory_fails_cleanly(tmp_path):
    arm = ir.load_design(_write(tmp_path, FULL_TOML, "src.toml"))
    with pytest.raises(OSError):
        ir.save_design(arm, tmp_path / "no_such_dir" / "x.toml")
    assert _listing(tmp_path) == ["src.toml"]


def _fail(*args, **kwargs):
    raise RuntimeError("simulated failure during save")


@pytest.mark.parametrize("where", ["serialise", "mid-write", "replace"])
def test_failing_save_leaves_existing_file_untouched(tmp_path, monkeypatch, where):
    arm = ir.load_design(_write(tmp_path, FULL_TOML, "src.toml"))
    target = tmp_path / "target.toml"
    original = "# precious hand-edited file\nformat = 1\n"
    target.write_text(original)
    if where == "serialise":
        monkeypatch.setattr(tomli_w, "dumps", _fail)
        monkeypatch.setattr(tomli_w, "dump", _fail)
    elif where == "mid-write":
        # fail after the text went to a temporary file, before it is flushed to disk
        # (this hook relies on the save calling os.fsync; if it stops doing so,
        # the test fails with "DID NOT RAISE" and needs another hook)
        monkeypatch.setattr(os, "fsync", _fail)
    else:
        # the last step of an atomic save: moving the finished temp file into place
        monkeypatch.setattr(os, "replace", _fail)
        monkeypatch.setattr(os, "rename", _fail)
        monkeypatch.setattr(Path, "replace", _fail)
        monkeypatch.setattr(Path, "rename", _fail)
    with pytest.raises(RuntimeError, match="simulated failure"):  # the patch was reached
        ir.save_design(arm, target)
    monkeypatch.undo()
    assert target.read_text() == original
    assert _listing(tmp_path) == ["src.toml", "target.toml"]   # no temp file left behind


def test_failing_save_creates_no_file(tmp_path, monkeypatch):
    arm = ir.load_design(_write(tmp_path, FULL_TOML, "src.toml"))
    monkeypatch.setattr(os, "replace", _fail)
    monkeypatch.setattr(os, "rename", _fail)
    monkeypatch.setattr(Path, "replace", _fail)
    monkeypatch.setattr(Path, "rename", _fail)
    with pytest.raises(RuntimeError, match="simulated failure"):  # the patch was reached
        ir.save_design(arm, tmp_path / "new.toml")
    monkeypatch.undo()
    assert _listing(tmp_path) == ["src.toml"]


def test_load_accepts_str_and_path(tmp_path):
    p = _write(tmp_path, FULL_TOML)
    a = ir.load_design(p)
    b = ir.load_design(str(p))
    assert a.to_dict() == b.to_dict()
