"""Schema of the stiffness keys: joint springs, link stiffness values, rated speeds.

Rules (model/_design.py, stiffness block): ``stiffness_Nm_per_rad`` > 0; a link gives both
``bending_stiffness_Nm2`` and ``torsional_stiffness_Nm2`` (> 0) or neither; the keys stay
absent when not given, so files round-trip exactly. All designs are invented test data.
"""

import copy

import numpy as np
import pytest

import inertia_review as ir


def design():
    return {
        "name": "schema_stiff", "format": 1,
        "joints": [
            {"axis": [0.0, 0.0, 1.0],
             "link": {"mass_kg": 1.0, "com_m": [0.1, 0.0, 0.0],
                      "inertia_kgm2": [0.001, 0.004, 0.004, 0.0, 0.0, 0.0],
                      "bending_stiffness_Nm2": 900.0, "torsional_stiffness_Nm2": 700.0},
             "actuator": {"peak_torque_Nm": 20.0, "stiffness_Nm_per_rad": 5000.0,
                          "rated_speed_rpm": 3000.0}},
            {"xyz_m": [0.3, 0.0, 0.0], "axis": [0.0, 0.0, 1.0],
             "link": {"tube": {"length_m": 0.25, "outer_diameter_m": 0.03, "wall_m": 0.002,
                               "material": "structural_steel"}}},
        ],
        "tool": {"xyz_m": [0.25, 0.0, 0.0]},
    }


@pytest.mark.parametrize("path,value,keyword", [
    (("joints", 0, "actuator", "stiffness_Nm_per_rad"), 0.0, "joints[0].actuator.stiffness_Nm_per_rad"),
    (("joints", 0, "actuator", "stiffness_Nm_per_rad"), -3.0, "joints[0].actuator.stiffness_Nm_per_rad"),
    (("joints", 0, "actuator", "stiffness_Nm_per_rad"), True, "joints[0].actuator.stiffness_Nm_per_rad"),
    (("joints", 0, "actuator", "stiffness_Nm_per_rad"), float("nan"), "joints[0].actuator.stiffness_Nm_per_rad"),
    (("joints", 0, "link", "bending_stiffness_Nm2"), 0.0, "joints[0].link.bending_stiffness_Nm2"),
    (("joints", 0, "link", "torsional_stiffness_Nm2"), "stiff", "joints[0].link.torsional_stiffness_Nm2"),
    (("joints", 0, "actuator", "rated_speed_rpm"), -1.0, "joints[0].actuator.rated_speed_rpm"),
])
def test_bad_values_name_their_field(path, value, keyword):
    d = design()
    target = d
    for key in path[:-1]:
        target = target[key]
    target[path[-1]] = value
    with pytest.raises(ir.DesignError) as err:
        ir.Arm.from_dict(d)
    assert keyword in str(err.value)


def test_one_link_value_alone_is_an_error():
    d = design()
    del d["joints"][0]["link"]["torsional_stiffness_Nm2"]
    with pytest.raises(ir.DesignError, match=r"joints\[0\]\.link\.torsional_stiffness_Nm2.*both"):
        ir.Arm.from_dict(d)


def test_misspelt_key_gets_a_suggestion():
    d = design()
    d["joints"][0]["actuator"]["stiffness_Nm_per_rd"] = 1.0
    with pytest.raises(ir.DesignError, match="stiffness_Nm_per_rad"):
        ir.Arm.from_dict(d)


def test_round_trip_keeps_stiffness_keys_and_absent_stays_absent(tmp_path):
    arm = ir.Arm.from_dict(design())
    path = tmp_path / "s.toml"
    ir.save_design(arm, path)
    back = ir.load_design(path)
    assert back.to_dict() == arm.to_dict()
    spec = back.to_dict()
    assert spec["joints"][0]["actuator"]["stiffness_Nm_per_rad"] == 5000.0
    assert "bending_stiffness_Nm2" not in spec["joints"][1]["link"]
    assert "actuator" not in spec["joints"][1]
    for name in ("joint_stiffness", "beam_bending", "beam_torsion", "beam_length"):
        np.testing.assert_array_equal(getattr(back._params, name), getattr(arm._params, name))


def test_link_values_and_tube_section_reach_the_model():
    p = ir.Arm.from_dict(design())._params
    assert p.joint_stiffness[0] == 5000.0 and np.isinf(p.joint_stiffness[1])
    assert (p.beam_bending[0], p.beam_torsion[0]) == (900.0, 700.0)
    assert p.beam_length[0] == pytest.approx(0.3)              # spans to the next joint
    ei, gj = ir.tube_section_stiffness(0.03, 0.002, *ir.MODULI["structural_steel"])
    assert (p.beam_bending[1], p.beam_torsion[1]) == (ei, gj)
    assert p.beam_length[1] == 0.25                            # the tube is its own beam
    # a tube given by density only has no modulus: rigid unless the link gives values
    d = design()
    d["joints"][1]["link"]["tube"] = {"length_m": 0.25, "outer_diameter_m": 0.03,
                                      "wall_m": 0.002, "density_kgm3": 1600.0}
    assert np.isinf(ir.Arm.from_dict(d)._params.beam_bending[1])
    d["joints"][1]["link"].update(bending_stiffness_Nm2=300.0, torsional_stiffness_Nm2=200.0)
    assert ir.Arm.from_dict(d)._params.beam_bending[1] == 300.0
