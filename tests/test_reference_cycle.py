"""Cycle samples of a spatial arm against the independent sympy reference (tests/sympy_reference.py).

- Joint torques: ``CycleTorques.tau`` against Lagrange's equations tau = M qdd + C(q, qd) qd + g
  (sympy_reference derives M, C qd and g from T and V; Lagrange's equations are textbook
  mechanics, common practice, no source beyond the derivation itself).
- Line moves: the tool velocity J qd and the tool acceleration J qdd + J-dot qd, with J and
  J-dot qd = d^2 p_tool / dt^2 (at qdd = 0) from the symbolic forward kinematics, must equal
  the motion profile's s-dot u and s-ddot u along the segment (the definition of a line move),
  and the acceleration never exceeds the move's limit (largest sample, no percentile).
Design: the invented demo design ``designs/kestrel_a.toml`` (yaw-pitch-pitch, spatial).
"""

from pathlib import Path

import numpy as np
import pytest
from sympy_reference import SymbolicArm, _array_function

import inertia_review as ir

DESIGN = Path(__file__).resolve().parent.parent / "designs" / "kestrel_a.toml"


@pytest.fixture(scope="module")
def arm():
    return ir.load_design(DESIGN)


@pytest.fixture(scope="module")
def reference(arm):
    sym = SymbolicArm(arm.to_dict())
    prog = sym.program
    vel = [prog.ddt(e) for e in sym.tool_position]          # J qd
    jdot_qd = [prog.ddt(e) for e in vel]                     # J-dot qd (qdd = 0)
    fn = _array_function(prog, sym.q + sym.qd, jdot_qd, (3,))
    return sym, lambda q, qd: fn(*np.moveaxis(q, -1, 0), *np.moveaxis(qd, -1, 0))


def test_cycle_torques_match_lagrange(arm, reference):
    sym, _ = reference
    res = ir.cycle_torques(arm, ir.design_cycles(arm)[0])
    idx = np.linspace(0, res.t.size - 1, 80).astype(int)      # line, joint moves and dwells
    ref = sym.evaluate(res.q[idx], res.qd[idx], res.qdd[idx])
    scale = np.abs(res.tau).max(axis=0)
    np.testing.assert_allclose(res.tau[idx], ref.inverse_dynamics, rtol=0, atol=1e-9 * scale.max())
    assert {m.kind for m in res.cycle.moves} == {"line", "joint"}


@pytest.mark.parametrize("jerk", [None, 25.0])
def test_line_move_rates_are_the_profile(arm, reference, jerk):
    sym, jdot_qd = reference
    p0, p1 = np.array([0.45, 0.05, 0.30]), np.array([0.30, 0.05, 0.08])
    move = {"from": list(p0), "to": list(p1), "kind": "line", "speed_mps": 0.3,
            "accel_mps2": 1.5}
    if jerk:
        move["jerk_mps3"] = jerk
    res = ir.cycle_torques(arm, {"name": "line", "moves": [move]}, sample_rate_hz=2000.0)
    length = float(np.linalg.norm(p1 - p0))
    u = (p1 - p0) / length
    prof = (ir.s_curve_profile(length, 0.3, 1.5, jerk) if jerk else
            ir.trapezoidal_profile(length, 0.3, 1.5))
    _, sd, sdd = prof.sample(res.t)
    jac = sym.evaluate(res.q).jacobian[..., :3, :]
    xd = np.einsum("...ij,...j->...i", jac, res.qd)
    xdd = np.einsum("...ij,...j->...i", jac, res.qdd) + jdot_qd(res.q, res.qd)
    np.testing.assert_allclose(xd, sd[:, None] * u, rtol=0, atol=1e-9 * 0.3)
    np.testing.assert_allclose(xdd, sdd[:, None] * u, rtol=0, atol=1e-9 * 1.5)
    np.testing.assert_allclose(res.tool_velocity, xd, rtol=0, atol=1e-9 * 0.3)
    # limits: the largest sample, not a percentile
    assert np.linalg.norm(xd, axis=1).max() <= 0.3 * (1 + 1e-9)
    assert np.linalg.norm(xdd, axis=1).max() <= 1.5 * (1 + 1e-9)
    assert np.linalg.norm(xdd, axis=1).max() >= 1.5 * (1 - 1e-2)        # the limit is reached


def test_joint_move_with_tool_limits_at_every_sample(arm, reference):
    # a joint move with tool limits: the exact tool speed J qd and acceleration J qdd + J-dot qd
    # (symbolic kinematics) stay within 0.4 m/s and 1.2 m/s^2 at every sample (largest value)
    sym, jdot_qd = reference
    cycle = ir.cycle_from_dict({
        "name": "j", "points_m": {"a": [0.45, 0.05, 0.30], "b": [0.25, 0.05, 0.06]},
        "moves": [{"from": "a", "to": "b", "kind": "joint", "speed_mps": 0.4,
                   "accel_mps2": 1.2}]})
    res = ir.cycle_torques(arm, cycle, sample_rate_hz=2000.0)
    jac = sym.evaluate(res.q).jacobian[..., :3, :]
    xd = np.einsum("...ij,...j->...i", jac, res.qd)
    xdd = np.einsum("...ij,...j->...i", jac, res.qdd) + jdot_qd(res.q, res.qd)
    np.testing.assert_allclose(res.tool_velocity, xd, rtol=0, atol=1e-9 * 0.4)
    assert np.linalg.norm(xd, axis=1).max() <= 0.4 * (1 + 1e-9)
    assert np.linalg.norm(xdd, axis=1).max() <= 1.2 * (1 + 1e-9)
    # on the joint line q = q_a + s dq: qd and qdd are parallel to dq at every sample
    dq = res.move_end_q[0] - res.move_start_q[0]
    for rate in (res.qd, res.qdd):
        np.testing.assert_allclose(np.cross(rate, dq), 0.0, atol=1e-9 * np.abs(rate).max() * np.abs(dq).max())
