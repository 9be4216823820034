"""One posture branch per map and along a line move (issue: branches mixed on tilted arms).

Outside checks used here:
- the closed-form inverse of a yaw-pitch-pitch arm, written out by hand: yaw = atan2(y, x)
  (or + pi, reaching over the top with the radial coordinate negated), then the two-link
  law of cosines in the arm's vertical plane measured from the shoulder (Euclid,
  *Elements* II.12-13): cos q3 = (r^2 + h^2 - l1^2 - l2^2) / (2 l1 l2),
  q2 = atan2(h, r) - atan2(l2 sin q3, l1 + l2 cos q3); the usual textbook solution (e.g.
  Craig, *Introduction to Robotics*, ch. 4; chapter from memory [M]);
- the mount: world points are taken into the base frame by p_B = R_WB^T (p - xyz), with
  R = Rz(yaw) Ry(pitch) Rx(roll) (arm-model.md), so the hand solution holds on any mount;
- on these arms (shoulder and elbow about -y, base z up, zero pose reaching along +x) the
  documented 'elbow_up' branch is q3 < 0 (``test_ik.test_posture_value_by_hand``).
"""

import tomllib
from pathlib import Path

import numpy as np
import pytest

import inertia_review as ir

DESIGNS = Path(__file__).resolve().parent.parent / "designs"
OK, SEAM = 0, 6
JUMP = 0.5                                    # rad, the issue's bound between neighbours


def rpy_matrix(rpy_deg):
    r, p, y = np.deg2rad(rpy_deg)
    rx = np.array([[1, 0, 0], [0, np.cos(r), -np.sin(r)], [0, np.sin(r), np.cos(r)]])
    ry = np.array([[np.cos(p), 0, np.sin(p)], [0, 1, 0], [-np.sin(p), 0, np.cos(p)]])
    rz = np.array([[np.cos(y), -np.sin(y), 0], [np.sin(y), np.cos(y), 0], [0, 0, 1]])
    return rz @ ry @ rx


def kestrel(rpy_deg=(0.0, 0.0, 0.0)):
    with open(DESIGNS / "kestrel_a.toml", "rb") as fh:
        d = tomllib.load(fh)
    d["mount"]["rpy_deg"] = list(rpy_deg)
    d["name"] = "kestrel_a_remounted"
    return ir.Arm.from_dict(d)


def unmarked_jumps(q, status):
    """Axis neighbours, both solved, whose angles differ by more than JUMP while neither
    end is marked as a seam."""
    solved = np.isin(status, [OK, SEAM])
    bad = 0
    for axis in (0, 1):
        a = [slice(None)] * 2
        b = [slice(None)] * 2
        a[axis], b[axis] = slice(0, -1), slice(1, None)
        a, b = tuple(a), tuple(b)
        jump = np.max(np.abs(q[a] - q[b]), axis=-1)
        both = solved[a] & solved[b]
        marked = (status[a] == SEAM) | (status[b] == SEAM)
        bad += int(np.sum(both & (jump > JUMP) & ~marked))
    return bad


def grid_of(ds):
    return (ds["q"].transpose("v_m", "u_m", "joint").values,
            ds["status"].transpose("v_m", "u_m").values)


def test_issue_reproduction_tilted_mount():
    # the issue's case: kestrel_a at rpy [0, -45, 0], 300 x 300 mm, 20 mm, elbow_up
    arm = kestrel((0.0, -45.0, 0.0))
    centre = arm.tool_position(np.array([0.3, 0.8, -1.2]))
    region = ir.Rectangle(tuple(centre), ((1, 0, 0), (0, 0.6, 0.8)), (0.3, 0.3), 0.02)
    ds = ir.metric_map(arm, region, posture="elbow_up")
    q, status = grid_of(ds)
    solved = np.isin(status, [OK, SEAM])
    assert solved.sum() >= 200                 # before the fix: 209 ok and 14 refused
    assert unmarked_jumps(q, status) == 0      # before the fix: jumps of 3.0 rad
    assert np.all(q[solved][:, 2] <= 1e-9)     # every point on the elbow-up branch
    assert not np.any(status == 5)             # no 'posture_unavailable' hole


MOUNTS = [(0.0, -60.0, 0.0), (0.0, -30.0, 0.0), (0.0, 30.0, 0.0), (0.0, 60.0, 0.0),
          (-60.0, 0.0, 0.0), (60.0, 0.0, 0.0), (45.0, -45.0, 30.0), (-30.0, 60.0, -90.0)]


@pytest.mark.parametrize("rpy", MOUNTS)
@pytest.mark.parametrize("posture", ["elbow_up", "elbow_down"])
def test_tilted_and_rolled_mounts_keep_one_branch(rpy, posture):
    arm = kestrel(rpy)
    q0 = np.array([0.4, 0.9, -1.1 if posture == "elbow_up" else 1.1])
    centre = arm.tool_position(q0)
    rot = rpy_matrix(rpy)                       # the plane is fixed to the base
    region = ir.Rectangle(tuple(centre), (tuple(rot[:, 0]), tuple(rot[:, 2])), (0.24, 0.24),
                          0.02)
    ds = ir.metric_map(arm, region, posture=posture)
    q, status = grid_of(ds)
    solved = np.isin(status, [OK, SEAM])
    assert solved.sum() >= 100
    assert unmarked_jumps(q, status) == 0
    side = q[solved][:, 2]
    assert np.all(side <= 1e-9) if posture == "elbow_up" else np.all(side >= -1e-9)


# ---------------------------------------------------------------------------
# no reachable point refused where its branch exists (closed form by hand)
# ---------------------------------------------------------------------------
L0, L1, L2 = 0.25, 0.35, 0.30


def ypp_arm(rpy_deg=(0.0, 0.0, 0.0)):
    return ir.yaw_pitch_pitch_arm(L0, L1, L2, link_masses_kg=[1.0, 0.8, 0.5],
                                  mount_rpy_deg=rpy_deg)


def hand_solutions(points_b):
    """All four closed-form solutions (4, N, 3) of the yaw-pitch-pitch arm, base frame."""
    x, y, z = points_b.T
    h = z - L0                                  # measured from the shoulder, not the floor
    out = []
    for over in (False, True):
        yaw = np.arctan2(y, x) + (np.pi if over else 0.0)
        r = np.hypot(x, y) * (-1.0 if over else 1.0)
        c3 = (r * r + h * h - L1 * L1 - L2 * L2) / (2 * L1 * L2)
        for sign in (-1.0, 1.0):
            q3 = sign * np.arccos(np.clip(c3, -1, 1))
            q2 = np.arctan2(h, r) - np.arctan2(L2 * np.sin(q3), L1 + L2 * np.cos(q3))
            out.append(np.stack([yaw, q2, q3], axis=-1))
    return np.stack(out)


def branch_exists(arm, points_w, rpy, up):
    p_b = (points_w - arm.to_dict()["mount"]["xyz_m"]) @ rpy_matrix(rpy)
    sols = hand_solutions(p_b)
    lim = arm.joint_limits
    two_pi = 2 * np.pi
    shifted = sols - two_pi * np.floor((sols - lim[:, 0]) / two_pi)   # into [low, low + 2 pi)
    inside = np.all(shifted <= lim[:, 1], axis=-1)
    side = (sols[..., 2] < -1e-6) if up else (sols[..., 2] > 1e-6)
    return np.any(inside & side, axis=0)


@pytest.mark.parametrize("rpy", [(0.0, 0.0, 0.0), (0.0, -45.0, 0.0), (30.0, 20.0, 60.0)])
def test_no_reachable_point_refused(rpy):
    arm = ypp_arm(rpy)
    rng = np.random.default_rng(12)
    lim = arm.joint_limits
    q = lim[:, 0] + (lim[:, 1] - lim[:, 0]) * rng.random((500, 3))
    q = q[np.abs(np.sin(q[:, 2])) > 0.05]       # clear of the stretched / folded elbow
    points = arm.tool_position(q)
    for posture, up in (("elbow_up", True), ("elbow_down", False)):
        exists = branch_exists(arm, points, rpy, up)
        assert exists.sum() >= 300
        sol = ir.solve_positions(arm, points, posture=posture)
        refused = exists & (sol.status != OK)
        assert refused.sum() == 0, (posture, refused.sum(), sol.status[refused])
        ok = sol.status == OK
        assert np.max(np.abs(arm.tool_position(sol.q[ok]) - points[ok])) <= 1e-8
        assert np.all(sol.q[ok, 2] <= 1e-9) if up else np.all(sol.q[ok, 2] >= -1e-9)


# ---------------------------------------------------------------------------
# line moves keep their branch
# ---------------------------------------------------------------------------
def line_cycle(a, b):
    return ir.cycle_from_dict({"name": "line", "points_m": {"a": list(a), "b": list(b)},
                               "moves": [{"from": "a", "to": "b", "kind": "line",
                                          "speed_mps": 0.3, "accel_mps2": 2.0}]})


@pytest.mark.parametrize("rpy", [(0.0, -45.0, 0.0), (0.0, 60.0, 0.0), (-60.0, 0.0, 0.0),
                                 (40.0, -30.0, 20.0)])
def test_line_moves_on_one_branch_succeed(rpy):
    arm = kestrel(rpy)
    rot, xyz = rpy_matrix(rpy), np.array(arm.to_dict()["mount"]["xyz_m"])
    # a segment in the base frame whose hand solution (front, elbow up) stays clear of the
    # limits and of the singular poses at every point: the move must follow it
    a_b, b_b = np.array([0.30, -0.10, 0.40]), np.array([0.45, 0.15, 0.15])
    s = np.linspace(0.0, 1.0, 41)
    path_b = a_b + s[:, None] * (b_b - a_b)
    x, y, z = path_b.T
    r, h = np.hypot(x, y), z - 0.22             # kestrel_a: shoulder 0.22 m up, 0.35 + 0.30
    c3 = (r * r + h * h - 0.35 ** 2 - 0.30 ** 2) / (2 * 0.35 * 0.30)
    q3 = -np.arccos(c3)
    assert np.all(np.abs(np.sin(q3)) > 0.3) and np.all(r > 0.2)
    start_w, end_w = xyz + rot @ a_b, xyz + rot @ b_b
    res = ir.cycle_torques(arm, line_cycle(start_w, end_w), posture="elbow_up")
    assert np.all(res.q[:, 2] < 0)             # the elbow-up branch all along
    # the samples equal the hand solution of their own tool points
    p_b = (res.tool_position - xyz) @ rot
    x, y, z = p_b.T
    r, h = np.hypot(x, y), z - 0.22
    q3 = -np.arccos((r * r + h * h - 0.35 ** 2 - 0.30 ** 2) / (2 * 0.35 * 0.30))
    q2 = np.arctan2(h, r) - np.arctan2(0.30 * np.sin(q3), 0.35 + 0.30 * np.cos(q3))
    hand = np.stack([np.arctan2(y, x), q2, q3], axis=-1)
    assert np.max(np.abs(res.q - hand)) < 1e-7


def test_line_move_that_must_leave_the_limits_names_move_point_and_reason():
    arm = kestrel((0.0, -45.0, 0.0))
    start = arm.tool_position(np.array([0.0, 1.2, -2.2]))
    shoulder = arm.link_frames(np.zeros(3))[0][1]
    end = start + 0.9 * (shoulder - start)      # folds the elbow past its 150 deg limit
    with pytest.raises(ValueError, match=r"cycle 'line', move 0 \(a -> b \(line\)\): tool point "
                                         r"\[[-0-9.e, ]+\] m at t = [0-9.]+ s into the move "
                                         r"needs joint 'elbow' beyond its limits"):
        ir.cycle_torques(arm, line_cycle(start, end), posture="elbow_up")


def test_seam_status_is_documented():
    assert ir.STATUS[SEAM] == "branch_seam"
    assert set(ir.SOLVED) == {OK, SEAM}


def test_seam_points_are_drawn_on_maps():
    import matplotlib
    matplotlib.use("Agg")
    import matplotlib.pyplot as plt

    from inertia_review.plots import plot_metric_map

    # a coarse grid (100 mm) on the sorter arm: the elbow nears its stretched pose at the
    # reach boundary, where the solution turns faster than continuity explains
    arm = ir.load_design(DESIGNS / "sorter_planar.toml")
    region = ir.Rectangle((0.30, 0.0, 0.10), ((1.0, 0.0, 0.0), (0.0, 0.0, 1.0)), (0.6, 0.5), 0.1)
    ds = ir.metric_map(arm, region)
    status = ds["status"].transpose("v_m", "u_m").values
    assert np.any(status == SEAM)
    assert np.all(np.isfinite(ds["isotropy"].values[ds["status"].values == SEAM]))
    fig, ax = plt.subplots()
    art = plot_metric_map(ds, "isotropy", ax=ax)
    assert art.seam is not None and art.seam.get_xdata().size == int(np.sum(status == SEAM))
    labels = [t.get_text() for t in art.legend.get_texts()]
    assert "branch seam" in labels
    plt.close(fig)
