"""Discrete choices by name: a tube's material as a parameter path and in the design search.

Outside check (the closed form of a round tube's mass): m = rho * pi / 4 * (D^2 - d^2) * L,
d = D - 2 t (hollow cylinder; Machinery's Handbook, 31st ed., Industrial Press 2020,
pp. 236-237, as in ``tests/test_reference_tube.py``), with the handbook densities written
out here, not read from the package's table:
- aluminium 6061: 2700 kg/m^3 (Aluminum Association typical values; Gere, Mechanics of
  Materials, 5th ed.) [C];
- structural steel: 7850 kg/m^3 (EN 1993-1-1:2005 sec. 3.2.6; Gere) [C];
- carbon fibre / epoxy, Vf = 0.60: 1700 kg/m^3 (Callister & Rethwisch, Fundamentals of
  Materials Science and Engineering, 3rd ed., Wiley 2008, App. B, Table B.1) [C].
The moving-mass score is the sum of link, point and payload masses (its definition in
``SCORE_COLUMNS``), so a material change moves it by exactly the tube's mass difference.

kestrel_a is the invented demo design of ``designs/`` (no real product): its elbow link is
an aluminium tube, OD 40 mm, wall 2.5 mm, 0.30 m long, from the elbow to the tool point.
The search is tiny and seeded (a coarse 100 mm grid, 3 generations of 8).
"""

from concurrent.futures import ThreadPoolExecutor
from pathlib import Path

import numpy as np
import pytest
import xarray as xr

import inertia_review as ir

DESIGNS = Path(__file__).resolve().parent.parent / "designs"
REGION = ir.Rectangle((0.38, 0.05, 0.20), ((1.0, 0.0, 0.0), (0.0, 0.0, 1.0)), (0.30, 0.30), 0.10)
MATERIAL = "joints[elbow].link.tube.material"
LENGTH = "joints[elbow].link_length_m"
NAMES = ["aluminium_6061", "structural_steel", "cfrp"]
SPACE = {MATERIAL: NAMES, LENGTH: (0.25, 0.35)}
# handbook densities [kg/m^3], sources in the module docstring
RHO = {"aluminium_6061": 2700.0, "structural_steel": 7850.0, "cfrp": 1700.0}
OD, WALL, L0 = 0.040, 0.0025, 0.30          # kestrel_a's elbow tube


def tube_mass(rho, length):
    """Machinery's Handbook 31st ed. pp. 236-237: rho * pi / 4 * (D^2 - d^2) * L [kg]."""
    inner = OD - 2.0 * WALL
    return rho * np.pi / 4.0 * (OD**2 - inner**2) * length


@pytest.fixture(scope="module")
def arm():
    return ir.load_design(DESIGNS / "kestrel_a.toml")


@pytest.fixture(scope="module")
def search(arm):
    return ir.DesignSearch(arm, SPACE, ["max:gci", "min:moving_mass_kg"], region=REGION,
                           generations=3, population=8, progress=False).run(random_state=4)


# --------------------------------------------------------------------------
# the path itself
# --------------------------------------------------------------------------
def test_material_path_reads_and_sets_a_name(arm):
    assert ir.parameter_paths(arm)[MATERIAL] == "aluminium_6061"
    steel = arm.with_values({MATERIAL: "structural_steel"})
    assert ir.parameter_paths(steel)[MATERIAL] == "structural_steel"
    assert steel.to_dict()["joints"][2]["link"]["tube"]["material"] == "structural_steel"
    # only the elbow tube changed: the moving mass grows by the tube's density difference
    expected = tube_mass(7850.0, L0) - tube_mass(2700.0, L0)
    assert steel.moving_mass - arm.moving_mass == pytest.approx(expected, rel=1e-12)


def test_numeric_paths_stay_numbers(arm):
    paths = ir.parameter_paths(arm)
    names = {p for p, v in paths.items() if isinstance(v, str)}
    assert names == {"joints[shoulder].link.tube.material", MATERIAL}
    assert all(isinstance(v, float) for p, v in paths.items() if p not in names)


@pytest.mark.parametrize("value, words", [
    ("cfpr", ["did you mean 'cfrp'?", "aluminium_6061", "structural_steel"]),
    ("titanium", ["unknown name 'titanium'", "known: aluminium_6061, structural_steel, cfrp"]),
    (2700.0, ["holds a name", "not a number"]),
])
def test_unknown_material_names_the_path_and_the_known_names(arm, value, words):
    with pytest.raises(ir.DesignError) as info:
        arm.with_values({MATERIAL: value})
    assert info.value.problems[0][0] == MATERIAL
    for word in words:
        assert word in info.value.problems[0][1]


def test_name_on_a_numeric_path_is_refused(arm):
    with pytest.raises(ir.DesignError) as info:
        arm.with_values({"tool.payload_kg": "cfrp"})
    assert info.value.problems[0][0] == "tool.payload_kg"
    assert "holds a number" in info.value.problems[0][1]


# --------------------------------------------------------------------------
# the design search
# --------------------------------------------------------------------------
def test_every_evaluated_material_is_a_choice(search):
    ds = search.results_
    chosen = [str(v) for v in ds[MATERIAL].values]
    assert set(chosen) <= set(NAMES)
    assert len(set(chosen)) >= 2               # the search did try more than one material
    lengths = ds[LENGTH].values
    assert np.all((lengths >= 0.25) & (lengths <= 0.35))


def test_pareto_rows_describe_their_designs(search, arm):
    ds = search.results_
    rows = np.flatnonzero(ds["pareto"].values)
    assert rows.size >= 2
    for i in rows:
        design = search.design(int(i))
        values = ir.parameter_paths(design)
        assert values[MATERIAL] == str(ds[MATERIAL].values[i])
        assert values[LENGTH] == pytest.approx(float(ds[LENGTH].values[i]), rel=1e-12)
        # closed form: baseline mass with the aluminium tube of 0.30 m swapped for the row's
        # tube (its length follows the link's, here equal to it)
        rho, length = RHO[values[MATERIAL]], float(ds[LENGTH].values[i])
        expected = arm.moving_mass - tube_mass(2700.0, L0) + tube_mass(rho, length)
        assert design.moving_mass == pytest.approx(expected, rel=1e-12)
        assert float(ds["moving_mass_kg"].values[i]) == pytest.approx(expected, rel=1e-9)


def test_saved_design_names_the_material(search, tmp_path):
    i = int(np.flatnonzero(search.results_["pareto"].values)[0])
    path = search.save_design(tmp_path / "proposal.toml", evaluation=i)
    back = ir.load_design(path)
    assert ir.parameter_paths(back)[MATERIAL] == str(search.results_[MATERIAL].values[i])
    assert f'material = "{search.results_[MATERIAL].values[i]}"' in path.read_text()


def test_results_round_trip_netcdf_with_names(search, tmp_path):
    ds = search.results_
    target = ir.save_results(ds, tmp_path / "search.nc")
    with xr.open_dataset(target) as back:        # plain xarray, default engine
        assert [str(v) for v in back[MATERIAL].values] == [str(v) for v in ds[MATERIAL].values]
        np.testing.assert_array_equal(back[LENGTH].values, ds[LENGTH].values)
        assert back[MATERIAL].attrs["choices"] == ", ".join(NAMES)
    assert list(ir.load_results(target)[MATERIAL].values) == list(ds[MATERIAL].values)


def test_single_objective_search_takes_names(arm):
    s = ir.DesignSearch(arm, {MATERIAL: ["structural_steel", "cfrp"]}, ["min:moving_mass_kg"],
                        region=REGION, generations=2, population=4, progress=False)
    s.run(random_state=0)
    assert s.best_[MATERIAL] == "cfrp"         # the lightest of the two (1700 < 7850 kg/m^3)
    assert ir.parameter_paths(s.design())[MATERIAL] == "cfrp"


@pytest.mark.parametrize("entry, word", [
    (["aluminium_6061", "unobtainium"], "unknown name 'unobtainium'"),
    (("aluminium_6061", "cfrp"), "give a list of names"),
    ([1.0, 2.0], "give a list of names"),
    (["cfrp"], "at least two different names"),
])
def test_bad_name_choices_name_the_path(arm, entry, word):
    s = ir.DesignSearch(arm, {MATERIAL: entry}, ["max:gci"], region=REGION, progress=False)
    with pytest.raises(ir.DesignError) as info:
        s.run()
    assert info.value.problems[0][0] == MATERIAL
    assert word in info.value.problems[0][1]


def test_names_for_a_numeric_path_are_refused(arm):
    s = ir.DesignSearch(arm, {LENGTH: ["cfrp", "structural_steel"]}, ["max:gci"],
                        region=REGION, progress=False)
    with pytest.raises(ir.DesignError, match="must be numbers"):
        s.run()


def test_a_name_is_no_objective(arm):
    s = ir.DesignSearch(arm, {LENGTH: (0.25, 0.35)}, [f"max:{MATERIAL}"], region=REGION,
                        progress=False)
    with pytest.raises(ValueError, match="holds a name, not a number"):
        s.run()


# --------------------------------------------------------------------------
# sweeps and sensitivities
# --------------------------------------------------------------------------
def test_sweep_over_materials(arm):
    sweep = ir.Sweep(arm, vary={MATERIAL: ["aluminium_6061", "cfrp"]}, region=REGION,
                     progress=False).run(executor=ThreadPoolExecutor(1))
    res = sweep.results_
    assert [str(v) for v in res[MATERIAL].values] == ["aluminium_6061", "cfrp"]
    diff = float(res["moving_mass_kg"].values[0] - res["moving_mass_kg"].values[1])
    assert diff == pytest.approx(tube_mass(2700.0, L0) - tube_mass(1700.0, L0), rel=1e-9)
    values, best = sweep.best("moving_mass_kg", maximize=False)
    assert values == {MATERIAL: "cfrp"}
    assert best == pytest.approx(float(res["moving_mass_kg"].values[1]), rel=1e-12)


def test_sweep_refuses_an_unknown_name(arm):
    with pytest.raises(ir.DesignError) as info:
        ir.Sweep(arm, vary={MATERIAL: ["aluminum"]}, region=REGION, progress=False).run(
            executor=ThreadPoolExecutor(1))
    assert info.value.problems[0][0] == MATERIAL
    assert "did you mean 'aluminium_6061'?" in info.value.problems[0][1]


@pytest.mark.parametrize("study", ["one_at_a_time", "global_sensitivity"])
def test_sensitivities_need_numeric_ranges(arm, study):
    with pytest.raises(ValueError) as info:
        getattr(ir, study)(arm, {MATERIAL: ("aluminium_6061", "cfrp")}, "gci", REGION)
    assert MATERIAL in str(info.value) and "holds a name" in str(info.value)


# --------------------------------------------------------------------------
# plot and widget
# --------------------------------------------------------------------------
def test_pareto_plot_puts_names_on_the_axis(search):
    import matplotlib

    matplotlib.use("Agg")
    import matplotlib.pyplot as plt

    from inertia_review import plots

    fig, ax = plt.subplots()
    try:
        artists = plots.plot_pareto(search, MATERIAL, "gci", ax=ax)
        fig.canvas.draw()
        assert [t.get_text() for t in ax.get_xticklabels()] == NAMES
        assert ax.get_xlabel() == "elbow link tube material"
        xs = artists.pareto.get_offsets()[:, 0]
        chosen = search.results_[MATERIAL].values[artists.indices]
        assert [NAMES[int(x)] for x in xs] == [str(c) for c in chosen]
    finally:
        plt.close(fig)


def test_explorer_shows_the_chosen_name(search):
    import ipywidgets

    from inertia_review.widgets import ProposalExplorer

    try:
        explorer = ProposalExplorer(search)
        i = explorer.proposals[0]
        name = str(search.results_[MATERIAL].values[i])
        label = {v: k for k, v in explorer.choice.options}[i]
        assert f"material {name}" in label
        explorer.choice.value = i
        assert f"<td style='text-align:right'>{name}</td>" in explorer.table.value
        assert ir.parameter_paths(explorer.proposal)[MATERIAL] == name
    finally:
        ipywidgets.Widget.close_all()



def test_sliders_refuse_a_name_path(arm):
    import ipywidgets

    from inertia_review.widgets import DesignControls

    try:
        with pytest.raises(ValueError, match="holds a name"):
            DesignControls(arm, parameters=[LENGTH, MATERIAL])
    finally:
        ipywidgets.Widget.close_all()
