"""Batched variants (``score_variants``) against the per-variant path, every score included."""

import numpy as np
import pytest

import inertia_review as ir
from inertia_review.core import _metrics, _payload
from inertia_review.studies._scores import SCORE_COLUMNS

REGION = ir.Rectangle((0.38, 0.05, 0.20), ((1.0, 0.0, 0.0), (0.0, 0.0, 1.0)), (0.30, 0.30), 0.05)


#: Both paths solve the tool position to this [m]; the scores then agree to about its size
#: relative (the default 1e-9 m leaves differences of ~1e-9 between the two IK routes).
TOL_M = 1e-12


def _per_variant(arm, values, region, accel):
    return ir.design_scores(ir.metric_map(arm.with_values(values), region, accel_mps2=accel,
                                          tolerance_m=TOL_M))


@pytest.mark.parametrize("design", ["designs/kestrel_a.toml", "designs/kestrel_b.toml"])
def test_score_variants_equal_design_scores_of_metric_map(design):
    # The reference is the per-variant path itself (one metric_map per variant, with the
    # stiffness, frequency and payload scores on by default). The variants mix payload-only
    # changes (shared kinematics, so one shared IK solve), a mass change, a link-ratio change
    # and a mount tilt (distinct kinematics), so every batching route is compared.
    arm = ir.load_design(design)
    variants = [{"tool.payload_kg": 0.1}, {"tool.payload_kg": 0.4},
                {"tool.payload_kg": 0.4, "joints[elbow].actuator.peak_torque_Nm": 9.0},
                {"derived.link_ratio": 0.85}, {"derived.link_ratio": 0.85, "tool.payload_kg": 0.3},
                {"mount.rpy_deg[1]": 12.0}]
    rows = ir.score_variants(arm, variants, REGION, accel_mps2=2.0, tolerance_m=TOL_M)
    for values, (row, error) in zip(variants, rows):
        assert error == ""
        ref = _per_variant(arm, values, REGION, 2.0)
        assert row["headroom_worst_joint"] == ref["headroom_worst_joint"], values
        assert np.isfinite(ref["f1_lowest_hz"]) and np.isfinite(ref["payload_rated_kg"])
        for column in SCORE_COLUMNS:
            if column == "headroom_worst_joint":
                continue
            np.testing.assert_allclose(row[column], ref[column], rtol=1e-9, atol=1e-12,
                                       err_msg=f"{column} {values}")


def test_payload_variants_differ_only_in_the_mass_scores():
    # a payload sweep shares its kinematics: same reachable set and isotropy, but the mass
    # ratio, headroom and payload capacity must move (the batch does not reuse them)
    arm = ir.load_design("designs/kestrel_a.toml")
    (light, _), (heavy, _) = ir.score_variants(
        arm, [{"tool.payload_kg": 0.1}, {"tool.payload_kg": 0.6}], REGION, accel_mps2=2.0)
    assert light["reachable_fraction"] == heavy["reachable_fraction"]
    assert light["gci"] == pytest.approx(heavy["gci"], rel=1e-12)
    assert heavy["headroom_worst"] < light["headroom_worst"]
    assert heavy["moving_mass_kg"] == pytest.approx(light["moving_mass_kg"] + 0.5, rel=1e-12)


def test_payload_closed_form_matches_the_eigen_route():
    # Independent route: the eigen-decomposition of the mobility matrix at each trial payload
    # (the kernel's general path) against the closed form Lambda(m) = Lambda(m0) + (m - m0) I
    # used for square three-axis tasks (common practice, no source).
    arm = ir.load_design("designs/kestrel_a.toml")
    ds = ir.metric_map(arm, REGION, stiffness=False)
    q = ds["q"].values.reshape(-1, 3)
    q = q[np.isfinite(q[:, 0])]
    terms = _metrics.task_terms(arm._params, np.ascontiguousarray(q.T))
    fast = _payload.payload_capacity(arm._params, terms, 3.0)
    original = _payload._linear_force_map
    try:
        _payload._linear_force_map = lambda params, terms: None
        slow = _payload.payload_capacity(arm._params, terms, 3.0)
    finally:
        _payload._linear_force_map = original
    assert np.all(np.isfinite(slow)) and np.all(slow > 0.0)
    np.testing.assert_allclose(fast, slow, rtol=1e-10)


@pytest.mark.parametrize("posture", ["elbow_up", "elbow_down"])
def test_stacked_solver_equals_solve_positions_of_each_arm(posture):
    # The exact re-solve of score_variants runs the numeric solver once over the points of
    # many arms (one arm per configuration); the reference is solve_positions of each arm
    # on its own points. Random points in and out of reach, so that solved, beyond-limits
    # and out-of-reach points (the limits retry) all occur.
    from inertia_review.model._arm import Arm
    from inertia_review.studies._ik_stacked import solve_positions_stacked
    from inertia_review.studies._variants import variant_params

    arm = ir.load_design("designs/kestrel_a.toml")
    rng = np.random.default_rng(3)
    params_list, points_list, q_ref, s_ref = [], [], [], []
    for ratio, tilt in [(0.6, 0.0), (0.9, 10.0), (1.4, 30.0)]:
        spec, params = variant_params(arm.to_dict(), {"derived.link_ratio": ratio,
                                                      "mount.rpy_deg[1]": tilt})
        points = np.array([0.38, 0.05, 0.20]) + rng.uniform(-0.6, 0.6, (60, 3))
        ref = ir.solve_positions(Arm(spec, params), points, posture=posture, table_size=2048)
        params_list.append(params)
        points_list.append(points)
        q_ref.append(ref.q)
        s_ref.append(ref.status)
    q, status = solve_positions_stacked(params_list, points_list, posture=posture,
                                        table_size=2048)
    s_ref = np.concatenate(s_ref)
    assert len(set(s_ref.tolist())) >= 3
    np.testing.assert_array_equal(status, s_ref)
    np.testing.assert_allclose(q, np.concatenate(q_ref), rtol=0, atol=1e-12)
