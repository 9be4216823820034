"""Parameter paths and sweeps (``ir.Sweep``, ``arm.with_values``, ``ir.parameter_paths``).

What is checked, and against what:
- a sweep variant's scores equal the scores of the same design built by hand (the design
  dict edited here, field by field, from the documented meaning of each path) and scored
  directly with ``ir.metric_map`` + ``ir.design_scores``;
- derived link paths: link lengths, joint offsets, tube lengths and point-mass positions
  checked against arithmetic done here (l1 = R / (1 + rho), l2 = R rho / (1 + rho));
- moving a point mass along a link: the change of the static shoulder torque with the
  arm held horizontal is m g (x_old - x_new) (moment of a weight about a pivot: common
  practice, no source; g = 9.80665 m/s^2, 3rd CGPM 1901 [C], references.md item 7);
- the dask.distributed path gives the same Dataset as a one-thread pool
  (``xarray.testing.assert_identical``).
"""

import copy
from concurrent.futures import ThreadPoolExecutor
from pathlib import Path

import numpy as np
import pytest
import xarray as xr

import inertia_review as ir

DESIGNS = Path(__file__).resolve().parent.parent / "designs"
G_N = 9.80665        # standard gravity, 3rd CGPM (1901) [C]
SCORES = list(ir.SCORE_COLUMNS)


@pytest.fixture(scope="module")
def sorter():
    return ir.load_design(DESIGNS / "sorter_planar.toml")


@pytest.fixture(scope="module")
def task():
    # a coarse copy of the design's own task region (6 x 5 points), same acceleration/approach
    region = ir.Rectangle((0.30, 0.0, 0.10), ((1.0, 0.0, 0.0), (0.0, 0.0, 1.0)), (0.30, 0.24),
                          0.06)
    return ir.Task(region, accel_mps2=3.0, payload_kg=None, approach=(0.0, 0.0, -1.0))


def run(sweep):
    with ThreadPoolExecutor(1) as pool:
        return sweep.run(executor=pool)


def hand_lengths(spec, l1, l2):
    """The sorter design dict with link lengths l1, l2 set by hand (both links are tubes with
    a point mass at their distal end, the tool at the end of link 2)."""
    d = copy.deepcopy(spec)
    d["joints"][1]["xyz_m"] = [l1, 0.0, 0.0]
    d["tool"]["xyz_m"] = [l2, 0.0, 0.0]
    for joint, length in zip(d["joints"], (l1, l2)):
        joint["link"]["tube"]["length_m"] = length
        joint["link"]["point_masses"][0]["xyz_m"] = [length, 0.0, 0.0]
    return ir.Arm.from_dict(d)


def direct_scores(arm, task):
    return ir.design_scores(ir.metric_map(arm, task))


def assert_row(results, sel, expected):
    row = results.sel(sel)
    for key in SCORES:
        got = row[key].item()
        want = expected[key]
        if isinstance(want, str):
            assert got == want, key
        elif np.isnan(want):
            assert np.isnan(got), key
        else:
            assert got == pytest.approx(want, rel=1e-9, abs=1e-12), key
    assert row["error"].item() == ""


# ---------------------------------------------------------------------------
# variants equal designs built by hand
# ---------------------------------------------------------------------------
def test_reach_and_ratio_grid_equals_hand_built(sorter, task):
    reaches, ratios = [0.50, 0.56], [0.6, 1.0]
    sweep = run(ir.Sweep(sorter, vary={"derived.reach_m": reaches, "derived.link_ratio": ratios},
                         region=task, progress=False))
    res = sweep.results_
    assert res["gci"].dims == ("derived.reach_m", "derived.link_ratio")
    assert res["gci"].shape == (2, 2)
    assert np.array_equal(res["derived.reach_m"].values, reaches)
    assert np.array_equal(res["derived.link_ratio"].values, ratios)
    assert res.attrs["n_variants"] == 4 and res.attrs["n_failed"] == 0
    spec = sorter.to_dict()
    for reach in reaches:
        for ratio in ratios:
            l1, l2 = reach / (1.0 + ratio), reach * ratio / (1.0 + ratio)
            expected = direct_scores(hand_lengths(spec, l1, l2), task)
            assert_row(res, {"derived.reach_m": reach, "derived.link_ratio": ratio}, expected)


def test_mass_variants_equal_edited_dict(sorter, task):
    masses = [0.1, 0.3, 0.6]
    sweep = run(ir.Sweep(sorter, vary={"joints[elbow].link.point_masses[0].mass_kg": masses},
                         region=task, keep_maps=True, progress=False))
    res = sweep.results_
    name = "joints[elbow].link.point_masses[0].mass_kg"
    assert res["gci"].dims == (name,)
    for i, m in enumerate(masses):
        d = sorter.to_dict()
        d["joints"][1]["link"]["point_masses"][0]["mass_kg"] = m
        arm = ir.Arm.from_dict(d)
        direct = ir.metric_map(arm, task)
        assert_row(res, {name: m}, ir.design_scores(direct))
        xr.testing.assert_allclose(sweep.maps_[i], direct, rtol=1e-12)
    # a heavier gripper mass lowers the headroom (checked from the hand-built designs too)
    assert np.all(np.diff(res["headroom_worst"].values) < 0)


def test_variants_list(sorter, task):
    variants = [{"tool.payload_kg": 0.0}, {"tool.payload_kg": 0.4},
                {"joints[0].link.tube.outer_diameter_m": 0.05}]
    res = run(ir.Sweep(sorter, variants=variants, region=task, progress=False)).results_
    assert res["gci"].dims == ("variant",)
    assert list(res["variant"].values) == [0, 1, 2]
    # missing parameters take the base design's value
    assert list(res["tool.payload_kg"].values) == [0.0, 0.4, 0.1]
    assert list(res["joints[0].link.tube.outer_diameter_m"].values) == [0.04, 0.04, 0.05]
    for i, values in enumerate(variants):
        d = sorter.to_dict()
        if "tool.payload_kg" in values:
            d["tool"]["payload_kg"] = values["tool.payload_kg"]
        else:
            d["joints"][0]["link"]["tube"]["outer_diameter_m"] = 0.05
        assert_row(res, {"variant": i}, direct_scores(ir.Arm.from_dict(d), task))
    # payload only adds mass: 0.4 - 0.0 kg (by hand)
    assert res["moving_mass_kg"].values[1] - res["moving_mass_kg"].values[0] == pytest.approx(0.4)


def test_sweep_stores_only_until_run(sorter, task):
    sweep = ir.Sweep(sorter, vary={"tool.payload_kg": [0.1]}, region=task, progress=False)
    assert not hasattr(sweep, "results_")
    assert sweep.run(executor=ThreadPoolExecutor(1)) is sweep
    assert hasattr(sweep, "results_")


def test_sweep_defaults_to_design_task(sorter):
    # the design's own [task] (0.30 x 0.24 m at 5 mm: 61 x 49 points) is used without `region`
    res = run(ir.Sweep(sorter, vary={"tool.payload_kg": [0.1]}, progress=False)).results_
    expected = direct_scores(sorter, sorter.task)
    assert_row(res, {"tool.payload_kg": 0.1}, expected)


# ---------------------------------------------------------------------------
# derived and direct parameter paths
# ---------------------------------------------------------------------------
def test_link_length_path_scales_the_link(sorter):
    arm = sorter.with_values({"joints[0].link_length_m": 0.40})
    d = arm.to_dict()
    assert d["joints"][1]["xyz_m"] == pytest.approx([0.40, 0.0, 0.0])
    assert d["joints"][0]["link"]["tube"]["length_m"] == pytest.approx(0.40)
    assert d["joints"][0]["link"]["point_masses"][0]["xyz_m"] == pytest.approx([0.40, 0.0, 0.0])
    # the other link is untouched
    assert d["joints"][1]["link"] == sorter.to_dict()["joints"][1]["link"]
    assert d["tool"]["xyz_m"] == [0.24, 0.0, 0.0]
    # the last link's length is the tool offset
    d = sorter.with_values({"joints[elbow].link_length_m": 0.30}).to_dict()
    assert d["tool"]["xyz_m"] == pytest.approx([0.30, 0.0, 0.0])
    assert d["joints"][1]["link"]["tube"]["length_m"] == pytest.approx(0.30)
    assert d["joints"][1]["link"]["point_masses"][0]["xyz_m"] == pytest.approx([0.30, 0.0, 0.0])
    # and the tool really reaches further: stretched out along world x (q = 0)
    assert sorter.with_values({"joints[elbow].link_length_m": 0.30}).tool_position(
        np.zeros(2)) == pytest.approx([0.62, 0.0, 0.0])


def test_link_length_keeps_explicit_mass_and_inertia():
    arm = ir.planar_chain([0.5, 0.4], [2.0, 1.0])
    d0 = arm.to_dict()
    d = arm.with_values({"joints[0].link_length_m": 0.6}).to_dict()
    assert d["joints"][1]["xyz_m"] == pytest.approx([0.6, 0.0, 0.0])
    assert d["joints"][0]["link"]["com_m"] == pytest.approx([0.3, 0.0, 0.0])   # 0.25 * 0.6/0.5
    assert d["joints"][0]["link"]["mass_kg"] == d0["joints"][0]["link"]["mass_kg"]
    assert d["joints"][0]["link"]["inertia_kgm2"] == d0["joints"][0]["link"]["inertia_kgm2"]


@pytest.mark.parametrize("values, l1, l2", [
    ({"derived.reach_m": 0.70}, 0.40, 0.30),            # ratio 0.24/0.32 = 0.75 kept
    ({"derived.link_ratio": 1.0}, 0.28, 0.28),          # reach 0.56 kept
    ({"derived.reach_m": 0.60, "derived.link_ratio": 0.5}, 0.40, 0.20),
])
def test_derived_paths(sorter, values, l1, l2):
    d = sorter.with_values(values).to_dict()
    assert d["joints"][1]["xyz_m"] == pytest.approx([l1, 0.0, 0.0])
    assert d["tool"]["xyz_m"] == pytest.approx([l2, 0.0, 0.0])
    assert d["joints"][0]["link"]["tube"]["length_m"] == pytest.approx(l1)
    assert d["joints"][1]["link"]["tube"]["length_m"] == pytest.approx(l2)
    assert d["joints"][0]["link"]["point_masses"][0]["xyz_m"] == pytest.approx([l1, 0.0, 0.0])
    assert d["joints"][1]["link"]["point_masses"][0]["xyz_m"] == pytest.approx([l2, 0.0, 0.0])
    paths = ir.parameter_paths(ir.Arm.from_dict(d))
    assert paths["derived.reach_m"] == pytest.approx(l1 + l2)
    assert paths["derived.link_ratio"] == pytest.approx(l2 / l1)


def test_point_mass_along_moves_the_mass(sorter):
    arm = sorter.with_values({"joints[shoulder].link.point_masses[0].along": 0.25})
    pm = arm.to_dict()["joints"][0]["link"]["point_masses"][0]
    assert pm["xyz_m"] == pytest.approx([0.08, 0.0, 0.0])          # 0.25 * 0.32 m
    assert pm["mass_kg"] == 0.5
    assert arm.moving_mass == pytest.approx(sorter.moving_mass)
    # statics: arm stretched horizontally (q = 0 in the vertical x-z plane); the 0.5 kg mass
    # moved from x = 0.32 to 0.08 m lowers the shoulder's holding torque by m g dx
    dg = np.abs(sorter.gravity_torque(np.zeros(2))) - np.abs(arm.gravity_torque(np.zeros(2)))
    assert dg[0] == pytest.approx(0.5 * G_N * (0.32 - 0.08), rel=1e-12)
    assert dg[1] == pytest.approx(0.0, abs=1e-12)


def test_parameter_paths_lists_values(sorter):
    paths = ir.parameter_paths(sorter)
    assert paths["tool.payload_kg"] == 0.1
    assert paths["joints[elbow].link.tube.length_m"] == 0.24
    assert paths["joints[shoulder].link_length_m"] == pytest.approx(0.32)
    assert paths["derived.reach_m"] == pytest.approx(0.56)
    assert paths["derived.link_ratio"] == pytest.approx(0.75)
    assert paths["mount.rpy_deg[0]"] == 90.0
    # every listed path can be swept: setting it to its own value changes nothing
    for path in ("tool.payload_kg", "joints[elbow].actuator.gear_ratio", "mount.rpy_deg[0]"):
        same = sorter.with_values({path: paths[path]})
        assert same.to_dict() == sorter.to_dict(), path


# ---------------------------------------------------------------------------
# invalid variants and bad paths
# ---------------------------------------------------------------------------
def test_invalid_variant_is_recorded(sorter, task):
    name = "joints[elbow].link.point_masses[0].mass_kg"
    res = run(ir.Sweep(sorter, vary={name: [0.2, -0.1, 0.4]}, region=task,
                       progress=False)).results_
    errors = list(res["error"].values)
    assert errors[0] == "" and errors[2] == ""
    assert "joints[1].link.point_masses[0].mass_kg" in errors[1]
    assert ">= 0" in errors[1]
    for key in SCORES:
        value = res[key].values[1]
        assert value == "" if key == "headroom_worst_joint" else np.isnan(value), key
    assert res.attrs["n_failed"] == 1
    # the valid variants were still scored, and equal direct scoring
    d = sorter.to_dict()
    d["joints"][1]["link"]["point_masses"][0]["mass_kg"] = 0.4
    assert_row(res, {name: 0.4}, direct_scores(ir.Arm.from_dict(d), task))


def test_invalid_derived_value_is_recorded(sorter, task):
    res = run(ir.Sweep(sorter, vary={"derived.reach_m": [0.5, -0.2]}, region=task,
                       progress=False)).results_
    assert res["error"].values[0] == ""
    assert "derived.reach_m" in res["error"].values[1]
    assert np.isnan(res["gci"].values[1]) and np.isfinite(res["gci"].values[0])


@pytest.mark.parametrize("path, message", [
    ("joints[elbw].link.tube.length_m", r"joints\[elbw\]\.link\.tube\.length_m: no joint "
                                        r"named 'elbw'; did you mean 'elbow'\?"),
    ("tool.payload_kgg", r"tool\.payload_kgg: 'payload_kgg' does not exist"),
    ("joints[5].link.tube.length_m", r"joints\[5\]\.link\.tube\.length_m: joint index 5 is out "
                                     r"of range for 2 joints"),
    ("joints[1].link.point_masses[3].mass_kg", r"joints\[1\]\.link\.point_masses\[3\]\.mass_kg: "
                                               r".*point_masses\[3\].* does not exist"),
    ("mount.rpy_deg[7]", r"mount\.rpy_deg\[7\]: .*not an entry"),
    ("derived.reach", r"derived\.reach: unknown derived value"),
    ("joints[elbow].name", r"joints\[elbow\]\.name: .*not a number"),
])
def test_bad_paths_raise_naming_the_path(sorter, task, path, message):
    sweep = ir.Sweep(sorter, vary={path: [1.0]}, region=task, progress=False)   # stores only
    with pytest.raises(ir.DesignError, match=message) as info:
        run(sweep)
    assert info.value.problems[0][0] == path
    with pytest.raises(ir.DesignError, match=message):
        sorter.with_values({path: 1.0})


def test_bad_sweep_arguments(sorter, task):
    with pytest.raises(ValueError, match=r"either `vary`.*or `variants`"):
        run(ir.Sweep(sorter, region=task, progress=False))
    with pytest.raises(ValueError, match=r"either `vary`.*or `variants`"):
        run(ir.Sweep(sorter, vary={"tool.payload_kg": [0.1]}, variants=[{}], region=task,
                     progress=False))
    with pytest.raises(ValueError, match=r"non-empty list of finite numbers"):
        run(ir.Sweep(sorter, vary={"tool.payload_kg": [np.nan]}, region=task, progress=False))
    bare = ir.planar_chain([0.5, 0.4], [1.0, 1.0])
    with pytest.raises(ValueError, match=r"no \[task\] region: pass `region`"):
        run(ir.Sweep(bare, vary={"tool.payload_kg": [0.1]}, progress=False))


def test_best(sorter, task):
    masses = [0.1, 0.3, 0.6]
    sweep = run(ir.Sweep(sorter, vary={"tool.payload_kg": masses}, region=task, progress=False))
    values, score = sweep.best("headroom_worst")
    headroom = sweep.results_["headroom_worst"].values
    assert score == headroom.max()
    assert values == {"tool.payload_kg": masses[int(np.argmax(headroom))]}
    values, score = sweep.best("moving_mass_kg", maximize=False)
    assert values == {"tool.payload_kg": 0.1}
    with pytest.raises(KeyError, match=r"No score named 'speed'"):
        sweep.best("speed")


# ---------------------------------------------------------------------------
# dask.distributed executor
# ---------------------------------------------------------------------------
def test_dask_client_equals_thread_pool(sorter, task):
    distributed = pytest.importorskip("dask.distributed")
    vary = {"derived.reach_m": [0.5, 0.56],
            "joints[elbow].link.point_masses[0].mass_kg": [0.2, -0.1]}   # one invalid column
    local = run(ir.Sweep(sorter, vary=vary, region=task, progress=False, chunk_size=1)).results_
    with distributed.LocalCluster(n_workers=1, threads_per_worker=1, processes=False,
                                  dashboard_address=None) as cluster, \
            distributed.Client(cluster) as client:
        remote = ir.Sweep(sorter, vary=vary, region=task, progress=False,
                          chunk_size=1).run(executor=client).results_
    xr.testing.assert_identical(remote, local)
    assert remote.attrs["n_failed"] == 2


@pytest.mark.parametrize("grid", [True, False])
def test_sweep_results_round_trip_through_netcdf(sorter, task, grid, tmp_path):
    if grid:
        sweep = ir.Sweep(sorter, vary={"derived.link_ratio": [0.8, 1.2],
                                       "tool.payload_kg": [0.0, 0.2]}, region=task, progress=False)
    else:
        sweep = ir.Sweep(sorter, variants=[{"derived.link_ratio": 0.8}, {"tool.payload_kg": 0.2}],
                         region=task, progress=False)
    results = run(sweep).results_
    back = ir.load_results(ir.save_results(results, tmp_path / "sweep.nc"))
    xr.testing.assert_identical(back, results)
    assert back.attrs["parameters"] == results.attrs["parameters"]
