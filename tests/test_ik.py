"""Inverse kinematics over task regions (``ir.solve_positions``).

Outside checks used here:
- the law of cosines applied by hand to the two-link planar arm (Euclid, *Elements*
  II.12-13): cos q2 = (x^2 + y^2 - l1^2 - l2^2) / (2 l1 l2),
  q1 = atan2(y, x) - atan2(l2 sin q2, l1 + l2 cos q2); this is the usual textbook
  two-link inverse solution (e.g. Craig, *Introduction to Robotics*, ch. 4; chapter from
  memory [M]), written out again here, not taken from the code;
- forward kinematics of ``ir.planar_chain`` arms written by hand from the builder's
  documented layout (mount rpy = [90 - tilt, 0, yaw], R = Rz(yaw) Ry(pitch) Rx(roll) per
  arm-model.md; links along the local x axis; joint axes along local z);
- the elbow's side (the documented posture rule: the sense of the elbow's bend measured
  from the shoulder, in the arm's own frame), written out again from ``arm.link_frames``
  and pinned by hand to joint coordinates: elbow up is q2 < 0 on ``planar_chain`` arms and
  q3 < 0 on the yaw-pitch-pitch demo arm, whatever the mount (plane geometry of the
  two-link triangle, common practice, no source);
- reach limits l1 + l2 and |l1 - l2| of a two-link arm (triangle inequality).
"""

import tomllib
from pathlib import Path

import numpy as np
import pytest
from hypothesis import assume, given, settings
from hypothesis import strategies as st

import inertia_review as ir

DESIGNS = Path(__file__).resolve().parent.parent / "designs"
FAST = settings(max_examples=30, deadline=None)
ROUND_TRIP_M = 1e-8            # forward(inverse(p)) == p within 10 nm (the brief's bound)
OK, OUT_OF_REACH, BEYOND_LIMITS, NOT_CONVERGED, OFF_PLANE, NO_POSTURE = range(6)


# ---------------------------------------------------------------------------
# independent helpers (written from arm-model.md and the builder's documentation)
# ---------------------------------------------------------------------------
def rpy_matrix(rpy_deg):
    """R = Rz(yaw) Ry(pitch) Rx(roll), fixed axes X-Y-Z (arm-model.md)."""
    r, p, y = np.deg2rad(rpy_deg)
    rx = np.array([[1, 0, 0], [0, np.cos(r), -np.sin(r)], [0, np.sin(r), np.cos(r)]])
    ry = np.array([[np.cos(p), 0, np.sin(p)], [0, 1, 0], [-np.sin(p), 0, np.cos(p)]])
    rz = np.array([[np.cos(y), -np.sin(y), 0], [np.sin(y), np.cos(y), 0], [0, 0, 1]])
    return rz @ ry @ rx


def chain_plane(tilt_deg, yaw_deg):
    """In-plane x, in-plane y and the normal of a planar_chain arm's plane in W."""
    rot = rpy_matrix([90.0 - tilt_deg, 0.0, yaw_deg])
    return rot[:, 0], rot[:, 1], rot[:, 2]


def chain_points(l1, l2, q, ex, ey):
    """Elbow and tool points in W of a planar two-link chain with its base at the origin."""
    q = np.atleast_2d(q)
    q1, q12 = q[:, 0], q[:, 0] + q[:, 1]
    elbow = l1 * (np.cos(q1)[:, None] * ex + np.sin(q1)[:, None] * ey)
    tool = elbow + l2 * (np.cos(q12)[:, None] * ex + np.sin(q12)[:, None] * ey)
    return elbow, tool


def law_of_cosines(l1, l2, x, y):
    """Both two-link branches (q2 > 0 first) from the law of cosines, by hand."""
    c2 = (x * x + y * y - l1 * l1 - l2 * l2) / (2.0 * l1 * l2)
    out = []
    for sign in (1.0, -1.0):
        q2 = sign * np.arccos(np.clip(c2, -1.0, 1.0))
        q1 = np.arctan2(y, x) - np.arctan2(l2 * np.sin(q2), l1 + l2 * np.cos(q2))
        out.append(np.stack([q1, q2], axis=-1))
    return out


def wrap(a):
    return np.arctan2(np.sin(a), np.cos(a))


def elbow_side(arm, q, elbow_index):
    """The documented posture value, > 0 for 'elbow_up', written out again from
    ``arm.link_frames``: -sign * det[p_e - p_s, t - p_e, a_e] / (|p_e - p_s| |t - p_e|), with
    the shoulder s = joint e - 1 and sign = the side of d_0 . (z_B x a_e) at q = 0 (z_B the
    base's z axis in W, d_0 the shoulder-to-tool reach normal to a_e), +1 where that is
    (nearly) zero. Pinned to hand geometry by ``test_posture_value_by_hand``."""
    design = arm.to_dict()
    local_axis = np.asarray(design["joints"][elbow_index]["axis"], float)
    local_axis = local_axis / np.linalg.norm(local_axis)

    def parts(qq):
        origins, rot = arm.link_frames(qq)
        axis = rot[..., elbow_index, :, :] @ local_axis
        return origins[..., elbow_index - 1, :], origins[..., elbow_index, :], axis

    s0, _, a0 = parts(np.zeros(arm.dof))
    reach = arm.tool_position(np.zeros(arm.dof)) - s0
    reach = reach - (reach @ a0) * a0
    side = reach @ np.cross(rpy_matrix(design["mount"]["rpy_deg"])[:, 2], a0)
    sign = np.sign(side) if abs(side) > 0.1 * np.linalg.norm(reach) else 1.0
    q = np.asarray(q, float)
    s, e, a = parts(q)
    upper, fore = e - s, arm.tool_position(q) - e
    det = np.sum(np.cross(upper, fore) * a, axis=-1)
    return -sign * det / (np.linalg.norm(upper, axis=-1) * np.linalg.norm(fore, axis=-1))


def assert_within_limits(arm, q):
    lim = arm.joint_limits
    assert np.all(q >= lim[:, 0] - 1e-12) and np.all(q <= lim[:, 1] + 1e-12), (q, lim)


def kestrel(name="kestrel_a", **mount):
    with open(DESIGNS / f"{name}.toml", "rb") as fh:
        d = tomllib.load(fh)
    d["mount"].update(mount)
    if mount:
        d["name"] = f"{name}_remounted"
    return ir.Arm.from_dict(d)


def test_posture_value_by_hand():
    # planar chain (joint axes +z_local, links along x_local): det[l1 u1, l2 u2, z] =
    # l1 l2 sin q2, so elbow up (value > 0) is sin q2 < 0, for every plane tilt and yaw
    rng = np.random.default_rng(1)
    q = rng.uniform(-3.0, 3.0, (50, 2))
    q = q[np.abs(np.sin(q[:, 1])) > 0.05]
    for tilt, yaw in PLANES:
        arm = ir.planar_chain([0.7, 0.5], [1.0, 0.5], plane_tilt_deg=tilt, base_yaw_deg=yaw)
        assert np.array_equal(np.sign(elbow_side(arm, q, 1)), -np.sign(np.sin(q[:, 1])))
    # kestrel_a (shoulder and elbow turn about -y_local, base z up, zero pose reaching +x):
    # value = -sin q3 exactly, on any mount
    q = rng.uniform([-2.5, -0.1, -2.5], [2.5, 3.2, 2.5], (50, 3))
    for mount in ({}, {"rpy_deg": [0.0, -45.0, 0.0]}, {"rpy_deg": [50.0, 30.0, -20.0]}):
        arm = kestrel(**mount)
        assert np.allclose(elbow_side(arm, q, 2), -np.sin(q[:, 2]), rtol=0, atol=1e-12)
        sol = ir.solve_positions(arm, arm.tool_position(q[:10]), posture="elbow_up")
        ok = sol.status == OK
        assert ok.sum() >= 5 and np.all(sol.q[ok, 2] <= 1e-9)


# ---------------------------------------------------------------------------
# closed form on planar two-link chains, against the law of cosines
# ---------------------------------------------------------------------------
PLANES = [(0.0, 0.0), (30.0, 45.0), (60.0, -120.0), (15.0, 170.0)]


@pytest.mark.parametrize("tilt, yaw", PLANES)
@pytest.mark.parametrize("method", ["closed_form", "numeric"])
def test_planar_two_link_both_branches(tilt, yaw, method):
    l1, l2 = 1.0, 0.8
    arm = ir.planar_chain([l1, l2], [2.0, 1.0], plane_tilt_deg=tilt, base_yaw_deg=yaw)
    ex, ey, _ = chain_plane(tilt, yaw)
    rng = np.random.default_rng(7)
    q_true = np.column_stack([rng.uniform(-np.pi, np.pi, 40),
                              rng.choice([-1.0, 1.0], 40) * rng.uniform(0.3, 2.8, 40)])
    _, target = chain_points(l1, l2, q_true, ex, ey)
    # the builder's arm reproduces the hand-written forward kinematics
    assert np.allclose(arm.tool_position(q_true), target, rtol=0, atol=1e-12)
    x, y = target @ ex, target @ ey
    branches = law_of_cosines(l1, l2, x, y)
    # keep targets whose two elbows are clearly on opposite sides (not a vertical line)
    h = [elbow_side(arm, b, 1) for b in branches]
    keep = (np.abs(h[0]) > 1e-3) & (np.abs(h[1]) > 1e-3)
    assert keep.sum() >= 20
    target, branches = target[keep], [b[keep] for b in branches]
    h = [hh[keep] for hh in h]
    assert np.all(np.sign(h[0]) == -np.sign(h[1]))

    for posture, sign in (("elbow_up", 1.0), ("elbow_down", -1.0)):
        sol = ir.solve_positions(arm, target, posture=posture, method=method)
        assert np.all(sol.status == OK), sol.status
        assert np.max(np.abs(arm.tool_position(sol.q) - target)) <= ROUND_TRIP_M
        assert_within_limits(arm, sol.q)
        # the law-of-cosines branch whose elbow is on the requested side
        expected = np.where((sign * h[0] > 0)[:, None], branches[0], branches[1])
        assert np.max(np.abs(wrap(sol.q - expected))) < 1e-6
        assert np.all(sign * elbow_side(arm, sol.q, 1) > 0)


@FAST
@given(l1=st.floats(0.2, 1.5), l2=st.floats(0.2, 1.5), tilt=st.floats(0.0, 80.0),
       yaw=st.floats(-180.0, 180.0), q1=st.floats(-3.1, 3.1), q2=st.floats(0.25, 2.9),
       flip=st.booleans())
def test_closed_form_round_trip_random_chains(l1, l2, tilt, yaw, q1, q2, flip):
    arm = ir.planar_chain([l1, l2], [1.0, 0.5], plane_tilt_deg=tilt, base_yaw_deg=yaw)
    q = np.array([q1, -q2 if flip else q2])
    target = arm.tool_position(q)
    ex, ey, _ = chain_plane(tilt, yaw)
    branches = law_of_cosines(l1, l2, target @ ex, target @ ey)
    heights = [float(elbow_side(arm, b, 1)) for b in branches]
    assume(min(abs(h) for h in heights) > 1e-4 * (l1 + l2))
    up = ir.solve_positions(arm, target, posture="elbow_up")
    down = ir.solve_positions(arm, target, posture="elbow_down")
    for sol in (up, down):
        assert sol.status == OK
        assert np.max(np.abs(arm.tool_position(sol.q) - target)) <= ROUND_TRIP_M
        assert_within_limits(arm, sol.q)
    assert elbow_side(arm, up.q, 1) > 0 > elbow_side(arm, down.q, 1)
    # the two answers are the two law-of-cosines branches
    got = sorted([up.q, down.q], key=lambda v: -v[1])
    assert np.max(np.abs(wrap(got[0] - branches[0]))) < 1e-7
    assert np.max(np.abs(wrap(got[1] - branches[1]))) < 1e-7


def test_horizontal_plane_round_trip():
    # tilt 90: gravity is normal to the plane; both branches still round-trip
    arm = ir.planar_chain([0.6, 0.45], [1.0, 0.5], plane_tilt_deg=90.0, base_yaw_deg=20.0)
    q = np.array([[0.3, 1.1], [-2.0, -0.6], [2.5, 2.2]])
    target = arm.tool_position(q)
    ex, ey, normal = chain_plane(90.0, 20.0)
    assert np.allclose(normal, [0.0, 0.0, 1.0], atol=1e-15)    # horizontal plane, by hand
    for method in ("closed_form", "numeric"):
        for posture in ("elbow_up", "elbow_down"):
            sol = ir.solve_positions(arm, target, posture=posture, method=method)
            assert np.all(sol.status == OK)
            assert np.max(np.abs(arm.tool_position(sol.q) - target)) <= ROUND_TRIP_M


# ---------------------------------------------------------------------------
# a design whose joint frames have offsets and rpy (axes stay parallel/antiparallel)
# ---------------------------------------------------------------------------
OFFSET_DESIGN = {
    "name": "offset_planar", "format": 1,
    "mount": {"rpy_deg": [80.0, 0.0, 25.0]},
    "joints": [
        {"name": "j1", "xyz_m": [0.0, 0.0, 0.04], "rpy_deg": [0.0, 0.0, 20.0],
         "axis": [0.0, 0.0, 1.0], "limits_deg": [-180.0, 180.0],
         "link": {"mass_kg": 1.5, "com_m": [0.25, 0.0, 0.0],
                  "inertia_kgm2": [0.001, 0.03, 0.03, 0.0, 0.0, 0.0]}},
        # rolled by 180 deg: this joint's axis is antiparallel to joint 1's in W
        {"name": "j2", "xyz_m": [0.5, 0.08, 0.03], "rpy_deg": [180.0, 0.0, 10.0],
         "axis": [0.0, 0.0, 1.0], "limits_deg": [-180.0, 180.0],
         "link": {"mass_kg": 0.8, "com_m": [0.2, 0.0, 0.0],
                  "inertia_kgm2": [0.0005, 0.01, 0.01, 0.0, 0.0, 0.0]}},
    ],
    "tool": {"xyz_m": [0.4, -0.05, 0.02], "payload_kg": 0.2},
}


@pytest.fixture(scope="module")
def offset_arm():
    return ir.Arm.from_dict(OFFSET_DESIGN)


def test_offset_design_is_planar(offset_arm):
    assert offset_arm.task_axes.shape == (2, 3)
    _, rot = offset_arm.link_frames(np.zeros(2))
    a1 = rot[0] @ np.array([0.0, 0.0, 1.0])
    a2 = rot[1] @ np.array([0.0, 0.0, 1.0])
    assert np.allclose(a1, -a2, atol=1e-12)                     # antiparallel, by design


@pytest.mark.parametrize("method", ["closed_form", "numeric"])
def test_offset_design_both_branches(offset_arm, method):
    arm = offset_arm
    rng = np.random.default_rng(3)
    q_true = np.column_stack([rng.uniform(-np.pi, np.pi, 30), rng.uniform(-np.pi, np.pi, 30)])
    target = arm.tool_position(q_true)
    up = ir.solve_positions(arm, target, posture="elbow_up", method=method)
    down = ir.solve_positions(arm, target, posture="elbow_down", method=method)
    hu, hd = elbow_side(arm, up.q, 1), elbow_side(arm, down.q, 1)
    # skip targets where one branch is (nearly) on the line: their posture is ambiguous
    clear = np.isfinite(hu) & np.isfinite(hd)
    clear &= (up.status == OK) & (down.status == OK)
    assert clear.sum() >= 20, (up.status, down.status)
    for sol in (up, down):
        assert np.max(np.abs(arm.tool_position(sol.q[clear]) - target[clear])) <= ROUND_TRIP_M
        assert_within_limits(arm, sol.q[clear])
    assert np.all(hu[clear] > -1e-12) and np.all(hd[clear] < 1e-12)
    distinct = clear & (np.abs(hu) > 1e-3) & (np.abs(hd) > 1e-3)
    assert distinct.sum() >= 15
    assert np.all(np.max(np.abs(wrap(up.q[distinct] - down.q[distinct])), axis=-1) > 1e-3)


def test_offset_design_closed_form_equals_numeric(offset_arm):
    arm = offset_arm
    q_true = np.array([[0.4, 1.0], [-1.2, -0.8], [2.2, 1.7], [-2.5, -2.0]])
    target = arm.tool_position(q_true)
    for posture in ("elbow_up", "elbow_down"):
        closed = ir.solve_positions(arm, target, posture=posture, method="closed_form")
        numeric = ir.solve_positions(arm, target, posture=posture, method="numeric")
        assert np.all(closed.status == OK) and np.all(numeric.status == OK)
        assert np.max(np.abs(wrap(closed.q - numeric.q))) < 1e-6


def test_offset_design_off_plane(offset_arm):
    arm = offset_arm
    target = arm.tool_position(np.array([0.4, 1.0]))
    normal = np.cross(arm.task_axes[0], arm.task_axes[1])
    for method in ("closed_form", "numeric"):
        sol = ir.solve_positions(arm, target + 0.01 * normal, method=method)
        assert sol.status == OFF_PLANE and np.all(np.isnan(sol.q))


# ---------------------------------------------------------------------------
# closed form and numeric agree on the same branch
# ---------------------------------------------------------------------------
@pytest.mark.parametrize("tilt, yaw", PLANES)
def test_closed_form_equals_numeric(tilt, yaw):
    arm = ir.planar_chain([0.7, 0.5], [1.2, 0.6], plane_tilt_deg=tilt, base_yaw_deg=yaw)
    rng = np.random.default_rng(11)
    q = np.column_stack([rng.uniform(-np.pi, np.pi, 25), rng.uniform(0.3, 2.8, 25)])
    target = arm.tool_position(q)
    for posture in ("elbow_up", "elbow_down"):
        closed = ir.solve_positions(arm, target, posture=posture, method="closed_form")
        numeric = ir.solve_positions(arm, target, posture=posture, method="numeric")
        both = (closed.status == OK) & (numeric.status == OK)
        assert both.sum() >= 20
        assert np.array_equal(closed.status, numeric.status)
        assert np.max(np.abs(wrap(closed.q[both] - numeric.q[both]))) < 1e-6


# ---------------------------------------------------------------------------
# out of reach, off the plane, joint limits
# ---------------------------------------------------------------------------
def _in_plane(tilt, yaw, radius, angle):
    ex, ey, _ = chain_plane(tilt, yaw)
    return radius * (np.cos(angle) * ex + np.sin(angle) * ey)


@pytest.mark.parametrize("method", ["closed_form", "numeric"])
def test_beyond_reach_is_out_of_reach(method):
    l1, l2 = 1.0, 0.6
    arm = ir.planar_chain([l1, l2], [1.0, 0.5], plane_tilt_deg=20.0, base_yaw_deg=30.0)
    pts = np.array([_in_plane(20.0, 30.0, r, a) for r, a in
                    [(l1 + l2 + 1e-4, 0.3), (2.0, -2.0), (5.0, 1.0)]])
    sol = ir.solve_positions(arm, pts, method=method)
    assert np.all(sol.status == OUT_OF_REACH), sol.status
    assert np.all(np.isnan(sol.q))


def test_inner_hole_is_out_of_reach_closed_form():
    l1, l2 = 1.0, 0.6                               # no point closer than |l1 - l2| = 0.4
    arm = ir.planar_chain([l1, l2], [1.0, 0.5], plane_tilt_deg=20.0, base_yaw_deg=30.0)
    pts = np.array([_in_plane(20.0, 30.0, r, a) for r, a in
                    [(0.4 - 1e-4, 0.3), (0.1, 2.0), (0.0, 0.0)]])
    sol = ir.solve_positions(arm, pts, method="closed_form")
    assert np.all(sol.status == OUT_OF_REACH), sol.status
    assert np.all(np.isnan(sol.q))


def test_inner_hole_is_out_of_reach_numeric():
    # Same points as above with the numeric solver.  The joints turn a full circle
    # (limits -180..180), so "beyond_joint_limits" cannot be the reason: out_of_reach.
    l1, l2 = 1.0, 0.6
    arm = ir.planar_chain([l1, l2], [1.0, 0.5], plane_tilt_deg=20.0, base_yaw_deg=30.0)
    pts = np.array([_in_plane(20.0, 30.0, r, a) for r, a in
                    [(0.4 - 1e-3, 0.3), (0.1, 2.0)]])
    sol = ir.solve_positions(arm, pts, method="numeric")
    assert np.all(np.isnan(sol.q))
    assert np.all(sol.status == OUT_OF_REACH), sol.status


@pytest.mark.parametrize("method", ["closed_form", "numeric"])
def test_off_plane_status(method):
    arm = ir.planar_chain([1.0, 0.6], [1.0, 0.5], plane_tilt_deg=40.0, base_yaw_deg=-60.0)
    _, _, normal = chain_plane(40.0, -60.0)
    base = _in_plane(40.0, -60.0, 1.2, 0.7)
    pts = np.array([base + 0.02 * normal, base - 1e-4 * normal, 3.0 * normal])
    sol = ir.solve_positions(arm, pts, method=method)
    assert np.all(sol.status == OFF_PLANE), sol.status
    assert np.all(np.isnan(sol.q))


@pytest.mark.parametrize("method", ["closed_form", "numeric"])
def test_reachable_only_outside_tight_limits(method):
    arm = ir.planar_chain([1.0, 0.8], [2.0, 1.0], limits_deg=(-30.0, 30.0))
    # (0, 1.75) in the plane needs q1 near 90 deg; (1.7, 0.3) needs |q2| ~ 36 deg or more
    ex, ey, _ = chain_plane(0.0, 0.0)
    pts = np.array([1.75 * ey, 1.7 * ex + 0.3 * ey])
    x, y = pts @ ex, pts @ ey
    for b in law_of_cosines(1.0, 0.8, x, y):                # every exact solution is outside
        assert np.all(np.any(np.abs(wrap(b)) > np.deg2rad(30.0) + 1e-6, axis=-1))
    sol = ir.solve_positions(arm, pts, method=method)
    assert np.all(np.isin(sol.status, [BEYOND_LIMITS, NO_POSTURE])), sol.status
    assert np.all(np.isnan(sol.q))


@pytest.mark.parametrize("method", ["closed_form", "numeric"])
def test_posture_outside_limits_is_unavailable(method):
    d = ir.planar_chain([1.0, 0.8], [2.0, 1.0]).to_dict()
    d["joints"][1]["limits_deg"] = [0.0, 150.0]    # elbow bends one way only
    arm = ir.Arm.from_dict(d)
    q = np.array([0.4, 0.9])                        # q2 > 0: elbow below the line (tilt 0)
    target = arm.tool_position(q)
    assert elbow_side(arm, q, 1) < 0
    up = ir.solve_positions(arm, target, posture="elbow_up", method=method)
    assert up.status in (BEYOND_LIMITS, NO_POSTURE) and np.all(np.isnan(up.q))
    down = ir.solve_positions(arm, target, posture="elbow_down", method=method)
    assert down.status == OK
    assert np.max(np.abs(down.q - q)) < 1e-7
    assert_within_limits(arm, down.q)


def test_limits_shift_angles_by_full_turns():
    # limits 0..360 deg: an answer at -90 deg must come back as +270 deg
    d = ir.planar_chain([1.0, 0.8], [2.0, 1.0]).to_dict()
    d["joints"][0]["limits_deg"] = [0.0, 360.0]
    arm = ir.Arm.from_dict(d)
    q = np.array([-np.pi / 2, 0.7])
    target = arm.tool_position(q)
    sol = ir.solve_positions(arm, target, posture="elbow_down")
    assert sol.status == OK
    assert_within_limits(arm, sol.q)
    assert sol.q[0] == pytest.approx(1.5 * np.pi, abs=1e-9)
    assert np.max(np.abs(arm.tool_position(sol.q) - target)) <= ROUND_TRIP_M


# ---------------------------------------------------------------------------
# redundant chains and the 'nearest' posture
# ---------------------------------------------------------------------------
@pytest.mark.parametrize("tilt, yaw", [(0.0, 0.0), (35.0, 70.0)])
def test_redundant_chain_tool_angle(tilt, yaw):
    arm = ir.planar_chain([0.5, 0.4, 0.3], [1.0, 0.8, 0.5], plane_tilt_deg=tilt,
                          base_yaw_deg=yaw)
    ex, ey, _ = chain_plane(tilt, yaw)
    rng = np.random.default_rng(5)
    q = np.column_stack([rng.uniform(-2.5, 2.5, 12), rng.uniform(0.3, 2.0, 12),
                         rng.uniform(-1.5, 1.5, 12)])
    target = arm.tool_position(q)
    angle_deg = rng.uniform(-180.0, 180.0, 12)
    # which requested angles can be met: the wrist point (tool minus the last link) must
    # be reachable by the first two links (triangle inequality, by hand)
    u = np.cos(np.deg2rad(angle_deg))[:, None] * ex + np.sin(np.deg2rad(angle_deg))[:, None] * ey
    wrist = np.linalg.norm(target - 0.3 * u, axis=-1)
    feasible = (wrist < 0.9 - 1e-3) & (wrist > 0.1 + 1e-3)
    assert feasible.sum() >= 4
    # posture 'nearest': with the last link's angle fixed, the wrist (joint 3) point is fixed
    # too, so the default elbow rule (on the last joint) would not choose between branches
    sol = ir.solve_positions(arm, target[feasible], tool_angle_deg=angle_deg[feasible],
                             posture="nearest")
    assert np.all(sol.status == OK), sol.status
    assert np.max(np.abs(arm.tool_position(sol.q) - target[feasible])) <= ROUND_TRIP_M
    assert_within_limits(arm, sol.q)
    # last link's in-plane angle, measured from the frames: joint 3 origin -> tool point
    origins, _ = arm.link_frames(sol.q)
    last = arm.tool_position(sol.q) - origins[:, 2, :]
    measured = np.rad2deg(np.arctan2(last @ ey, last @ ex))
    assert np.max(np.abs(wrap(np.deg2rad(measured - angle_deg[feasible])))) < 1e-6


def test_redundant_chain_nearest_solves():
    # 'nearest' on a redundant chain: the docstring promises the solution nearest the
    # reference posture; it must at least put the tool on the point.
    arm = ir.planar_chain([0.5, 0.4, 0.3], [1.0, 0.8, 0.5])
    q = np.array([[0.3, 0.5, -0.4], [1.0, -0.7, 0.2]])
    target = arm.tool_position(q)
    sol = ir.solve_positions(arm, target, posture="nearest", reference_deg=[10.0, 20.0, -10.0])
    assert np.all(sol.status == OK), (sol.status, sol.residual_m)
    assert np.max(np.abs(arm.tool_position(sol.q) - target)) <= ROUND_TRIP_M


def test_redundant_without_tool_angle_raises():
    arm = ir.planar_chain([0.5, 0.4, 0.3], [1.0, 0.8, 0.5])
    target = arm.tool_position(np.array([0.3, 0.5, -0.4]))
    for posture in ("elbow_up", "elbow_down"):
        with pytest.raises(ValueError, match=r"redundant.*tool_angle_deg.*posture='nearest'"):
            ir.solve_positions(arm, target, posture=posture)


def test_bad_posture_and_points_raise():
    arm = ir.planar_chain([1.0, 0.8], [2.0, 1.0])
    with pytest.raises(ValueError, match=r"'sideways' is not a valid posture; supported "
                                         r"postures are elbow_up, elbow_down, nearest"):
        ir.solve_positions(arm, [1.0, 0.0, 0.5], posture="sideways")
    with pytest.raises(ValueError, match=r"shape \(\.\.\., 3\)"):
        ir.solve_positions(arm, [1.0, 0.5])
    with pytest.raises(ValueError, match=r"finite"):
        ir.solve_positions(arm, [np.nan, 0.0, 0.5])
    with pytest.raises(ValueError, match=r"two-joint planar"):
        ir.solve_positions(kestrel(), [0.3, 0.0, 0.3], method="closed_form")


@pytest.mark.parametrize("method", ["closed_form", "numeric"])
def test_nearest_returns_branch_nearest_reference(method):
    l1, l2 = 1.0, 0.8
    arm = ir.planar_chain([l1, l2], [2.0, 1.0], plane_tilt_deg=25.0)
    ex, ey, _ = chain_plane(25.0, 0.0)
    q = np.array([0.4, 0.9])
    target = arm.tool_position(q)
    branches = law_of_cosines(l1, l2, target @ ex, target @ ey)
    assert np.max(np.abs(wrap(branches[0] - q))) < 1e-12       # q2 > 0 branch is q itself
    for reference_deg in ([20.0, 50.0], [70.0, -50.0], [-150.0, 170.0]):
        ref = np.deg2rad(reference_deg)
        dist = [np.linalg.norm(wrap(b - ref)) for b in branches]
        expected = branches[int(np.argmin(dist))]
        sol = ir.solve_positions(arm, target, posture="nearest", reference_deg=reference_deg,
                                 method=method)
        assert sol.status == OK
        assert np.max(np.abs(wrap(sol.q - expected))) < 1e-7


def test_batch_shape_is_kept():
    arm = ir.planar_chain([1.0, 0.8], [2.0, 1.0])
    q = np.random.default_rng(2).uniform(0.3, 2.0, (2, 3, 2))
    target = arm.tool_position(q)
    sol = ir.solve_positions(arm, target)
    assert sol.q.shape == (2, 3, 2) and sol.status.shape == (2, 3)
    assert sol.residual_m.shape == (2, 3)
    assert np.max(np.abs(arm.tool_position(sol.q) - target)) <= ROUND_TRIP_M


# ---------------------------------------------------------------------------
# the numeric solver on the three-joint demo arm (and remounted copies)
# ---------------------------------------------------------------------------
def _kestrel_samples(arm, count, seed):
    rng = np.random.default_rng(seed)
    lim = arm.joint_limits
    q = lim[:, 0] + (lim[:, 1] - lim[:, 0]) * rng.random((count, 3))
    q = q[np.abs(np.sin(q[:, 2])) > 0.25]                   # away from the stretched elbow
    h = elbow_side(arm, q, 2)
    return q[np.abs(h) > 2e-3], h[np.abs(h) > 2e-3]


@pytest.mark.parametrize("mount", [{}, {"rpy_deg": [0.0, 30.0, 0.0]},
                                   {"rpy_deg": [20.0, -35.0, 40.0]}],
                         ids=["floor", "pitched_30", "rpy_20_-35_40"])
def test_kestrel_numeric_round_trip(mount):
    arm = kestrel(**mount)
    assert arm.dof == 3 and arm.task_axes.shape == (3, 3)
    q, h = _kestrel_samples(arm, 24, seed=4)
    assert len(q) >= 10
    target = arm.tool_position(q)
    for posture, side in (("elbow_up", h > 0), ("elbow_down", h < 0)):
        if not np.any(side):
            continue
        # q itself is a solution in this posture within the limits, so one must be found
        sol = ir.solve_positions(arm, target[side], posture=posture)
        assert np.all(sol.status == OK), sol.status
        assert np.max(np.abs(arm.tool_position(sol.q) - target[side])) <= ROUND_TRIP_M
        assert_within_limits(arm, sol.q)
        hh = elbow_side(arm, sol.q, 2)
        assert np.all(hh > -1e-12) if posture == "elbow_up" else np.all(hh < 1e-12)


def _kestrel_mirror(arm, q):
    """The other elbow branch in the same vertical plane, by hand: with phi the angle of the
    shoulder-to-tool line, shoulder' = 2 phi - shoulder and elbow' = -elbow."""
    tool = arm.tool_position(q)
    radial = tool[:, 0] * np.cos(q[:, 0]) + tool[:, 1] * np.sin(q[:, 0])
    phi = np.arctan2(tool[:, 2] - 0.22, radial)            # shoulder origin at z = 0.22 m
    return np.column_stack([q[:, 0], 2.0 * phi - q[:, 1], -q[:, 2]])


def test_kestrel_branches_differ():
    arm = kestrel()
    lim = arm.joint_limits
    grid = np.stack(np.meshgrid([-0.6, 0.4], [0.2, 0.7, 1.2], [-1.4, -0.7, 0.7, 1.4],
                                indexing="ij"), -1).reshape(-1, 3)
    mirror = _kestrel_mirror(arm, grid)
    assert np.max(np.abs(arm.tool_position(mirror) - arm.tool_position(grid))) < 1e-12
    h, hm = elbow_side(arm, grid, 2), elbow_side(arm, mirror, 2)
    inside = np.all((mirror >= lim[:, 0]) & (mirror <= lim[:, 1]), axis=-1)
    both = inside & (h * hm < 0) & (np.abs(h) > 2e-3) & (np.abs(hm) > 2e-3)
    assert both.sum() >= 4
    target = arm.tool_position(grid[both])
    up = ir.solve_positions(arm, target, posture="elbow_up")
    down = ir.solve_positions(arm, target, posture="elbow_down")
    assert np.all(up.status == OK) and np.all(down.status == OK), (up.status, down.status)
    for sol in (up, down):
        assert np.max(np.abs(arm.tool_position(sol.q) - target)) <= ROUND_TRIP_M
        assert_within_limits(arm, sol.q)
    assert np.all(elbow_side(arm, up.q, 2) > 0)
    assert np.all(elbow_side(arm, down.q, 2) < 0)
    assert np.all(np.max(np.abs(wrap(up.q - down.q)), axis=-1) > 1e-2)


def test_kestrel_out_of_reach():
    arm = kestrel()
    # joint 1 at the origin; reach bound 0.22 + 0.35 + 0.30 = 0.87 m (by hand)
    pts = np.array([[0.9, 0.0, 0.0], [0.0, 0.0, 1.2], [0.5, 0.5, 0.6]])
    sol = ir.solve_positions(arm, pts)
    assert np.all(sol.status == OUT_OF_REACH), sol.status
    assert np.all(np.isnan(sol.q))


# ---------------------------------------------------------------------------
# arms whose mount is moved off the world origin
# ---------------------------------------------------------------------------
@pytest.mark.parametrize("method", ["closed_form", "numeric"])
def test_planar_chain_with_mount_offset(method):
    # arm-model.md: the base is placed in W by mount.xyz_m; targets are world points
    d = ir.planar_chain([1.0, 0.8], [2.0, 1.0]).to_dict()
    d["mount"]["xyz_m"] = [0.3, 0.2, 0.1]
    arm = ir.Arm.from_dict(d)
    target = arm.tool_position(np.array([[0.4, 0.9], [1.5, -0.7]]))
    sol = ir.solve_positions(arm, target, posture="elbow_down", method=method)
    assert np.all(sol.status == OK), sol.status
    assert np.max(np.abs(arm.tool_position(sol.q) - target)) <= ROUND_TRIP_M


def test_kestrel_wall_round_trip():
    # the demo wall-bracket design: mount xyz [0, 0, 0.5] and pitch 60 deg
    arm = kestrel("kestrel_wall")
    q, h = _kestrel_samples(arm, 16, seed=9)
    target = arm.tool_position(q)
    sol = ir.solve_positions(arm, target, posture="nearest", reference_deg=np.rad2deg(q[0]))
    assert np.all(sol.status == OK), sol.status
    assert np.max(np.abs(arm.tool_position(sol.q) - target)) <= ROUND_TRIP_M
