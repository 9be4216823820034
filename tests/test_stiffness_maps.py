"""Stiffness, sag and payload in maps, scores and the datasheet, against outside references.

Sources (status as in references.md: [D] derived by hand, [M] from memory):
- Natural frequencies of a sprung planar 2R: the independent sympy linearisation in
  tests/sympy_vibration.py (M(q0) dq'' + K dq = 0) [D].
- Sag of a sprung two-joint arm in a vertical plane (rigid links): the joints give way by
  dq = K^-1 tau_g with tau_g the gravity torques of uniform rods and the payload written out
  by hand, and the tool moves by J dq (small deflections; any statics text) [D].
- Payload capacity of one joint about a horizontal axis: tau_p = m1 g lc + m g L at a = 0,
  so m = (tau_p - m1 g lc) / (g L cos q) for the arm at angle q [D].
All designs are invented test data.
"""

import math

import numpy as np
import pytest

import inertia_review as ir

try:
    from .sympy_vibration import planar_2r_frequencies
except ImportError:
    from sympy_vibration import planar_2r_frequencies

G_N = 9.80665  # 3rd CGPM (1901) [C]
M1, M2, L1, L2, K1, K2, MP = 2.0, 1.2, 0.5, 0.4, 6000.0, 1500.0, 0.3


def sprung_2r(axis, task_axes):
    """Two uniform rods with joint springs, joints about ``axis`` (invented)."""
    i1, i2 = M1 * L1**2 / 12, M2 * L2**2 / 12
    return ir.Arm.from_dict({
        "name": "sprung_2r", "format": 1,
        "joints": [
            {"axis": axis, "limits_deg": [-170.0, 170.0],
             "link": {"mass_kg": M1, "com_m": [L1 / 2, 0.0, 0.0],
                      "inertia_kgm2": [0.0, i1, i1, 0.0, 0.0, 0.0]},
             "actuator": {"stiffness_Nm_per_rad": K1, "peak_torque_Nm": 60.0}},
            {"xyz_m": [L1, 0.0, 0.0], "axis": axis, "limits_deg": [5.0, 170.0],
             "link": {"mass_kg": M2, "com_m": [L2 / 2, 0.0, 0.0],
                      "inertia_kgm2": [0.0, i2, i2, 0.0, 0.0, 0.0]},
             "actuator": {"stiffness_Nm_per_rad": K2, "peak_torque_Nm": 20.0}},
        ],
        "tool": {"xyz_m": [L2, 0.0, 0.0], "payload_kg": MP},
        "task": {"axes": task_axes},
    })


@pytest.fixture(scope="module")
def planar_map():
    arm = sprung_2r([0.0, 0.0, 1.0], [[1.0, 0.0, 0.0], [0.0, 1.0, 0.0]])
    region = ir.Rectangle((0.5, 0.2, 0.0), ((1.0, 0.0, 0.0), (0.0, 1.0, 0.0)), (0.2, 0.2), 0.1)
    return arm, ir.metric_map(arm, region, posture="nearest")  # one branch within limits


@pytest.fixture(scope="module")
def vertical_map():
    arm = sprung_2r([0.0, -1.0, 0.0], [[1.0, 0.0, 0.0], [0.0, 0.0, 1.0]])
    region = ir.Rectangle((0.5, 0.0, 0.2), ((1.0, 0.0, 0.0), (0.0, 0.0, 1.0)), (0.2, 0.2), 0.1)
    return arm, ir.metric_map(arm, region, posture="nearest")  # one branch within limits


def test_first_frequency_map_against_sympy(planar_map):
    arm, ds = planar_map
    ok = np.isin(ds["status"].values, ir.SOLVED)
    assert ok.sum() == ok.size == 9
    assert ds["first_frequency"].attrs["units"] == "Hz"
    q = ds["q"].values[ok]
    f1 = ds["first_frequency"].values[ok]
    i1, i2 = M1 * L1**2 / 12, M2 * L2**2 / 12
    for index in (0, 4, 8):
        # payload as a point mass at the tool: the sympy model has none, so add it to link 2
        # as mass at l2 (centre of mass and inertia about it shift by the parallel-axis rule)
        m2 = M2 + MP
        lc2 = (M2 * L2 / 2 + MP * L2) / m2
        i2p = i2 + M2 * (L2 / 2 - lc2) ** 2 + MP * (L2 - lc2) ** 2
        freqs, _ = planar_2r_frequencies(M1, m2, L1, L1 / 2, lc2, i1, i2p, K1, K2,
                                         tuple(q[index]))
        assert f1[index] == pytest.approx(freqs[0], rel=1e-9)


def test_sag_map_against_hand_statics(vertical_map):
    arm, ds = vertical_map
    ok = np.isin(ds["status"].values, ir.SOLVED)
    assert ok.all()
    q1, q2 = ds["q"].values[ok].T
    # joints about -y: angles measured from +x towards +z; heights z = l sin(q)
    c1, c12 = np.cos(q1), np.cos(q1 + q2)
    tau2 = G_N * (M2 * L2 / 2 + MP * L2) * c12
    tau1 = G_N * (M1 * L1 / 2 + (M2 + MP) * L1) * c1 + tau2
    dq1, dq2 = -tau1 / K1, -tau2 / K2            # gravity pulls the angles down
    s1, s12 = np.sin(q1), np.sin(q1 + q2)
    dx = -(L1 * s1 + L2 * s12) * dq1 - L2 * s12 * dq2
    dz = (L1 * c1 + L2 * c12) * dq1 + L2 * c12 * dq2
    np.testing.assert_allclose(ds["sag"].values[ok], np.hypot(dx, dz), rtol=1e-9)
    assert ds["sag"].attrs["units"] == "m"
    assert "linear-elastic" in ds.attrs["stiffness_caution"]


def test_payload_map_hand_solved_single_joint():
    arm = ir.Arm.from_dict({
        "name": "lifter", "format": 1,
        "joints": [{"axis": [0.0, -1.0, 0.0], "limits_deg": [-80.0, 80.0],
                    "link": {"mass_kg": 1.5, "com_m": [0.2, 0.0, 0.0],
                             "inertia_kgm2": [0.0, 0.02, 0.02, 0.0, 0.0, 0.0]},
                    "actuator": {"peak_torque_Nm": 12.0}}],
        "tool": {"xyz_m": [0.45, 0.0, 0.0]},
        "task": {"axes": [[1.0, 0.0, 0.0], [0.0, 0.0, 1.0]]},
    })
    angles = np.radians([-50.0, -20.0, 0.0, 30.0])
    region = ir.PointSet(tuple(map(tuple, np.stack(
        [0.45 * np.cos(angles), np.zeros(4), 0.45 * np.sin(angles)], -1))))
    ds = ir.metric_map(arm, region)
    assert (np.isin(ds["status"].values, ir.SOLVED)).all()
    expected = (12.0 - 1.5 * G_N * 0.2 * np.cos(angles)) / (G_N * 0.45 * np.cos(angles))
    np.testing.assert_allclose(ds["payload_capacity"].values, expected, rtol=1e-9)
    # the score is the worst point, and there is no elastic part: no f1, no sag
    scores = ir.design_scores(ds)
    assert scores["payload_rated_kg"] == pytest.approx(expected.min(), rel=1e-9)
    assert math.isnan(scores["f1_lowest_hz"]) and math.isnan(scores["sag_largest_m"])
    assert "first_frequency" not in ds.data_vars


def test_scores_and_datasheet_reduce_the_map(vertical_map):
    arm, ds = vertical_map
    ok = np.isin(ds["status"].values, ir.SOLVED)
    scores = ir.design_scores(ds)
    assert scores["f1_lowest_hz"] == pytest.approx(ds["first_frequency"].values[ok].min())
    assert scores["sag_largest_m"] == pytest.approx(ds["sag"].values[ok].max())
    sheet = ir.datasheet(arm, ds)
    assert sheet.f1_lowest_hz == scores["f1_lowest_hz"]
    assert sheet.sag_largest_m == scores["sag_largest_m"]
    assert sheet.payload_rated_kg == pytest.approx(scores["payload_rated_kg"])
    assert sheet.reach_limit_m == pytest.approx(L1 + L2)            # straight arm [D]
    xz = np.stack([ds["x_m"].values[ok], ds["z_m"].values[ok]], -1)
    assert sheet.reach_m == pytest.approx(np.hypot(*xz.T).max())    # first joint at origin
    assert math.isnan(sheet.tool_speed_max_mps)                     # no rated speeds
    text = str(sheet)
    assert f"{1e3 * sheet.sag_largest_m:.4f} mm" in text and "Hz" in text
    assert "n/a (no rated motor speeds)" in text
    assert text.splitlines()[-1] == sheet.caution and "linear-elastic" in sheet.caution


def test_sag_and_frequency_maps_plot_in_mm_and_hz_with_the_caution(vertical_map):
    import matplotlib
    matplotlib.use("Agg")
    import matplotlib.pyplot as plt

    import inertia_review.plots as irp

    _, ds = vertical_map
    sag = irp.plot_metric_map(ds, "sag")
    assert sag.label == "tool sag [mm]"
    assert np.nanmax(sag.mesh.get_array()) == pytest.approx(1e3 * np.nanmax(ds["sag"].values))
    assert "linear-elastic" in sag.caution.get_text()
    f1 = irp.plot_metric_map(ds, "first_frequency")
    assert f1.label == "first natural frequency [Hz]"
    assert np.nanmin(f1.mesh.get_array()) == pytest.approx(np.nanmin(ds["first_frequency"]))
    assert f1.caution is not None
    assert irp.plot_metric_map(ds, "isotropy").caution is None
    plt.close("all")


def test_small_multiples_of_sag_carry_the_caution_once(vertical_map):
    """Several panels of a stiffness metric: one caution for the figure, not one per panel."""
    import matplotlib
    matplotlib.use("Agg")
    import matplotlib.pyplot as plt

    import inertia_review.plots as irp

    _, ds = vertical_map
    board = irp.plot_small_multiples([ds, ds, ds], "sag")
    texts = [t for t in board.figure.findobj(matplotlib.text.Text) if t.get_gid() == "caution"]
    assert len(texts) == 1 and texts[0] is board.caution
    assert "linear-elastic" in board.caution.get_text()
    assert all(m.caution is None for m in board.maps)
    assert irp.plot_small_multiples([ds, ds], "isotropy").caution is None
    plt.close("all")
