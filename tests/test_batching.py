"""Batching battery: every core function and metric broadcasts over leading axes.

For each function, batch_ndim in 0..3: the batched result equals a Python loop
over single configurations, shapes are right, floats are float64, a 1-D q gives
unbatched results, q and qd (or u) broadcast by numpy's rules, and ints/lists
are accepted as q (arm-model.md "Core API" and "Arguments"; style.md item 3).
All designs are invented test data.
"""

from __future__ import annotations

import math

import numpy as np
import pytest

import inertia_review as ir

BATCH_SHAPES = {0: (), 1: (4,), 2: (2, 3), 3: (2, 1, 3)}


def spatial_design():
    """4-joint spatial arm, all joints rated, a tube link and a payload (invented)."""
    return {
        "name": "batch_spatial",
        "format": 1,
        "mount": {"xyz_m": [0.1, 0.0, 0.3], "rpy_deg": [5.0, -10.0, 40.0]},
        "joints": [
            {"xyz_m": [0.0, 0.0, 0.2], "axis": [0.0, 0.0, 1.0],
             "link": {"mass_kg": 3.0, "com_m": [0.0, 0.02, 0.1],
                      "inertia_kgm2": [0.02, 0.02, 0.01, 0.001, 0.0, 0.0]},
             "actuator": {"peak_torque_Nm": 120.0, "continuous_torque_Nm": 50.0,
                          "gear_ratio": 100.0, "rotor_inertia_kgm2": 2e-5,
                          "stiffness_Nm_per_rad": 4.0e4, "rated_speed_rpm": 3000.0}},
            {"xyz_m": [0.0, 0.05, 0.15], "rpy_deg": [90.0, 0.0, 0.0], "axis": [0.0, 0.0, 1.0],
             "link": {"tube": {"length_m": 0.45, "outer_diameter_m": 0.06, "wall_m": 0.003,
                               "material": "aluminium_6061"},
                      "point_masses": [{"mass_kg": 0.8, "xyz_m": [0.45, 0.0, 0.0]}]},
             "actuator": {"peak_torque_Nm": 90.0, "continuous_torque_Nm": 35.0,
                          "gear_ratio": 120.0, "rotor_inertia_kgm2": 1e-5,
                          "rated_speed_rpm": 3000.0}},
            {"xyz_m": [0.45, 0.0, 0.0], "axis": [0.0, 0.1, 1.0],
             "link": {"mass_kg": 1.2, "com_m": [0.15, 0.0, 0.01],
                      "inertia_kgm2": [0.0008, 0.009, 0.009, 0.0, 0.0002, 0.0]},
             "actuator": {"peak_torque_Nm": 40.0, "continuous_torque_Nm": 15.0,
                          "rated_speed_rpm": 60.0}},
            {"xyz_m": [0.3, 0.0, 0.0], "rpy_deg": [0.0, 90.0, 0.0], "axis": [0.0, 0.0, 1.0],
             "link": {"mass_kg": 0.4, "com_m": [0.0, 0.0, 0.03],
                      "inertia_kgm2": [0.0004, 0.0004, 0.0002, 0.0, 0.0, 0.0]},
             "actuator": {"peak_torque_Nm": 10.0, "continuous_torque_Nm": 4.0,
                          "gear_ratio": 50.0, "rotor_inertia_kgm2": 5e-6,
                          "rated_speed_rpm": 4000.0}},
        ],
        "tool": {"xyz_m": [0.0, 0.02, 0.1], "payload_kg": 0.7},
    }


def planar_design():
    """Planar 3R in a tilted plane; joint 3 has no ratings (NaN in headroom arrays)."""
    link = lambda m, length: {"mass_kg": m, "com_m": [length / 2, 0.0, 0.0],
                              "inertia_kgm2": [0.0, m * length**2 / 12, m * length**2 / 12, 0.0, 0.0, 0.0]}
    return {
        "name": "batch_planar",
        "format": 1,
        "mount": {"rpy_deg": [30.0, 0.0, 15.0]},
        "joints": [
            {"axis": [0.0, 0.0, 1.0], "link": link(2.0, 0.5),
             "actuator": {"peak_torque_Nm": 80.0, "continuous_torque_Nm": 30.0,
                          "stiffness_Nm_per_rad": 2.0e4, "rated_speed_rpm": 60.0}},
            {"xyz_m": [0.5, 0.0, 0.0], "axis": [0.0, 0.0, 1.0], "link": link(1.5, 0.4),
             "actuator": {"peak_torque_Nm": 40.0, "continuous_torque_Nm": 15.0,
                          "gear_ratio": 80.0, "rotor_inertia_kgm2": 1e-5,
                          "stiffness_Nm_per_rad": 8.0e3, "rated_speed_rpm": 4000.0}},
            {"xyz_m": [0.4, 0.0, 0.0], "axis": [0.0, 0.0, -1.0], "link": link(0.5, 0.2),
             "actuator": {"rated_speed_rpm": 90.0}},  # no torque rating, no stiffness: rigid
        ],
        "tool": {"xyz_m": [0.2, 0.0, 0.0], "payload_kg": 0.3},
    }


ARMS = {"spatial": spatial_design, "planar": planar_design}


@pytest.fixture(scope="module", params=sorted(ARMS))
def arm(request):
    return ir.Arm.from_dict(ARMS[request.param]())


def unit_in_span(arm, w):
    """Unit world vectors in the task span from task coordinates w (..., k)."""
    u = w @ arm.task_axes
    return u / np.linalg.norm(u, axis=-1, keepdims=True)


def make_inputs(arm, shape, seed=0):
    rng = np.random.default_rng(seed)
    n, k = arm.dof, arm.task_axes.shape[0]
    q = rng.uniform(-math.pi, math.pi, size=shape + (n,))
    if shape and all(shape) and arm.name == "batch_planar":
        # one exactly stretched (singular) pose inside the batch
        q[(0,) * len(shape)] = [0.3, 0.0, 0.0]
    qd = rng.uniform(-2.0, 2.0, size=shape + (n,))
    qdd = rng.uniform(-5.0, 5.0, size=shape + (n,))
    u = unit_in_span(arm, rng.normal(size=shape + (k,)))
    return q, qd, qdd, u


# name -> (function(arm, q, qd, qdd, u), trailing shape(arm), kind)
def _hr(field):
    return lambda a, q, qd, qdd, u: getattr(ir.torque_headroom(a, q, accel_mps2=3.0), field)


FUNCS = {
    "tool_position": (lambda a, q, qd, qdd, u: a.tool_position(q), lambda a: (3,), "f"),
    "jacobian": (lambda a, q, qd, qdd, u: a.jacobian(q), lambda a: (6, a.dof), "f"),
    "mass_matrix": (lambda a, q, qd, qdd, u: a.mass_matrix(q), lambda a: (a.dof, a.dof), "f"),
    "gravity_torque": (lambda a, q, qd, qdd, u: a.gravity_torque(q), lambda a: (a.dof,), "f"),
    "velocity_torque": (lambda a, q, qd, qdd, u: a.velocity_torque(q, qd), lambda a: (a.dof,), "f"),
    "inverse_dynamics": (lambda a, q, qd, qdd, u: a.inverse_dynamics(q, qd, qdd), lambda a: (a.dof,), "f"),
    "apparent_mass": (lambda a, q, qd, qdd, u: ir.apparent_mass(a, q), lambda a: (len(a.task_axes),) * 2, "f"),
    "isotropy_index": (lambda a, q, qd, qdd, u: ir.isotropy_index(a, q), lambda a: (), "f"),
    "principal_masses.masses": (lambda a, q, qd, qdd, u: ir.principal_masses(a, q).masses,
                                lambda a: (len(a.task_axes),), "f"),
    "principal_masses.directions": (lambda a, q, qd, qdd, u: ir.principal_masses(a, q).directions,
                                    lambda a: (3, len(a.task_axes)), "dir"),
    "mass_ratio": (lambda a, q, qd, qdd, u: ir.mass_ratio(a, q), lambda a: (), "f"),
    "mass_along": (lambda a, q, qd, qdd, u: ir.mass_along(a, q, u), lambda a: (), "f"),
    "manipulability": (lambda a, q, qd, qdd, u: ir.manipulability(a, q), lambda a: (), "f"),
    "near_singular": (lambda a, q, qd, qdd, u: ir.near_singular(a, q), lambda a: (), "b"),
    "near_singular(0.3)": (lambda a, q, qd, qdd, u: ir.near_singular(a, q, threshold=0.3), lambda a: (), "b"),
    "torque_headroom.static_torque_Nm": (_hr("static_torque_Nm"), lambda a: (a.dof,), "f"),
    "torque_headroom.worst_torque_Nm": (_hr("worst_torque_Nm"), lambda a: (a.dof,), "f"),
    "torque_headroom.utilisation": (_hr("utilisation"), lambda a: (a.dof,), "f"),
    "torque_headroom.static_utilisation": (_hr("static_utilisation"), lambda a: (a.dof,), "f"),
    "torque_headroom.headroom_Nm": (_hr("headroom_Nm"), lambda a: (a.dof,), "f"),
    "torque_headroom.min_margin": (_hr("min_margin"), lambda a: (), "f"),
    "torque_headroom.limiting_joint": (_hr("limiting_joint"), lambda a: (), "i"),
    "acceleration_along": (lambda a, q, qd, qdd, u: ir.acceleration_along(a, q, u), lambda a: (), "f"),
    "acceleration_along(no gravity)": (
        lambda a, q, qd, qdd, u: ir.acceleration_along(a, q, u, hold_gravity=False), lambda a: (), "f"),
    "acceleration_capability": (lambda a, q, qd, qdd, u: ir.acceleration_capability(a, q), lambda a: (), "f"),
    # stiffness, sag, vibration, payload, speed (both battery designs have elastic parts)
    "tool_compliance": (lambda a, q, qd, qdd, u: ir.tool_compliance(a, q),
                        lambda a: (len(a.task_axes),) * 2, "f"),
    "tool_stiffness": (lambda a, q, qd, qdd, u: ir.tool_stiffness(a, q),
                       lambda a: (len(a.task_axes),) * 2, "f"),
    "principal_stiffnesses.stiffnesses": (
        lambda a, q, qd, qdd, u: ir.principal_stiffnesses(a, q).stiffnesses,
        lambda a: (len(a.task_axes),), "f"),
    "principal_stiffnesses.directions": (
        lambda a, q, qd, qdd, u: ir.principal_stiffnesses(a, q).directions,
        lambda a: (3, len(a.task_axes)), "dir"),
    "tool_deflection": (lambda a, q, qd, qdd, u: ir.tool_deflection(a, q), lambda a: (3,), "f"),
    "natural_frequencies.frequencies_hz": (
        lambda a, q, qd, qdd, u: ir.natural_frequencies(a, q).frequencies_hz,
        lambda a: (a.dof,), "f"),
    "natural_frequencies.mode_shapes": (
        lambda a, q, qd, qdd, u: ir.natural_frequencies(a, q).mode_shapes,
        lambda a: (a.dof, a.dof), "dir"),
    "natural_frequencies.first_mode_tool_direction": (
        lambda a, q, qd, qdd, u: ir.natural_frequencies(a, q).first_mode_tool_direction,
        lambda a: (3,), "f"),
    "payload_capacity": (lambda a, q, qd, qdd, u: ir.payload_capacity(a, q), lambda a: (), "f"),
    "payload_capacity(2 m/s^2)": (lambda a, q, qd, qdd, u: ir.payload_capacity(a, q, 2.0),
                                  lambda a: (), "f"),
    "max_tool_speed": (lambda a, q, qd, qdd, u: ir.max_tool_speed(a, q), lambda a: (), "f"),
}


def _check_kind(result, kind):
    if kind in ("f", "dir"):
        assert result.dtype == np.float64, result.dtype
    elif kind == "b":
        assert result.dtype == np.bool_, result.dtype
    elif kind == "i":
        assert np.issubdtype(result.dtype, np.integer), result.dtype


def _assert_same(batched, single, kind):
    if kind == "dir":
        # Eigenvector columns are defined up to sign (the contract fixes only unit length).
        signs = np.sign(np.sum(batched * single, axis=-2, keepdims=True))
        signs[signs == 0] = 1.0
        np.testing.assert_allclose(batched * signs, single, rtol=1e-10, atol=1e-12)
    elif kind in ("b", "i"):
        np.testing.assert_array_equal(batched, single)
    else:
        # equal NaN / inf positions are required too (assert_allclose checks them)
        np.testing.assert_allclose(batched, single, rtol=1e-11, atol=1e-12)


@pytest.mark.parametrize("batch_ndim", range(0, 4))
@pytest.mark.parametrize("name", list(FUNCS))
def test_batch_equals_loop(arm, name, batch_ndim):
    fn, trailing, kind = FUNCS[name]
    shape = BATCH_SHAPES[batch_ndim]
    q, qd, qdd, u = make_inputs(arm, shape, seed=batch_ndim)
    result = np.asarray(fn(arm, q, qd, qdd, u))
    assert result.shape == shape + trailing(arm)
    _check_kind(result, kind)
    for idx in np.ndindex(*shape):
        single = np.asarray(fn(arm, q[idx], qd[idx], qdd[idx], u[idx]))
        assert single.shape == trailing(arm)       # a 1-D q gives unbatched results
        _check_kind(single, kind)
        _assert_same(result[idx], single, kind)


@pytest.mark.parametrize("name", list(FUNCS))
def test_empty_batch(arm, name):
    # A batch of zero poses is still a batch: shape (0, ...), no error.
    fn, trailing, kind = FUNCS[name]
    q, qd, qdd, u = make_inputs(arm, (0,), seed=1)
    result = np.asarray(fn(arm, q, qd, qdd, u))
    assert result.shape == (0,) + trailing(arm)
    _check_kind(result, kind)


def test_batch_contains_a_singular_pose():
    # The planar batches above hold a stretched pose: check it really is
    # singular, so the batch tests cover the NaN / inf branch elementwise.
    arm = ir.Arm.from_dict(planar_design())
    q, *_ = make_inputs(arm, (2, 3), seed=2)
    lam = ir.apparent_mass(arm, q)
    assert np.all(np.isnan(lam[0, 0])) and np.all(np.isfinite(lam[1, 2]))
    assert np.isinf(ir.principal_masses(arm, q).masses[0, 0, -1])
    assert ir.mass_ratio(arm, q)[0, 0] == 0.0
    assert ir.near_singular(arm, q)[0, 0]


@pytest.mark.parametrize("name", list(FUNCS))
def test_lists_and_ints_accepted_as_q(arm, name):
    fn, trailing, kind = FUNCS[name]
    n = arm.dof
    q_list = [1, -2, 0, 1][:n]
    q_float = np.array(q_list, dtype=np.float64)
    _, qd, qdd, u = make_inputs(arm, (), seed=7)
    from_list = np.asarray(fn(arm, q_list, qd.tolist(), qdd.tolist(), u))
    from_int_array = np.asarray(fn(arm, np.array(q_list), qd, qdd, u))
    reference = np.asarray(fn(arm, q_float, qd, qdd, u))
    assert from_list.shape == from_int_array.shape == trailing(arm)
    _check_kind(from_list, kind)
    _check_kind(from_int_array, kind)
    _assert_same(from_list, reference, kind)
    _assert_same(from_int_array, reference, kind)


@pytest.mark.parametrize("name", list(FUNCS))
def test_float32_promoted_to_float64(arm, name):
    fn, trailing, kind = FUNCS[name]
    q, qd, qdd, u = make_inputs(arm, (3,), seed=11)
    q32 = q.astype(np.float32)
    res32 = np.asarray(fn(arm, q32, qd, qdd, u))
    ref = np.asarray(fn(arm, q32.astype(np.float64), qd, qdd, u))
    _check_kind(res32, kind)
    _assert_same(res32, ref, kind)


def test_q_and_qd_broadcast(arm):
    n = arm.dof
    rng = np.random.default_rng(3)
    q = rng.uniform(-3, 3, size=(4, 1, n))
    qd = rng.uniform(-2, 2, size=(3, n))
    out = arm.velocity_torque(q, qd)
    assert out.shape == (4, 3, n)
    qb, qdb = np.broadcast_arrays(q, qd)
    np.testing.assert_allclose(out, arm.velocity_torque(qb.copy(), qdb.copy()), rtol=1e-12, atol=1e-13)
    # a single q with many qd, and many q with a single qd
    assert arm.velocity_torque(q[0, 0], qd).shape == (3, n)
    np.testing.assert_allclose(arm.velocity_torque(q[:, 0], qd[0]),
                               [arm.velocity_torque(qi, qd[0]) for qi in q[:, 0]], rtol=1e-12, atol=1e-13)


def test_inverse_dynamics_broadcasts_three_arguments(arm):
    n = arm.dof
    rng = np.random.default_rng(4)
    q = rng.uniform(-3, 3, size=(2, 1, n))
    qd = rng.uniform(-2, 2, size=(1, 3, n))
    qdd = rng.uniform(-5, 5, size=(n,))
    out = arm.inverse_dynamics(q, qd, qdd)
    assert out.shape == (2, 3, n)
    for i, j in np.ndindex(2, 3):
        np.testing.assert_allclose(out[i, j], arm.inverse_dynamics(q[i, 0], qd[0, j], qdd),
                                   rtol=1e-11, atol=1e-12)


@pytest.mark.parametrize("fname", ["mass_along", "acceleration_along"])
def test_q_and_u_broadcast(arm, fname):
    f = getattr(ir, fname)
    rng = np.random.default_rng(5)
    n, k = arm.dof, arm.task_axes.shape[0]
    q = rng.uniform(-3, 3, size=(5, 1, n))
    u = unit_in_span(arm, rng.normal(size=(2, k)))
    out = f(arm, q, u)
    assert out.shape == (5, 2)
    for i, j in np.ndindex(5, 2):
        np.testing.assert_allclose(out[i, j], f(arm, q[i, 0], u[j]), rtol=1e-11, atol=1e-12)
    # one q, many u; many q, one u
    assert f(arm, q[0, 0], u).shape == (2,)
    assert f(arm, q[:, 0], u[0]).shape == (5,)


def test_incompatible_batch_shapes_raise(arm):
    n = arm.dof
    with pytest.raises(ValueError):
        arm.velocity_torque(np.zeros((4, n)), np.zeros((3, n)))


def test_inputs_not_modified(arm):
    q, qd, qdd, u = make_inputs(arm, (2, 3), seed=9)
    copies = [x.copy() for x in (q, qd, qdd, u)]
    for fn, _, _ in FUNCS.values():
        fn(arm, q, qd, qdd, u)
    for x, c in zip((q, qd, qdd, u), copies):
        np.testing.assert_array_equal(x, c)
