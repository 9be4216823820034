"""Inputs beyond physical sense: refused with the field and the limit named, or run cleanly.

The bounds themselves (100 m, 10,000 kg, ...) are common practice, no source: far beyond any
arm this tool reviews, and small enough that float64 products of a few of them stay finite.
"""

import copy
import tomllib
import warnings
from pathlib import Path

import numpy as np
import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

import inertia_review as ir

DESIGNS = Path(__file__).resolve().parents[1] / "designs"
NAMES = ("kestrel_a", "kestrel_b", "kestrel_c", "kestrel_wall", "sorter_planar")
SPECS = {name: tomllib.loads((DESIGNS / f"{name}.toml").read_text()) for name in NAMES}


def _set(spec, path, value):
    out = copy.deepcopy(spec)
    node = out
    for key in path[:-1]:
        node = node[key]
    node[path[-1]] = value
    return out


@pytest.mark.parametrize("path, value, field, words", [
    # the three cases that escaped validation before (a LinAlgError, an OverflowError and an
    # IndexError deep in the map)
    (("joints", 1, "xyz_m", 0), 1e300, "joints[1].xyz_m[0]", "100 m"),
    (("task", "region", "spacing_m"), 1e-320, "task.region.spacing_m", ">= 1e-06"),
    (("task", "region", "center_m", 0), 1e300, "task.region.center_m[0]", "100 m"),
    (("joints", 0, "link", "mass_kg"), 1e7, "joints[0].link.mass_kg", "10,000 kg"),
    (("joints", 0, "actuator", "peak_torque_Nm"), 1e9, "joints[0].actuator.peak_torque_Nm",
     "1e6 N m"),
    (("joints", 1, "axis", 1), -1e300, "joints[1].axis[1]", "normalised"),
    (("task", "region", "axes", 1, 0), 1e300, "task.region.axes[1][0]", "normalised"),
    (("cycles", 0, "points_m", "tray", 2), 2.5e11, "cycles[0].points_m.tray[2]", "100 m"),
])
def test_refused_beyond_physical_sense_naming_field_and_limit(path, value, field, words):
    spec = _set(SPECS["kestrel_a"], path, value)
    with pytest.raises(ir.DesignError) as info:
        ir.Arm.from_dict(spec)
    fields = [p for p, _ in info.value.problems]
    assert field in fields, info.value
    reason = dict(info.value.problems)[field]
    assert words in reason, reason


def test_values_inside_the_bounds_still_accepted():
    spec = _set(SPECS["kestrel_a"], ("joints", 1, "xyz_m", 2), 99.0)
    spec = _set(spec, ("joints", 0, "actuator", "rotor_inertia_kgm2"), 1e-9)
    arm = ir.Arm.from_dict(spec)
    assert arm.dof == 3


def test_a_cycle_that_would_take_forever_says_which_move():
    arm = ir.Arm.from_dict(SPECS["kestrel_a"])
    cycle = ir.design_cycles(arm)[0]
    spec = copy.deepcopy(SPECS["kestrel_a"])
    moves = spec["cycles"][0]["moves"]
    slow = next(i for i, m in enumerate(moves) if "joint_accel_dps2" in m)
    moves[slow]["joint_accel_dps2"] = 1e-9
    slow_arm = ir.Arm.from_dict(spec)
    with pytest.raises(ValueError, match=rf"cycle '{cycle.name}', move {slow} .*samples"):
        ir.cycle_torques(slow_arm, ir.design_cycles(slow_arm)[0])


def _leaf_paths(node, path=()):
    if isinstance(node, dict):
        for key, value in node.items():
            yield from _leaf_paths(value, path + (key,))
    elif isinstance(node, list):
        for index, value in enumerate(node):
            yield from _leaf_paths(value, path + (index,))
    if path:
        yield path


PATHS = {name: list(_leaf_paths(spec)) for name, spec in SPECS.items()}
BAD_VALUES = st.sampled_from([
    None, "x", True, False, float("nan"), float("inf"), -float("inf"), 1e300, -1e300, 1e-320,
    -1.0, 0.0, 1e30, 1e-30, 7, [], [1.0, 2.0], {"a": 1}, {"mass_kg": 1.0}])


@st.composite
def mutated(draw):
    name = draw(st.sampled_from(NAMES))
    spec = copy.deepcopy(SPECS[name])
    for _ in range(draw(st.integers(1, 2))):
        path = draw(st.sampled_from(PATHS[name]))
        node = spec
        try:
            for key in path[:-1]:
                node = node[key]
            if draw(st.booleans()) and isinstance(node, dict):
                del node[path[-1]]
            else:
                old = node[path[-1]]
                if isinstance(old, (int, float)) and not isinstance(old, bool) and draw(st.booleans()):
                    node[path[-1]] = old * draw(st.sampled_from([1e6, 1e-6, -1.0, 1e12, 1e-12, 0.0]))
                else:
                    node[path[-1]] = draw(BAD_VALUES)
        except (KeyError, IndexError, TypeError):
            pass                        # an earlier mutation removed or replaced the parent
    return name, spec


@settings(max_examples=120, deadline=None, derandomize=True,
          suppress_health_check=[HealthCheck.too_slow, HealthCheck.data_too_large])
@given(mutated())
def test_mutated_designs_fail_clearly_or_run_cleanly(case):
    name, spec = case
    with warnings.catch_warnings():
        warnings.simplefilter("error")          # no RuntimeWarning may reach the user
        try:
            arm = ir.Arm.from_dict(spec)
        except ir.DesignError as err:
            assert err.problems, "a DesignError lists at least one problem"
            for field, reason in err.problems:
                assert field and reason
            return
        if arm.task is None:
            return
        ds = ir.metric_map(arm, arm.task)
        solved = np.isin(ds.status.values, ir.SOLVED)
        for var in ("isotropy", "mass_ratio"):
            values = ds[var].values[solved]
            assert np.all(np.isfinite(values)), f"{name}: {var} not finite at solved points"
            assert np.all(np.isnan(ds[var].values[~solved]))
        try:
            contact = ir.contact_speed_map(arm, arm.task, contact_area_cm2=1.0)
        except ValueError as err:        # a planar task without the default vertical approach
            assert "direction" in str(err), err
        else:
            ok = np.isin(contact.status.values, ir.SOLVED)
            assert np.all(np.isfinite(contact.permissible_speed.values[ok]))
        for cycle in ir.design_cycles(arm)[:1]:
            try:
                ir.cycle_torques(arm, cycle)
            except ValueError as err:    # a clear refusal names the cycle and the move
                assert str(err).startswith(f"cycle '{cycle.name}'"), err
