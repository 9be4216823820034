"""Move cycles: motion profiles, cycle definitions, cycle torques and their review.

Outside checks used here (status as in ../shared/design/references.md):
- trapezoidal and double-S profile formulas: L. Biagiotti and C. Melchiorri, *Trajectory
  Planning for Automatic Machines and Robots*, Springer 2008, ch. 3 (sec. 3.2 trapezoidal,
  sec. 3.4 double S) [M] -- from memory; each check value below is also worked out by hand
  from constant-acceleration / constant-jerk kinematics [D];
- closed-form mass matrix of the planar two-link arm (Spong, Hutchinson & Vidyasagar,
  *Robot Modeling and Control*, Wiley 2006, ch. 7) [M][D] (references.md item 1);
- the work-energy theorem of rigid-body dynamics (the power tau . qd is the rate of change of
  kinetic plus potential energy; common practice, no source), with the potential energy summed
  here by hand from the design's own bodies;
- RMS of a piecewise-constant signal: sqrt(sum(value^2 * duration) / total) (plain arithmetic);
- joint rates of line moves: J qd = x-dot and J qdd + J-dot qd = x-ddot (differentiating
  x = p(q(t)) twice; common practice, no source) at 1e-9 of the move's limits, with J-dot qd
  from the planar arm's forward kinematics differentiated by hand, or from an 8th-order
  central difference of the Jacobian along qd (numerical analysis, common practice, no
  source); the sympy version on the spatial demo arm is in test_reference_cycle.py;
- acceleration limits hold at every sample (largest value, no percentile) and, for the
  profiles, between samples (largest |s-ddot| at the ends of the constant-jerk pieces).
"""

import math
import re

import numpy as np
import pytest

import inertia_review as ir

G = 9.80665  # standard gravity, exact (3rd CGPM 1901) [C]

# Case A of references.md item 1 (uniform rods): m1 = 2, m2 = 1, l1 = 1, l2 = 0.8 [M][D]
M1, M2, L1, L2 = 2.0, 1.0, 1.0, 0.8
LC1, LC2 = 0.5, 0.4
I1, I2 = M1 * L1 ** 2 / 12.0, M2 * L2 ** 2 / 12.0
GEAR, ROTOR = 50.0, 1.0e-5


def two_link(gravity, *, rated=True, rotor=ROTOR, second_rated=True):
    """Case-A two-link arm turning about world z; ``gravity`` in W (in-plane or along z)."""
    act1 = {"gear_ratio": GEAR, "rotor_inertia_kgm2": rotor}
    act2 = {"gear_ratio": GEAR, "rotor_inertia_kgm2": rotor}
    if rated:
        act1.update(peak_torque_Nm=40.0, continuous_torque_Nm=2.0, rated_speed_rpm=1000.0)
    if rated and second_rated:
        act2.update(peak_torque_Nm=20.0, continuous_torque_Nm=10.0, rated_speed_rpm=3000.0)
    joints = [
        {"name": "j1", "axis": [0.0, 0.0, 1.0],
         "link": {"mass_kg": M1, "com_m": [LC1, 0.0, 0.0], "inertia_kgm2": [0.0, I1, I1, 0, 0, 0]},
         "actuator": act1},
        {"name": "j2", "xyz_m": [L1, 0.0, 0.0], "axis": [0.0, 0.0, 1.0],
         "link": {"mass_kg": M2, "com_m": [LC2, 0.0, 0.0], "inertia_kgm2": [0.0, I2, I2, 0, 0, 0]},
         "actuator": act2},
    ]
    return ir.Arm.from_dict({"name": "two_link", "format": 1,
                             "mount": {"gravity_mps2": list(gravity)},
                             "joints": joints, "tool": {"xyz_m": [L2, 0.0, 0.0]}})


VERTICAL = (0.0, -G, 0.0)     # gravity in the x-y plane of motion (references.md conventions)
HORIZONTAL = (0.0, 0.0, -G)   # gravity along the joint axes: no gravity torque


# ---------------------------------------------------------------------------
# profiles
# ---------------------------------------------------------------------------
def test_trapezoid_switching_times_by_hand():
    # Biagiotti & Melchiorri 2008 ch. 3.2 [M]: T = D / v + v / a, T_a = v / a; by hand [D]:
    # D = 1, v = 0.5, a = 2 -> T_a = 0.25, T = 2.25, s(T_a) = a T_a^2 / 2 = 0.0625
    p = ir.trapezoidal_profile(1.0, 0.5, 2.0)
    assert p.duration == pytest.approx(2.25, rel=1e-12)
    s, sd, sdd = p.sample(np.array([0.25, 1.125, 2.0, 2.25, 0.1, 2.2]))
    np.testing.assert_allclose(s[:4], [0.0625, 0.5, 1.0 - 0.0625, 1.0], rtol=1e-12)
    np.testing.assert_allclose(sd[:4], [0.5, 0.5, 0.5, 0.0], rtol=1e-12, atol=1e-15)
    np.testing.assert_allclose(sdd[4:], [2.0, -2.0], rtol=1e-12)
    assert p.reached == "speed and accel"


def test_trapezoid_triangular_by_hand():
    # D < v^2 / a: triangular; peak speed sqrt(D a), T = 2 sqrt(D / a) [M] (ch. 3.2), by hand:
    # D = 0.1, a = 2 -> peak sqrt(0.2), T = 2 sqrt(0.05)
    p = ir.trapezoidal_profile(0.1, 1.0, 2.0)
    assert p.duration == pytest.approx(2.0 * math.sqrt(0.05), rel=1e-12)
    t = np.linspace(0.0, p.duration, 200001)
    s, sd, _ = p.sample(t)
    assert sd.max() == pytest.approx(math.sqrt(0.2), rel=1e-9)
    s_half, _, _ = p.sample(p.duration / 2.0)
    assert s_half == pytest.approx(0.05, rel=1e-12)
    assert p.reached == "accel only"


def _check_profile_consistency(p, v, a, j=None):
    t = np.linspace(0.0, p.duration, 400001)
    s, sd, sdd = p.sample(t)
    # speed integrates to position, acceleration to speed (cumulative trapezoid rule)
    dt = t[1] - t[0]
    s_int = np.concatenate([[0.0], np.cumsum(0.5 * dt * (sd[1:] + sd[:-1]))])
    sd_int = np.concatenate([[0.0], np.cumsum(0.5 * dt * (sdd[1:] + sdd[:-1]))])
    np.testing.assert_allclose(s_int, s, atol=1e-8 * p.distance)
    np.testing.assert_allclose(sd_int, sd, atol=2e-4 * v)
    assert np.all(np.diff(s) >= -1e-15)
    assert sd.max() <= v * (1 + 1e-12) and np.abs(sdd).max() <= a * (1 + 1e-12)
    assert _profile_peak_accel(p) <= a * (1 + 1e-12)          # between samples too
    s_end, sd_end, sdd_end = p.sample(p.duration)
    assert s_end == p.distance and sd_end == 0.0 and sdd_end == 0.0
    if j is not None:
        jerk = np.diff(sdd) / dt
        assert np.abs(jerk).max() <= j * (1 + 1e-6)


@pytest.mark.parametrize("d, v, a, j, duration, v_peak, a_peak, reached", [
    # all limits reached: T = D/v + v/a + a/j = 1 + 0.5 + 0.2 (Biagiotti & Melchiorri
    # ch. 3.4 [M]; by hand from the 7 constant-jerk segments [D])
    (1.0, 1.0, 2.0, 10.0, 1.7, 1.0, 2.0, "speed, accel and jerk"),
    # v j < a^2: acceleration limit not reached, T_j = sqrt(v/j) = 1/sqrt(2), T_a = 2 T_j,
    # peak accel sqrt(v j) = sqrt(2); T = D/v + T_a = 3 + sqrt(2) [D]
    (3.0, 1.0, 2.0, 2.0, 3.0 + math.sqrt(2.0), 1.0, math.sqrt(2.0), "speed and jerk"),
    # too short for the speed, long enough for the accel (D >= 2 a^3 / j^2 = 0.16):
    # T_j = 0.2, T_a = (0.2 + sqrt(0.04 + 0.6)) / 2 = 0.5, T = 1.0, v_peak = a (T_a - T_j) [D]
    (0.3, 1.0, 2.0, 10.0, 1.0, 0.6, 2.0, "accel and jerk"),
    # too short for either: T_j = (D / (2 j))^(1/3), T = 4 T_j, peak accel j T_j, v = j T_j^2 [D]
    (0.01, 1.0, 2.0, 10.0, 4.0 * 0.0005 ** (1 / 3), 10.0 * 0.0005 ** (2 / 3),
     10.0 * 0.0005 ** (1 / 3), "jerk only"),
])
def test_s_curve_limits_continuity_and_hand_values(d, v, a, j, duration, v_peak, a_peak, reached):
    p = ir.s_curve_profile(d, v, a, j)
    assert p.duration == pytest.approx(duration, rel=1e-12)
    assert p.peak_speed == pytest.approx(v_peak, rel=1e-12)
    assert p.peak_accel == pytest.approx(a_peak, rel=1e-12)
    assert p.reached == reached
    # continuity of s, sd and sdd at every segment boundary (both sides, 1e-10 s apart)
    inner = p.starts[1:]
    lo, hi = p.sample(inner - 1e-10), p.sample(inner + 1e-10)
    for x_lo, x_hi, scale in zip(lo, hi, (d, v, a)):
        np.testing.assert_allclose(x_lo, x_hi, atol=1e-8 * scale + 2e-10 * j)
    _check_profile_consistency(p, v, a, j)
    # the sampled speed and acceleration do reach the stated peaks
    _, sd, sdd = p.sample(np.linspace(0.0, p.duration, 200001))
    assert sd.max() == pytest.approx(v_peak, rel=1e-6)
    assert np.abs(sdd).max() == pytest.approx(a_peak, rel=1e-4)


@pytest.mark.parametrize("d, v, a", [(1.0, 0.5, 2.0), (0.1, 1.0, 2.0)])
def test_trapezoid_consistency(d, v, a):
    _check_profile_consistency(ir.trapezoidal_profile(d, v, a), v, a)


@pytest.mark.parametrize("args, pattern", [
    ((0.0, 1.0, 1.0), "`distance` must be a finite number > 0; got 0.0"),
    ((1.0, -1.0, 1.0), "`speed` must be a finite number > 0"),
    ((1.0, 1.0, math.inf), "`accel` must be a finite number > 0; got inf"),
])
def test_profile_rejects_bad_limits(args, pattern):
    with pytest.raises(ValueError, match=re.escape(pattern)):
        ir.trapezoidal_profile(*args)
    with pytest.raises(ValueError, match=re.escape(pattern)):
        ir.s_curve_profile(*args, 10.0)


# ---------------------------------------------------------------------------
# RMS, peaks, motor speeds and the limiting joint by hand
# ---------------------------------------------------------------------------
def test_rms_peak_and_motor_speed_by_hand():
    """Joint move of joint 1 only (joint 2 keeps its angle) in a horizontal plane.

    tau1 = M11 qdd1 exactly (no gravity about vertical axes; the Coriolis term of joint 1
    vanishes with qd2 = 0, Spong ch. 7 [M][D]), so tau1 is +M11 a, 0, -M11 a on the three
    phases and 0 in the dwell: RMS = M11 a sqrt(2 T_a / T_total) (by hand).
    """
    arm = two_link(HORIZONTAL, second_rated=False)
    q2 = math.radians(70.0)
    c2 = math.cos(q2)
    # Spong ch. 7 closed form (references.md item 1) plus the reflected rotor inertia
    m11 = (M1 * LC1 ** 2 + M2 * (L1 ** 2 + LC2 ** 2 + 2 * L1 * LC2 * c2) + I1 + I2
           + GEAR ** 2 * ROTOR)

    def tip(q1):
        return [L1 * math.cos(q1) + L2 * math.cos(q1 + q2),
                L1 * math.sin(q1) + L2 * math.sin(q1 + q2), 0.0]

    start, end = tip(math.radians(10.0)), tip(math.radians(70.0))
    cycle = ir.cycle_from_dict({
        "name": "swing", "points_m": {"a": start, "b": end},
        "moves": [{"from": "a", "to": "b", "kind": "joint", "joint_speed_dps": 60.0,
                   "joint_accel_dps2": 240.0, "dwell_s": 0.7505}]})
    # 'nearest' (to q = 0) keeps q2 = +70 deg at both ends; the elbow_up rule, which looks at
    # a fixed 'up' in the plane, would flip the branch between these two points
    res = ir.cycle_torques(arm, cycle, sample_rate_hz=1000.0, posture="nearest")
    np.testing.assert_allclose(np.degrees(res.move_end_q[0]), [70.0, 70.0], atol=1e-9)
    # 60 deg at 60 deg/s and 240 deg/s^2: T_a = 0.25 s, T = 1.25 s, with the dwell 2.0005 s
    # (the dwell is not a whole number of 1 ms steps: its samples weigh 0.7505 / 751 s each)
    assert res.duration_s == pytest.approx(2.0005, rel=1e-12)
    accel = math.radians(240.0)
    np.testing.assert_allclose(np.abs(res.qd[:, 1]).max(), 0.0, atol=1e-9)
    assert res.peak_torque_Nm[0] == pytest.approx(m11 * accel, rel=1e-9)
    rms = m11 * accel * math.sqrt(2 * 0.25 / 2.0005)
    assert res.rms_torque_Nm[0] == pytest.approx(rms, rel=1e-9)
    # motor speed: 60 deg/s = 10 rpm at the joint, times the gear ratio
    assert res.peak_motor_speed_rpm[0] == pytest.approx(10.0 * GEAR, rel=1e-9)
    assert res.speed_utilisation[0] == pytest.approx(10.0 * GEAR / 1000.0, rel=1e-9)
    assert res.peak_utilisation[0] == pytest.approx(m11 * accel / 40.0, rel=1e-9)
    assert res.rms_utilisation[0] == pytest.approx(rms / 2.0, rel=1e-9)
    # joint 2 has no ratings: NaN utilisations, skipped for the limiting joint
    assert np.isnan(res.utilisation[1]) and np.isnan(res.peak_rating_Nm[1])
    hand = {"peak torque": m11 * accel / 40.0, "RMS torque": rms / 2.0,
            "motor speed": 10.0 * GEAR / 1000.0}
    assert res.limiting_joint == 0
    assert res.limiting_criterion == max(hand, key=hand.get)
    assert res.utilisation[0] == pytest.approx(max(hand.values()), rel=1e-9)
    text = res.text()
    assert f"limiting joint: j1 ({res.limiting_criterion}, {max(hand.values()):.3f} of rating)" \
        in text
    assert res.caution in text and "CAUTION" in res.caution
    table = res.table()
    assert list(table.index) == ["j1", "j2"]
    assert table.loc["j1", "rms_torque_Nm"] == pytest.approx(rms, rel=1e-9)


def test_dwell_holds_against_gravity():
    """In a vertical plane a dwell's torque is the holding torque of references.md item 1."""
    arm = two_link(VERTICAL)
    cycle = ir.cycle_from_dict({
        "name": "hold", "points_m": {"a": [1.2, 0.4, 0.0], "b": [0.9, 0.8, 0.0]},
        "moves": [{"from": "a", "to": "b", "kind": "line", "speed_mps": 0.5,
                   "accel_mps2": 2.0, "dwell_s": 0.3}]})
    res = ir.cycle_torques(arm, cycle, sample_rate_hz=500.0)
    q1, q2 = res.move_end_q[0]
    # Spong ch. 7 gravity vector (references.md item 1) [M][D]
    g1 = (M1 * LC1 + M2 * L1) * G * math.cos(q1) + M2 * LC2 * G * math.cos(q1 + q2)
    g2 = M2 * LC2 * G * math.cos(q1 + q2)
    assert res.dwelling.sum() == 150
    np.testing.assert_allclose(res.tau[res.dwelling], np.broadcast_to([g1, g2], (150, 2)),
                               rtol=1e-9)
    np.testing.assert_allclose(res.weight_s.sum(), res.duration_s, rtol=1e-12)


# ---------------------------------------------------------------------------
# work-energy identity
# ---------------------------------------------------------------------------
def _energy(arm, q, qd):
    """Kinetic (M from arm.mass_matrix) plus potential energy, V summed by hand over the
    design's bodies: V = -sum m g . c with the rods' centres at lc along each link."""
    kinetic = 0.5 * np.einsum("...i,...ij,...j->...", qd, arm.mass_matrix(q), qd)
    q1, q12 = q[..., 0], q[..., 0] + q[..., 1]
    y1 = LC1 * np.sin(q1)
    y2 = L1 * np.sin(q1) + LC2 * np.sin(q12)
    return kinetic + G * (M1 * y1 + M2 * y2)


@pytest.mark.parametrize("move", [
    {"kind": "line", "speed_mps": 0.6, "accel_mps2": 3.0, "jerk_mps3": 30.0},
    {"kind": "joint", "joint_speed_dps": 90.0, "joint_accel_dps2": 400.0,
     "joint_jerk_dps3": 4000.0},
])
def test_work_energy_identity(move):
    """The work of the joint torques from the first sample to a sample in mid-motion equals
    the change of kinetic plus potential energy (work-energy theorem, common practice)."""
    arm = two_link(VERTICAL)
    cycle = ir.cycle_from_dict({"name": "energy",
                                "points_m": {"a": [1.3, 0.2, 0.0], "b": [0.5, 1.0, 0.0]},
                                "moves": [{"from": "a", "to": "b", **move}]})
    res = ir.cycle_torques(arm, cycle, sample_rate_hz=4000.0)
    power = np.sum(res.tau * res.qd, axis=1)
    t = res.t
    energy = _energy(arm, res.q, res.qd)
    for j in (t.size // 3, t.size // 2, 2 * t.size // 3):
        assert np.abs(res.qd[j]).max() > 0.1          # in motion: kinetic energy matters
        work = np.sum(0.5 * np.diff(t[:j + 1]) * (power[1:j + 1] + power[:j]))
        delta = energy[j] - energy[0]
        scale = np.abs(power).max() * t[j]
        assert work == pytest.approx(delta, abs=1e-6 * scale)


# ---------------------------------------------------------------------------
# line moves and joint moves
# ---------------------------------------------------------------------------
# 8th-order central difference of the first derivative (Fornberg's weights for the stencil
# -4..4: 4/5, -1/5, 4/105, -1/280; numerical analysis, common practice, no source)
_FD8 = ((1, 4.0 / 5.0), (2, -1.0 / 5.0), (3, 4.0 / 105.0), (4, -1.0 / 280.0))


def _jdot_qd_8th(arm, q, qd, step=1e-2):
    """J_v-dot qd = d/de [J_v(q + e u) u] |qd|^2 at e = 0, u = qd / |qd|, (N, 3).

    8th-order central difference of the core's Jacobian along the unit rate direction with a
    step of 1e-2 rad: truncation ~ step^8 (about 1e-16 here) and round-off ~ eps / step
    (about 1e-14 of |J|), i.e. independent of, and far more accurate than, the cycle's own
    2nd-order difference with a 1e-5 rad step.
    """
    speed = np.linalg.norm(qd, axis=-1, keepdims=True)
    u = np.divide(qd, speed, out=np.zeros_like(qd), where=speed > 0.0)
    out = np.zeros(q.shape[:-1] + (3,))
    for k, c in _FD8:
        jp = arm.jacobian(q + k * step * u)[..., :3, :]
        jm = arm.jacobian(q - k * step * u)[..., :3, :]
        out += c * np.einsum("...ij,...j->...i", jp - jm, u)
    return out / step * speed * speed


def _profile_peak_accel(prof):
    """Largest |acceleration| of a constant-jerk piecewise profile: at a piece end (exact)."""
    ends = np.diff(np.append(prof.starts, prof.duration))
    return float(max(np.abs(prof.a0).max(), np.abs(prof.a0 + prof.jerk * ends).max()))


def _kestrel():
    from pathlib import Path
    return ir.load_design(Path(__file__).resolve().parent.parent / "designs" / "kestrel_a.toml")


@pytest.mark.parametrize("jerk", [None, 25.0])
def test_line_move_on_segment_within_limits(jerk):
    arm = _kestrel()
    p0, p1 = np.array([0.45, 0.05, 0.30]), np.array([0.30, 0.05, 0.08])
    move = {"from": list(p0), "to": list(p1), "kind": "line", "speed_mps": 0.3,
            "accel_mps2": 1.5}
    if jerk:
        move["jerk_mps3"] = jerk
    res = ir.cycle_torques(arm, {"name": "line", "moves": [move]}, sample_rate_hz=2000.0)
    u = (p1 - p0) / np.linalg.norm(p1 - p0)
    x = arm.tool_position(res.q)
    rel = x - p0
    off = rel - (rel @ u)[:, None] * u
    assert np.linalg.norm(off, axis=1).max() <= 1e-9
    along = rel @ u
    assert along.min() >= 0.0 and along.max() <= np.linalg.norm(p1 - p0)
    # joint rates against the definition of a line move: J qd = s-dot u and
    # J qdd + J-dot qd = s-ddot u at every sample, with s from the analytic profile and J-dot qd
    # taken independently of the cycle's own (2nd-order, 1e-5 rad) difference (_jdot_qd_8th)
    length = float(np.linalg.norm(p1 - p0))
    prof = (ir.s_curve_profile(length, 0.3, 1.5, jerk) if jerk else
            ir.trapezoidal_profile(length, 0.3, 1.5))
    _, sd, sdd = prof.sample(res.t)
    jac = arm.jacobian(res.q)[..., :3, :]
    xd = np.einsum("...ij,...j->...i", jac, res.qd)
    xdd = np.einsum("...ij,...j->...i", jac, res.qdd) + _jdot_qd_8th(arm, res.q, res.qd)
    # absolute tolerance 1e-9 of the move's speed / acceleration limit
    np.testing.assert_allclose(xd, sd[:, None] * u, rtol=0, atol=1e-9 * 0.3)
    np.testing.assert_allclose(xdd, sdd[:, None] * u, rtol=0, atol=1e-9 * 1.5)
    # the limits hold at every sample (largest value, no percentile); the speed is reached
    assert np.linalg.norm(xd, axis=1).max() <= 0.3 * (1 + 1e-9)
    assert np.linalg.norm(xd, axis=1).max() >= 0.3 * (1 - 1e-3)
    assert np.linalg.norm(xdd, axis=1).max() <= 1.5 * (1 + 1e-9)
    # ... and between the samples: the profile's acceleration is linear on each piece, so its
    # largest |s-ddot| is at a piece end (exact, no sampling)
    assert _profile_peak_accel(prof) <= 1.5 * (1 + 1e-12)
    # tool velocity is along the segment
    np.testing.assert_allclose(res.tool_velocity, np.outer(res.tool_velocity @ u, u), atol=1e-9)


@pytest.mark.parametrize("jerk", [None, 20.0])
def test_line_move_rates_on_two_link_arm_against_closed_form(jerk):
    """Case A in its vertical plane: the tool point x = (l1 c1 + l2 c12, l1 s1 + l2 s12)
    (references.md conventions) gives J = [[-l1 s1 - l2 s12, -l2 s12], [l1 c1 + l2 c12, l2 c12]]
    and, differentiated by hand, J-dot qd = -(l1 c1 qd1^2 + l2 c12 w^2, l1 s1 qd1^2 + l2 s12 w^2)
    with w = qd1 + qd2. A line move must satisfy J qd = s-dot u and J qdd + J-dot qd = s-ddot u
    (the definition of the move, s from the analytic profile): checked at every sample to 1e-9
    of the move's speed and acceleration limits (absolute)."""
    arm = two_link(VERTICAL)
    p0, p1 = np.array([1.3, 0.2, 0.0]), np.array([0.5, 1.0, 0.0])
    v, a = 0.6, 3.0
    move = {"from": list(p0), "to": list(p1), "kind": "line", "speed_mps": v, "accel_mps2": a}
    if jerk:
        move["jerk_mps3"] = jerk
    res = ir.cycle_torques(arm, {"name": "line", "moves": [move]}, sample_rate_hz=2000.0)
    length = float(np.linalg.norm(p1 - p0))
    u = ((p1 - p0) / length)[:2]
    prof = (ir.s_curve_profile(length, v, a, jerk) if jerk else
            ir.trapezoidal_profile(length, v, a))
    s, sd, sdd = prof.sample(res.t)
    q1, q12 = res.q[:, 0], res.q[:, 0] + res.q[:, 1]
    s1, c1, s12, c12 = np.sin(q1), np.cos(q1), np.sin(q12), np.cos(q12)
    jac = np.stack([np.stack([-L1 * s1 - L2 * s12, -L2 * s12], -1),
                    np.stack([L1 * c1 + L2 * c12, L2 * c12], -1)], -2)
    w1, w = res.qd[:, 0], res.qd[:, 0] + res.qd[:, 1]
    jdot_qd = -np.stack([L1 * c1 * w1 ** 2 + L2 * c12 * w ** 2,
                         L1 * s1 * w1 ** 2 + L2 * s12 * w ** 2], -1)
    np.testing.assert_allclose(np.stack([L1 * c1 + L2 * c12, L1 * s1 + L2 * s12], -1),
                               p0[:2] + np.outer(s, u), rtol=0, atol=1e-9)        # on the segment
    xd = np.einsum("...ij,...j->...i", jac, res.qd)
    xdd = np.einsum("...ij,...j->...i", jac, res.qdd) + jdot_qd
    np.testing.assert_allclose(xd, sd[:, None] * u, rtol=0, atol=1e-9 * v)
    np.testing.assert_allclose(xdd, sdd[:, None] * u, rtol=0, atol=1e-9 * a)
    assert np.abs(res.qd).max() > 0.5 and np.abs(jdot_qd).max() > 0.1   # J-dot qd matters
    assert np.linalg.norm(xdd, axis=1).max() <= a * (1 + 1e-9)


def test_joint_move_ends_at_ik_solution_and_stays_on_joint_line():
    arm = _kestrel()
    cycle = ir.cycle_from_dict({
        "name": "j", "points_m": {"a": [0.45, 0.05, 0.30], "b": [0.30, 0.05, 0.08]},
        "moves": [{"from": "a", "to": "b", "kind": "joint", "joint_speed_dps": 90.0,
                   "joint_accel_dps2": 300.0},
                  {"to": "a", "kind": "joint", "joint_speed_dps": 90.0,
                   "joint_accel_dps2": 300.0}]})
    res = ir.cycle_torques(arm, cycle)
    qa = ir.solve_positions(arm, [0.45, 0.05, 0.30]).q
    qb = ir.solve_positions(arm, [0.30, 0.05, 0.08]).q
    np.testing.assert_allclose(res.move_end_q, [qb, qa], atol=1e-8)
    np.testing.assert_allclose(arm.tool_position(res.move_end_q), [[0.30, 0.05, 0.08],
                                                                    [0.45, 0.05, 0.30]],
                               atol=1e-8)
    first = res.move_index == 0
    dq = qb - qa
    rel = res.q[first] - qa
    frac = rel @ dq / (dq @ dq)
    np.testing.assert_allclose(rel, np.outer(frac, dq), atol=1e-12)
    # the joint with the largest travel reaches the joint speed limit, none exceeds it
    peak = np.abs(res.qd).max(axis=0)
    assert peak.max() == pytest.approx(math.radians(90.0), rel=1e-9)


def test_joint_move_with_tool_limits_keeps_the_tool_under_them():
    arm = _kestrel()
    cycle = ir.cycle_from_dict({
        "name": "j", "points_m": {"a": [0.45, 0.05, 0.30], "b": [0.25, 0.05, 0.06]},
        "moves": [{"from": "a", "to": "b", "kind": "joint", "speed_mps": 0.4,
                   "accel_mps2": 1.2}]})
    # dense sampling (20 kHz, midpoints 50 us apart); the tool speed J qd and acceleration
    # J qdd + J-dot qd (J-dot qd by _jdot_qd_8th) at every sample stay
    # within the limits to 1e-9 relative (no percentile)
    res = ir.cycle_torques(arm, cycle, sample_rate_hz=20000.0)
    jac = arm.jacobian(res.q)[..., :3, :]
    xd = np.einsum("...ij,...j->...i", jac, res.qd)
    xdd = np.einsum("...ij,...j->...i", jac, res.qdd) + _jdot_qd_8th(arm, res.q, res.qd)
    np.testing.assert_allclose(res.tool_velocity, xd, rtol=0, atol=1e-12)
    assert np.linalg.norm(xd, axis=1).max() <= 0.4 * (1 + 1e-9)
    assert np.linalg.norm(xdd, axis=1).max() <= 1.2 * (1 + 1e-9)
    # not trivially slow: the bound rule is conservative (G1 and G2 are maxima over the path,
    # taken at different points), here 93 % of the speed limit is used
    assert max(np.linalg.norm(xd, axis=1).max() / 0.4,
               np.linalg.norm(xdd, axis=1).max() / 1.2) >= 0.8


def test_design_cycles_round_trip(tmp_path):
    arm = _kestrel()
    cycles = ir.design_cycles(arm)
    assert [c.name for c in cycles] == ["tray_to_fixture"]
    ir.save_design(arm, tmp_path / "k.toml")
    again = ir.load_design(tmp_path / "k.toml")
    assert again.to_dict() == arm.to_dict()
    assert ir.cycle_from_dict(cycles[0].to_dict()) == cycles[0]
    # every move starts where the previous one ended
    for before, after in zip(cycles[0].moves, cycles[0].moves[1:]):
        assert after.start_m == before.end_m
    assert cycles[0].closed


# ---------------------------------------------------------------------------
# errors
# ---------------------------------------------------------------------------
BASE = {"name": "c", "points_m": {"tray": [0.3, 0.05, 0.1], "fixture": [0.5, 0.05, 0.2]},
        "moves": [{"from": "tray", "to": "fixture", "kind": "line", "speed_mps": 0.5,
                   "accel_mps2": 2.0},
                  {"to": "tray", "kind": "joint", "joint_speed_dps": 90.0,
                   "joint_accel_dps2": 300.0}]}


def _with_move(i, **changes):
    import copy
    data = copy.deepcopy(BASE)
    for key, value in changes.items():
        if value is None:
            data["moves"][i].pop(key)
        else:
            data["moves"][i][key] = value
    return data


BAD = [
    (_with_move(0, speed_mps=None), "moves[0].speed_mps", "required key is missing"),
    (_with_move(0, speed_mps=-1.0), "moves[0].speed_mps", "must be > 0; got -1"),
    (_with_move(0, to="fixtrue"), "moves[0].to",
     "unknown point 'fixtrue'; did you mean 'fixture'?"),
    (_with_move(1, **{"from": "fixture_x"}), "moves[1].from", "unknown point 'fixture_x'"),
    (_with_move(1, **{"from": "tray"}), "moves[1].from",
     "must be where the previous move ends (fixture); got tray"),
    (_with_move(0, joint_speed_dps=30.0), "moves[0].joint_speed_dps", "only for kind = 'joint'"),
    (_with_move(1, jerk_mps3=30.0), "moves[1].jerk_mps3", "only for kind = 'line'"),
    (_with_move(1, joint_accel_dps2=None), "moves[1].joint_accel_dps2",
     "required key is missing (given with joint_speed_dps)"),
    (_with_move(1, joint_accel_dps2=None, joint_speed_dps=None), "moves[1]",
     "a joint move needs joint_speed_dps and joint_accel_dps2"),
    (_with_move(0, kind="arc"), "moves[0].kind", "'arc' is not a valid move kind"),
    (_with_move(0, dwell_s=-0.1), "moves[0].dwell_s", "must be >= 0"),
    (_with_move(0, dwell_s=True), "moves[0].dwell_s", "must be a number; got a boolean"),
    (_with_move(0, speeed_mps=1.0), "moves[0].speeed_mps",
     "unknown key; did you mean 'speed_mps'?"),
    (_with_move(0, to="tray"), "moves[0].to", "goes from tray to the same point"),
    (_with_move(0, to=[0.3, 0.05]), "moves[0].to", "must have 3 entries; got 2"),
    (_with_move(0, **{"from": None}), "moves[0].from", "required key is missing"),
    ({**BASE, "moves": []}, "moves", "must have at least one move"),
    ({**BASE, "points_m": {"tray": [0.3, 0.05, 0.1], "fixture": [0.5, "x", 0.2]}},
     "points_m.fixture[1]", "must be a number"),
]


@pytest.mark.parametrize("data, path, reason", BAD)
def test_bad_cycle_names_the_field(data, path, reason):
    with pytest.raises(ir.DesignError) as info:
        ir.cycle_from_dict(data)
    assert any(p == path and reason in r for p, r in info.value.problems), info.value.problems


def test_design_file_reports_cycle_problems_with_the_others():
    arm = _kestrel()
    data = arm.to_dict()
    data["cycles"][0]["moves"][1]["speed_mps"] = 0.0
    data["joints"][1]["link"]["point_masses"][0]["mass_kg"] = -1.0
    data["cycles"].append({"name": "tray_to_fixture", "moves": [
        {"from": [0.3, 0.05, 0.1], "to": [0.4, 0.05, 0.1], "kind": "line", "speed_mps": 0.1,
         "accel_mps2": 1.0}]})
    with pytest.raises(ir.DesignError) as info:
        ir.Arm.from_dict(data)
    paths = [p for p, _ in info.value.problems]
    assert "cycles[0].moves[1].speed_mps" in paths
    assert "joints[1].link.point_masses[0].mass_kg" in paths
    assert "cycles[1].name" in paths
    assert re.search(r"cycles\[1\]\.name: duplicate cycle name 'tray_to_fixture'", str(info.value))


def test_unreachable_point_names_the_move():
    arm = _kestrel()
    cycle = {"name": "far", "points_m": {"a": [0.40, 0.05, 0.20], "b": [0.40, 0.05, 0.10],
                                         "far": [0.95, 0.05, 0.20]},
             "moves": [{"from": "a", "to": "b", "kind": "line", "speed_mps": 0.3,
                        "accel_mps2": 1.0},
                       {"to": "far", "kind": "line", "speed_mps": 0.3, "accel_mps2": 1.0}]}
    with pytest.raises(ValueError, match=r"cycle 'far', move 1 \(b -> far \(line\)\): tool "
                                         r"point \[[0-9., ]+\] m at t = [0-9.]+ s into the move "
                                         r"cannot be reached \(out_of_reach\)"):
        ir.cycle_torques(arm, cycle)
    cycle["moves"][1]["kind"] = "joint"
    cycle["moves"][1].update(joint_speed_dps=90.0, joint_accel_dps2=300.0)
    with pytest.raises(ValueError, match=r"move 1 \(b -> far \(joint\)\): tool point "
                                         r"\[0.95, 0.05, 0.2\] m \(the end point\) cannot be "
                                         r"reached \(out_of_reach\)"):
        ir.cycle_torques(arm, cycle)


def test_line_move_on_redundant_arm_is_refused():
    arm = ir.planar_chain([0.4, 0.3, 0.2], [1.0, 0.8, 0.5])
    cycle = {"name": "r", "moves": [{"from": [0.5, 0.0, 0.3], "to": [0.4, 0.0, 0.4],
                                     "kind": "line", "speed_mps": 0.3, "accel_mps2": 1.0}]}
    with pytest.raises(ValueError, match=r"line moves need an arm that is not redundant for its "
                                         r"task \(3 joints, 2 task axes\)"):
        ir.cycle_torques(arm, cycle)


def test_cycle_by_name_and_unknown_name():
    arm = _kestrel()
    with pytest.raises(KeyError, match="no cycle named 'tray' in design 'kestrel_a'; cycles: "
                                       "tray_to_fixture"):
        ir.cycle_torques(arm, "tray")
    with pytest.raises(ValueError, match=re.escape("`sample_rate_hz` must be a finite number > 0")):
        ir.cycle_torques(arm, "tray_to_fixture", sample_rate_hz=0.0)
