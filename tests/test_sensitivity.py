"""Sensitivity of a score to parameter paths (one-at-a-time and SALib), small regions."""

import numpy as np
import pytest

import inertia_review as ir

L1, L2 = "joints[0].link_length_m", "joints[1].link_length_m"
M1, M2, PAYLOAD = "joints[0].link.mass_kg", "joints[1].link.mass_kg", "tool.payload_kg"


def _arm():
    # planar two-joint arm in a vertical plane (as in tests/test_search.py): l1 = 0.8, l2 = 0.5
    return ir.planar_chain([0.8, 0.5], [1.0, 1.0], plane_tilt_deg=90.0, name="sens")


def _point(r):
    return ir.PointSet(((r, 0.0, 0.0),))


def _isotropy_2r(l1, l2, r):
    """1/kappa of the planar two-link Jacobian with the tool at distance r, by hand.

    cos q2 from the law of cosines; det J = l1 l2 |sin q2| (Yoshikawa's manipulability of
    the two-link arm, Yoshikawa 1985, references.md item 3); ||J||_F^2 = l1^2 + 2 l2^2
    + 2 l1 l2 cos q2 (expanding the four entries by hand). The singular values of a 2 x 2 matrix solve
    s^4 - ||J||_F^2 s^2 + det^2 = 0 (trace and determinant of J^T J; linear algebra).
    """
    c2 = (r * r - l1 * l1 - l2 * l2) / (2.0 * l1 * l2)
    det = l1 * l2 * np.sqrt(1.0 - c2 * c2)
    frob = l1 * l1 + 2.0 * l2 * l2 + 2.0 * l1 * l2 * c2
    root = np.sqrt(frob * frob - 4.0 * det * det)
    return np.sqrt((frob - root) / (frob + root))


def test_one_at_a_time_swing_matches_closed_form_isotropy():
    arm, r = _arm(), 0.9
    table = ir.one_at_a_time(arm, {L1: (0.6, 1.0), PAYLOAD: (0.0, 2.0)}, "gci",
                             region=_point(r))
    # one region point: the GCI is the isotropy index at that point (cell-weighted mean of one)
    row = table.loc[L1]
    np.testing.assert_allclose(row["score_low"], _isotropy_2r(0.6, 0.5, r), rtol=1e-9)
    np.testing.assert_allclose(row["score_high"], _isotropy_2r(1.0, 0.5, r), rtol=1e-9)
    np.testing.assert_allclose(row["score_baseline"], _isotropy_2r(0.8, 0.5, r), rtol=1e-9)
    np.testing.assert_allclose(row["swing"], _isotropy_2r(1.0, 0.5, r)
                               - _isotropy_2r(0.6, 0.5, r), rtol=1e-8)
    # the payload does not enter the Jacobian: zero swing, and it sorts last
    assert table.loc[PAYLOAD, "swing"] == 0.0
    assert list(table.index) == [L1, PAYLOAD]
    assert table.attrs["score"] == "gci" and table.attrs["units"] == "1"
    assert "caution" not in table.attrs


def test_one_at_a_time_reaches_the_isotropic_proportion():
    # Salisbury & Craig (1982), references.md item 2: l1 = sqrt(2) l2 with the tool at
    # distance l2 from the base gives an isotropic Jacobian (index 1)
    table = ir.one_at_a_time(_arm(), {L1: (0.5, np.sqrt(2.0) * 0.5)}, "gci", region=_point(0.5))
    np.testing.assert_allclose(table.loc[L1, "score_high"], 1.0, atol=1e-9)
    assert table.loc[L1, "score_low"] < 0.9


def test_one_at_a_time_linear_score():
    # moving mass = link masses + payload (its definition, SCORE_COLUMNS): linear, slope 1
    table = ir.one_at_a_time(_arm(), {M1: (0.5, 1.5), PAYLOAD: (0.0, 2.0), L1: (0.6, 1.0)},
                             "moving_mass_kg", region=_point(0.9))
    np.testing.assert_allclose(table.loc[[PAYLOAD, M1, L1], "swing"], [2.0, 1.0, 0.0],
                               atol=1e-12)
    assert list(table.index) == [PAYLOAD, M1, L1]
    np.testing.assert_allclose(table.loc[M1, ["score_low", "score_high", "score_baseline"]],
                               [1.5, 2.5, 2.0], rtol=1e-12)


def _salib_morris_reference(problem, f, n, seed):
    from SALib.analyze import morris as analyze
    from SALib.sample import morris as sample

    X = sample.sample(problem, n, num_levels=4, seed=seed)
    return analyze.analyze(problem, X, f(X), num_levels=4, seed=seed)


def test_morris_on_additive_score_matches_salib():
    # an additive linear score: moving mass = m1 + m2 + payload (link length does not enter).
    # SALib's documented elementary effect is the change of the output over a step of the
    # grid on the unit hypercube divided by that step, so for y = a x on [low, high] every
    # effect is a (high - low): mu = mu_star = a (high - low), sigma = 0 (the constant
    # effect of a linear term; Morris 1991). Checked also against SALib run directly here.
    vary = {M1: (0.5, 1.5), M2: (0.2, 0.6), PAYLOAD: (0.0, 2.0), L1: (0.6, 1.0)}
    table = ir.global_sensitivity(_arm(), vary, "moving_mass_kg", region=_point(0.9),
                                  n_trajectories=6, seed=11)
    names, expected = [M1, M2, PAYLOAD, L1], [1.0, 0.4, 2.0, 0.0]
    np.testing.assert_allclose(table.loc[names, "mu_star"], expected, atol=1e-12)
    np.testing.assert_allclose(table.loc[names, "mu"], expected, atol=1e-12)
    np.testing.assert_allclose(table["sigma"].to_numpy(), 0.0, atol=1e-12)
    assert list(table.index) == [PAYLOAD, M1, M2, L1]
    assert table.attrs["evaluations"] == 6 * (len(vary) + 1)
    problem = {"num_vars": 4, "names": list(vary), "bounds": [list(b) for b in vary.values()]}
    ref = _salib_morris_reference(problem, lambda X: X[:, 0] + X[:, 1] + X[:, 2], 6, 11)
    for name, mu_star in zip(problem["names"], ref["mu_star"]):
        np.testing.assert_allclose(table.loc[name, "mu_star"], mu_star, atol=1e-12)


def test_morris_zero_for_a_parameter_outside_the_score():
    table = ir.global_sensitivity(_arm(), {L1: (0.6, 1.0), PAYLOAD: (0.0, 2.0)}, "gci",
                                  region=_point(0.9), n_trajectories=5, seed=2)
    assert table.loc[PAYLOAD, "mu_star"] == 0.0
    assert table.loc[L1, "mu_star"] > 0.05
    assert list(table.index) == [L1, PAYLOAD]


def test_global_sensitivity_is_deterministic_with_the_seed():
    arm, vary, region = _arm(), {L1: (0.6, 1.0), L2: (0.4, 0.6)}, _point(0.9)
    a = ir.global_sensitivity(arm, vary, "gci", region=region, n_trajectories=4, seed=5)
    b = ir.global_sensitivity(arm, vary, "gci", region=region, n_trajectories=4, seed=5)
    c = ir.global_sensitivity(arm, vary, "gci", region=region, n_trajectories=4, seed=6)
    assert a.equals(b)
    assert not np.allclose(a.loc[[L1, L2], "mu_star"], c.loc[[L1, L2], "mu_star"])


def test_sobol_indices_of_a_one_parameter_score():
    # gci at one point depends on l1 only (the payload does not enter the Jacobian): l1 holds
    # all the variance (S1 = ST = 1 exactly in theory; the estimator within its error)
    table = ir.global_sensitivity(_arm(), {L1: (0.6, 1.0), PAYLOAD: (0.0, 2.0)}, "gci",
                                  region=_point(0.9), method="sobol", n_samples=64, seed=1)
    assert table.loc[PAYLOAD, "ST"] == 0.0 and table.loc[PAYLOAD, "S1"] == 0.0
    assert abs(table.loc[L1, "ST"] - 1.0) < 0.1 and abs(table.loc[L1, "S1"] - 1.0) < 0.1
    assert list(table.index) == [L1, PAYLOAD]


@pytest.mark.parametrize("vary, words", [
    ({"joints[0].no_such_m": (0.1, 0.2)}, "joints[0].no_such_m"),
    ({PAYLOAD: (-1.0, 1.0)}, PAYLOAD),
    ({L1: (0.9, 0.6)}, L1),
])
def test_bad_paths_and_ranges_name_the_path(vary, words):
    for call in (ir.one_at_a_time, ir.global_sensitivity):
        with pytest.raises(ir.DesignError, match=words.replace("[", r"\[").replace("]", r"\]")):
            call(_arm(), vary, "gci", region=_point(0.9))


def test_bad_score_method_and_settings_are_refused():
    arm, vary, region = _arm(), {L1: (0.6, 1.0)}, _point(0.9)
    with pytest.raises(ValueError, match="headroom_worst_joint"):
        ir.one_at_a_time(arm, vary, "headroom_worst_joint", region=region)
    with pytest.raises(ValueError, match="method"):
        ir.global_sensitivity(arm, vary, "gci", region=region, method="fast")
    with pytest.raises(ValueError, match="n_samples"):
        ir.global_sensitivity(arm, vary, "gci", region=region, method="sobol", n_samples=10)
    with pytest.raises(ValueError, match="vary"):
        ir.one_at_a_time(arm, {}, "gci", region=region)


def test_no_finite_score_is_an_error_not_nan():
    # no actuator ratings on this arm: the headroom score has no value
    with pytest.raises(ValueError, match="headroom_worst"):
        ir.one_at_a_time(_arm(), {L1: (0.6, 1.0)}, "headroom_worst", region=_point(0.9))


# --------------------------------------------------------------------------
# plot_tornado (Agg backend)
# --------------------------------------------------------------------------
@pytest.fixture
def plt():
    import matplotlib

    matplotlib.use("Agg")
    from matplotlib import pyplot

    yield pyplot
    pyplot.close("all")


def test_tornado_bars_carry_the_table_and_the_image_is_drawn(plt, tmp_path):
    import inertia_review.plots as irp

    table = ir.one_at_a_time(_arm(), {M1: (0.5, 1.5), PAYLOAD: (0.0, 2.0), L1: (0.6, 1.0)},
                             "moving_mass_kg", region=_point(0.9))
    art = irp.plot_tornado(table)
    # bars from the baseline (2 kg) to the hand values of the linear score (see above)
    assert art.paths == [PAYLOAD, M1, L1]
    lows = [(b.get_x(), b.get_x() + b.get_width()) for b in art.low_bars]
    highs = [(b.get_x(), b.get_x() + b.get_width()) for b in art.high_bars]
    np.testing.assert_allclose(lows, [(2.0, 2.0), (2.0, 1.5), (2.0, 2.0)], atol=1e-12)
    np.testing.assert_allclose(highs, [(2.0, 4.0), (2.0, 2.5), (2.0, 2.0)], atol=1e-12)
    assert art.baseline.get_xdata()[0] == pytest.approx(2.0)
    # largest swing on top; units in every label (mm for lengths, kg for masses)
    ys = [b.get_y() for b in art.low_bars]
    assert ys == sorted(ys, reverse=True)
    assert art.ax.get_xlabel() == "moving mass [kg]"
    ticks = [t.get_text() for t in art.ax.get_yticklabels()]
    assert "[kg]" in ticks[0] and "0 to 2 kg" in ticks[0]
    assert "[mm]" in ticks[2] and "600 to 1000 mm" in ticks[2]
    assert art.caution is None
    out = tmp_path / "tornado.png"
    art.ax.figure.savefig(out, dpi=60)
    image = plt.imread(out)
    assert image.shape[0] > 100 and image.shape[1] > 100
    assert np.ptp(image[..., :3]) > 0.5          # something drawn, not a blank canvas


def test_tornado_of_a_torque_score_carries_the_caution(plt):
    import inertia_review.plots as irp
    from inertia_review.studies._cautions import TORQUE_CAUTION

    arm = ir.load_design("designs/kestrel_a.toml")
    region = ir.Rectangle((0.38, 0.05, 0.20), ((1.0, 0.0, 0.0), (0.0, 0.0, 1.0)), (0.2, 0.2),
                          0.1)
    table = ir.one_at_a_time(arm, {PAYLOAD: (0.0, 0.5)}, "headroom_worst", region=region,
                             accel_mps2=2.0)
    _, ax = plt.subplots()
    assert table.attrs["caution"] == TORQUE_CAUTION       # the table carries it too
    art = irp.plot_tornado(table, ax=ax)
    assert art.ax is ax
    assert " ".join(art.caution.get_text().split()) == " ".join(TORQUE_CAUTION.split())


def test_tornado_refuses_a_global_table(plt):
    import inertia_review.plots as irp

    table = ir.global_sensitivity(_arm(), {L1: (0.6, 1.0)}, "gci", region=_point(0.9),
                                  n_trajectories=2, seed=0)
    with pytest.raises(ValueError, match="one_at_a_time"):
        irp.plot_tornado(table)
