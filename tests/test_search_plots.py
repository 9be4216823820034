"""plot_pareto on a small seeded two-objective search (Agg backend)."""

import numpy as np
import pytest

import inertia_review as ir

L1, M1 = "joints[0].link_length_m", "joints[0].link.mass_kg"


@pytest.fixture
def plt():
    import matplotlib

    matplotlib.use("Agg")
    from matplotlib import pyplot

    yield pyplot
    pyplot.close("all")


@pytest.fixture(scope="module")
def search():
    arm = ir.planar_chain([0.4, 0.3], [1.0, 0.8], motor_masses_kg=[0.0, 0.5],
                          plane_tilt_deg=90.0, name="pareto")
    region = ir.Rectangle((0.35, 0.15, 0.0), ((1.0, 0.0, 0.0), (0.0, 1.0, 0.0)), (0.2, 0.2), 0.1)
    return ir.DesignSearch(arm, {L1: (0.2, 0.6), M1: (0.5, 1.5)},
                           ["max:gci", "min:moving_mass_kg"], ["reachable_fraction >= 1"],
                           region=region, generations=4, population=10,
                           progress=False).run(random_state=0)


def test_pareto_points_are_the_non_dominated_feasible_designs(plt, search, tmp_path):
    import inertia_review.plots as irp

    ds = search.results_
    art = irp.plot_pareto(search, "moving_mass_kg", "gci")
    # brute force over the drawn Pareto points: none is dominated by any feasible design
    # (both objectives read back from the artists, in kg and 1)
    pts = art.pareto.get_offsets()
    feas = ds["feasible"].values
    cost = np.stack([ds["moving_mass_kg"].values, -ds["gci"].values], axis=1)[feas]
    assert len(pts) == int(ds["pareto"].sum()) > 0
    for mass, gci in np.asarray(pts):
        c = np.array([mass, -gci])
        assert not np.any(np.all(cost <= c, axis=1) & np.any(cost < c, axis=1))
    np.testing.assert_allclose(pts, np.stack([ds["moving_mass_kg"].values[art.indices],
                                              ds["gci"].values[art.indices]], axis=1))
    assert np.all(np.diff(art.front.get_xdata()) >= 0)
    assert len(art.feasible.get_offsets()) == int(feas.sum())
    assert art.ax.get_xlabel() == "moving mass [kg]"
    out = tmp_path / "pareto.png"
    art.ax.figure.savefig(out, dpi=60)
    image = plt.imread(out)
    assert np.ptp(image[..., :3]) > 0.5


def test_pareto_parameter_axis_in_mm_and_bad_names(plt, search):
    import inertia_review.plots as irp

    _, ax = plt.subplots()
    art = irp.plot_pareto(search.results_, L1, "gci", ax=ax)
    assert art.ax is ax
    assert art.ax.get_xlabel().endswith("[mm]")
    np.testing.assert_allclose(art.pareto.get_offsets()[:, 0],
                               1000.0 * search.results_[L1].values[art.indices])
    with pytest.raises(KeyError, match="no_such"):
        irp.plot_pareto(search, "no_such", "gci")
    with pytest.raises(ValueError, match="DesignSearch"):
        irp.plot_pareto(search.results_.drop_vars("pareto"), "gci", "moving_mass_kg")
