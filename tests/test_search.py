"""Batched variants and the design search (small, seeded problems)."""

import numpy as np
import pytest

import inertia_review as ir
from inertia_review.studies._maps import map_arrays
from inertia_review.studies._scores import SCORE_COLUMNS, scores_from_arrays
from inertia_review.studies._search import DesignSearch, pareto_mask
from inertia_review.studies._variants import score_variants

SMALL = ir.Rectangle((0.38, 0.05, 0.20), ((1.0, 0.0, 0.0), (0.0, 0.0, 1.0)), (0.30, 0.30), 0.05)


def _per_variant(arm, values, region, accel):
    a = arm.with_values(values)
    arrays, _, _, _, a2, attrs = map_arrays(a, region, accel_mps2=accel)
    return scores_from_arrays(arrays, attrs, a2.joint_names)


@pytest.mark.parametrize("exact", [True, False])
def test_batched_variants_equal_per_variant_path(exact):
    arm = ir.load_design("designs/kestrel_a.toml")
    variants = [{"derived.link_ratio": r, "mount.rpy_deg[1]": t, "tool.payload_kg": 0.25}
                for r in (0.8, 0.9, 1.0) for t in (0.0, 10.0)]
    batched = score_variants(arm, variants, SMALL, accel_mps2=2.0, exact=exact)
    for values, (row, error) in zip(variants, batched):
        assert error == ""
        ref = _per_variant(arm, values, SMALL, 2.0)
        assert row["headroom_worst_joint"] == ref["headroom_worst_joint"]
        for column in SCORE_COLUMNS:
            if column != "headroom_worst_joint":
                np.testing.assert_allclose(row[column], ref[column], rtol=1e-7, atol=1e-10,
                                           err_msg=column)


def test_invalid_variant_is_reported_not_raised():
    arm = ir.load_design("designs/kestrel_a.toml")
    out = score_variants(arm, [{"tool.payload_kg": -1.0}, {"tool.payload_kg": 0.2}], SMALL)
    assert out[0][0] is None and "payload_kg" in out[0][1]
    assert out[1][0] is not None


def test_search_finds_isotropic_proportion():
    # Salisbury & Craig (1982), references.md item 2: a planar two-link arm has an isotropic
    # Jacobian only for l1 = sqrt(2) l2 (at q2 = +-135 deg, the tool at distance l2 from the
    # base). With l2 fixed and the region the single point at distance l2, the best l1 of the
    # isotropy index is sqrt(2) l2.
    arm = ir.planar_chain([0.8, 0.5], [1.0, 1.0], plane_tilt_deg=90.0, name="sc")
    region = ir.PointSet(((0.5, 0.0, 0.0),))
    search = DesignSearch(arm, {"joints[0].link_length_m": (0.3, 1.2)}, ["max:gci"],
                          region=region, generations=40, population=12, progress=False)
    search.run(random_state=1)
    assert abs(search.best_["joints[0].link_length_m"] - np.sqrt(2.0) * 0.5) < 1e-3


def _grid_problem():
    arm = ir.planar_chain([0.4, 0.3], [1.0, 0.8], motor_masses_kg=[0.0, 0.5],
                          plane_tilt_deg=90.0, name="grid")
    region = ir.Rectangle((0.35, 0.15, 0.0), ((1.0, 0.0, 0.0), (0.0, 1.0, 0.0)), (0.2, 0.2), 0.05)
    space = {"joints[0].link_length_m": (0.2, 0.6), "joints[1].link_length_m": (0.2, 0.6)}
    return arm, region, space


def test_search_matches_dense_grid_with_a_fifth_of_its_evaluations():
    # held-aside check: a dense 41 x 41 grid of the same problem (common practice, no source)
    arm, region, space = _grid_problem()
    cons = ["reachable_fraction >= 1"]
    search = DesignSearch(arm, space, ["max:gci"], cons, region=region, generations=25,
                          population=12, progress=False).run(random_state=3)
    l1, l2 = np.meshgrid(np.linspace(0.2, 0.6, 41), np.linspace(0.2, 0.6, 41))
    grid = [{"joints[0].link_length_m": a, "joints[1].link_length_m": b}
            for a, b in zip(l1.ravel(), l2.ravel())]
    rows = [r for r, _ in score_variants(arm, grid, region)]
    best_grid = max(r["gci"] for r in rows if r["reachable_fraction"] >= 1.0)
    ds = search.results_
    assert ds.sizes["evaluation"] <= len(grid) / 5
    best = float(ds["gci"].values[ds["pareto"].values][0])
    assert best >= best_grid * (1 - 0.005)
    # constraints never violated by a reported design
    assert np.all(ds["reachable_fraction"].values[ds["feasible"].values] >= 1.0)
    assert search.design().with_values({}) is not None


def test_pareto_set_is_non_dominated_by_brute_force(tmp_path):
    arm, region, space = _grid_problem()
    search = DesignSearch(arm, space, ["max:gci", "min:moving_mass_kg"],
                          ["reachable_fraction >= 1", "derived.reach_m <= 0.9"], region=region,
                          generations=8, population=12, progress=False).run(random_state=0)
    ds = search.results_
    feas = ds["feasible"].values
    cost = np.stack([-ds["gci"].values, ds["moving_mass_kg"].values], axis=1)
    pareto = ds["pareto"].values
    assert pareto.any() and np.all(feas[pareto])
    for i in np.flatnonzero(feas):             # brute force over every feasible pair
        dominated = any(np.all(cost[j] <= cost[i]) and np.any(cost[j] < cost[i])
                        for j in np.flatnonzero(feas))
        assert dominated != pareto[i]
    for arm_p in search.pareto_designs():
        assert arm_p.to_dict()["joints"][1]["xyz_m"][0] + 0 >= 0.0
        spec = arm_p.to_dict()
        reach = np.linalg.norm(spec["joints"][1]["xyz_m"]) + np.linalg.norm(spec["tool"]["xyz_m"])
        assert reach <= 0.9 + 1e-12
    path = search.save_design(tmp_path / "best.toml")
    assert ir.load_design(path).to_dict()["joints"][1]["xyz_m"] == search.design().to_dict()["joints"][1]["xyz_m"]
    ir.save_results(ds, tmp_path / "search.nc")
    back = ir.load_results(tmp_path / "search.nc")
    assert np.array_equal(back["pareto"].values, pareto)


def test_pareto_mask_small_case():
    costs = np.array([[0.0, 1.0], [1.0, 0.0], [1.0, 1.0], [0.5, 0.5]])
    assert pareto_mask(costs).tolist() == [True, True, False, True]


def test_bad_input_names_the_path():
    arm, region, space = _grid_problem()
    with pytest.raises(ir.DesignError, match=r"joints\[7\]"):
        DesignSearch(arm, {"joints[7].link_length_m": (0.2, 0.3)}, ["max:gci"],
                     region=region).run()
    with pytest.raises(ir.DesignError, match=r"tool.payload_kg"):
        DesignSearch(arm, {"tool.payload_kg": (-1.0, 1.0)}, ["max:gci"], region=region).run()
    with pytest.raises(ValueError, match="stiffness_x"):
        DesignSearch(arm, space, ["max:stiffness_x"], region=region).run()
    with pytest.raises(ValueError, match="infeasible problem.*derived.reach_m <= 0.1"):
        DesignSearch(arm, space, ["max:gci"], ["derived.reach_m <= 0.1"], region=region,
                     generations=2, population=6, progress=False).run(random_state=0)


def test_paths_that_overwrite_each_other_are_refused_before_any_evaluation():
    """A link vector's entry and that link's length both set the link: a result would not
    describe its design (the table would report a value the evaluated arm does not have)."""
    arm = ir.demo_design("kestrel_a")
    coupled = {"joints[elbow].xyz_m[0]": (0.25, 0.45), "joints[shoulder].link_length_m": (0.3, 0.4)}
    with pytest.raises(ir.DesignError, match=r"joints\[elbow\]\.xyz_m\[0\]: set to 0.316667 .*"
                                             r"'joints\[shoulder\].link_length_m'"):
        DesignSearch(arm, coupled, ["max:gci"], region=SMALL, progress=False).run(random_state=0)
    with pytest.raises(ir.DesignError, match="change the same quantity"):
        ir.global_sensitivity(arm, coupled, "gci", region=SMALL)
    # one at a time moves each path alone, so nothing is overwritten there
    table = ir.one_at_a_time(arm, coupled, "gci", region=SMALL)
    assert list(table.index) == list(coupled)
    # a link's length with the link ratio is met together, and both read back exactly
    values = {"joints[shoulder].link_length_m": 0.30, "derived.link_ratio": 1.1,
              "mount.rpy_deg[1]": 12.0}
    got = ir.parameter_paths(arm.with_values(values))
    assert all(got[p] == pytest.approx(v, rel=1e-12) for p, v in values.items())
    assert got["joints[elbow].link_length_m"] == pytest.approx(0.33, rel=1e-12)


def test_discrete_choices_are_searched_and_reported_exactly():
    # a gear ratio from a catalogue list: every evaluated value is one of the choices,
    # and the proposal written out carries it
    arm = ir.load_design("designs/kestrel_a.toml")
    choices = [50.0, 80.0, 120.0]
    search = DesignSearch(arm, {"joints[shoulder].actuator.gear_ratio": choices,
                                "joints[shoulder].link_length_m": (0.30, 0.40)},
                          ["max:gci", "max:headroom_worst"], region=SMALL, generations=2,
                          population=6, progress=False).run(random_state=2)
    used = search.results_["joints[shoulder].actuator.gear_ratio"].values
    assert set(np.unique(used)) <= set(choices)
    i = int(np.flatnonzero(search.results_["pareto"].values)[0])
    values = ir.parameter_paths(search.design(i))
    assert values["joints[shoulder].actuator.gear_ratio"] == used[i]


@pytest.mark.parametrize("entry, reason", [(["steel", "aluminium"], "choices must be numbers"),
                                           ([80.0], "at least two finite numbers"),
                                           ([80.0, -5.0], "-5 of the search space is not "
                                                          "accepted")])
def test_bad_choices_name_the_path(entry, reason):
    arm = ir.load_design("designs/kestrel_a.toml")
    search = DesignSearch(arm, {"joints[shoulder].actuator.gear_ratio": entry}, ["max:gci"],
                          region=SMALL, progress=False)
    with pytest.raises(ir.DesignError, match=r"joints\[shoulder\]\.actuator\.gear_ratio"):
        try:
            search.run()
        except ir.DesignError as exc:
            assert reason in str(exc)
            raise
