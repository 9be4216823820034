"""Stiffness, sag, natural frequencies and payload capacity against outside references.

Sources (status as in references.md: [C] confirmed, [D] derived by hand, [M] from memory):
- Cantilever, tip load P: deflection P L^3/(3 EI), slope P L^2/(2 EI); tip moment M:
  M L^2/(2 EI), slope M L/EI; uniform load w: w L^4/(8 EI). Gere, Mechanics of Materials,
  5th ed., Appendix G, cantilever cases 1, 4 and 6; Roark's Formulas for Stress and Strain,
  7th ed., Table 8.1 [M]. Twist of a circular shaft T L/(G J), Gere sec. 3.3 [M].
- Second moment of a hollow circle pi (D^4 - d^4)/64, J = 2 I: Gere, Appendix D [M].
- One joint with a spring: f = sqrt(k / I_total)/(2 pi) (single-degree-of-freedom
  torsional oscillator; Thomson & Dahleh, Theory of Vibration with Applications, ch. 2) [M].
- Two-joint planar arm: an independent sympy linearisation (tests/sympy_vibration.py) [D].
- Payload capacity and tool speed: hand-solved single- and two-joint cases below [D].
- Moduli: EN 1993-1-1:2005 sec. 3.2.6, E = 210 000 N/mm^2, nu = 0.3 [C] (references.md
  item 7), G ~= 81 000 N/mm^2 [M]; 6061-T6 E = 68.9 GPa, G = 26 GPa, nu = 0.33 (Aluminum
  Association typical data) [M].
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
L_TUBE, OD, WALL = 0.5, 0.040, 0.003
E_AL, G_AL = 68.9e9, 26.0e9
# pi (D^4 - d^4) / 64 for D = 40 mm, d = 34 mm, worked by hand [D]:
# (2.56e-6 - 1.336336e-6) m^4 * pi / 64 = 1.223664e-6 * 0.04908739 = 6.006647e-8 m^4
I_AREA = 6.006647e-8


def cantilever_arm(tool_xyz, payload=0.0, joint_stiffness=None):
    """One joint about -y at the origin, an aluminium tube along +x (invented)."""
    actuator = {"peak_torque_Nm": 50.0}
    if joint_stiffness is not None:
        actuator["stiffness_Nm_per_rad"] = joint_stiffness
    return ir.Arm.from_dict({
        "name": "cantilever", "format": 1,
        "joints": [{"axis": [0.0, -1.0, 0.0], "actuator": actuator,
                    "link": {"tube": {"length_m": L_TUBE, "outer_diameter_m": OD,
                                      "wall_m": WALL, "material": "aluminium_6061"}}}],
        "tool": {"xyz_m": list(tool_xyz), "payload_kg": payload},
        "task": {"axes": [[1.0, 0.0, 0.0], [0.0, 0.0, 1.0]]},
    })


def test_moduli_against_handbook_values():
    e_steel, g_steel = ir.MODULI["structural_steel"]
    assert e_steel == 210.0e9                                   # EN 1993-1-1 3.2.6 [C]
    assert e_steel / (2.0 * g_steel) - 1.0 == pytest.approx(0.3, abs=1e-12)   # nu = 0.3 [C]
    assert g_steel == pytest.approx(81.0e9, rel=0.005)          # "G ~= 81 000 N/mm^2" [M]
    e_al, g_al = ir.MODULI["aluminium_6061"]
    assert (e_al, g_al) == (E_AL, G_AL)                         # AA typical 6061-T6 [M]
    assert e_al / (2.0 * g_al) - 1.0 == pytest.approx(0.33, abs=0.01)   # nu ~= 0.33 [M]
    assert set(ir.MODULUS_SOURCES) == set(ir.MODULI) == set(ir.MATERIALS)


def test_tube_section_against_hand_value():
    ei, gj = ir.tube_section_stiffness(OD, WALL, E_AL, G_AL)
    assert ei == pytest.approx(E_AL * I_AREA, rel=1e-6)
    assert gj == pytest.approx(G_AL * 2.0 * I_AREA, rel=1e-6)


def test_cantilever_tip_load_and_offset_tool():
    ei = E_AL * I_AREA
    arm = cantilever_arm([L_TUBE, 0.0, 0.0])
    c = ir.tool_compliance(arm, [0.0])
    assert c[1, 1] == pytest.approx(L_TUBE**3 / (3.0 * ei), rel=1e-6)       # Gere case 4
    assert c[0, 0] == pytest.approx(0.0, abs=1e-15)                          # axial: rigid
    # tool 0.2 m beyond the tip on a rigid bracket: tip load P and moment P d give
    # P L^3/3EI + P d L^2/2EI (deflection) + d (P L^2/2EI + P d L/EI) (slope times d)
    d = 0.2
    arm = cantilever_arm([L_TUBE + d, 0.0, 0.0])
    expected = (L_TUBE**3 / 3 + L_TUBE**2 * d / 2 + d * (L_TUBE**2 / 2 + d * L_TUBE)) / ei
    assert ir.tool_compliance(arm, [0.0])[1, 1] == pytest.approx(expected, rel=1e-6)


def test_cantilever_torsion_of_a_sideways_tool():
    ei, gj = E_AL * I_AREA, G_AL * 2.0 * I_AREA
    side = 0.15
    arm = cantilever_arm([L_TUBE, side, 0.0])
    # vertical force at lever `side`: bending P L^3/3EI plus twist (P side) L/GJ times side
    expected = L_TUBE**3 / (3 * ei) + side**2 * L_TUBE / gj
    assert ir.tool_compliance(arm, [0.0])[1, 1] == pytest.approx(expected, rel=1e-6)


def test_cantilever_sag_under_payload_and_own_weight():
    ei = E_AL * I_AREA
    payload = 1.5
    arm = cantilever_arm([L_TUBE, 0.0, 0.0], payload=payload)
    tube_mass = 2700.0 * math.pi * ((OD / 2) ** 2 - (OD / 2 - WALL) ** 2) * L_TUBE
    w = tube_mass * G_N / L_TUBE
    expected = payload * G_N * L_TUBE**3 / (3 * ei) + w * L_TUBE**4 / (8 * ei)  # cases 4, 1
    sag = ir.tool_deflection(arm, [0.0])
    assert sag[2] == pytest.approx(-expected, rel=1e-6)
    assert abs(sag[0]) < 1e-15 and abs(sag[1]) < 1e-15


def lumped_arm(stiffness, payload):
    """One horizontal joint with a spring, a rigid rod link and a rotor (invented)."""
    return ir.Arm.from_dict({
        "name": "spring_joint", "format": 1,
        "joints": [{"axis": [0.0, 0.0, 1.0],
                    "link": {"mass_kg": 1.2, "com_m": [0.2, 0.0, 0.0],
                             "inertia_kgm2": [0.0, 0.016, 0.016, 0.0, 0.0, 0.0]},
                    "actuator": {"stiffness_Nm_per_rad": stiffness, "gear_ratio": 50.0,
                                 "rotor_inertia_kgm2": 2e-5, "peak_torque_Nm": 20.0}}],
        "tool": {"xyz_m": [0.4, 0.0, 0.0], "payload_kg": payload},
    })


def test_single_joint_spring_frequency():
    k, payload = 3000.0, 0.5
    arm = lumped_arm(k, payload)
    i_total = 0.016 + 1.2 * 0.2**2 + payload * 0.4**2 + 50.0**2 * 2e-5
    f = ir.natural_frequencies(arm, [0.7]).frequencies_hz
    assert f.shape == (1,)
    assert f[0] == pytest.approx(math.sqrt(k / i_total) / (2 * math.pi), rel=1e-10)


def test_single_joint_spring_sag():
    # horizontal link lifted by a joint about -y; the spring gives way by tau / k
    k = 2500.0
    arm = ir.Arm.from_dict({
        "name": "sprung_lift", "format": 1,
        "joints": [{"axis": [0.0, -1.0, 0.0],
                    "link": {"mass_kg": 1.0, "com_m": [0.25, 0.0, 0.0],
                             "inertia_kgm2": [0.0, 0.005, 0.005, 0.0, 0.0, 0.0]},
                    "actuator": {"stiffness_Nm_per_rad": k}}],
        "tool": {"xyz_m": [0.5, 0.0, 0.0], "payload_kg": 0.4},
    })
    torque = (1.0 * 0.25 + 0.4 * 0.5) * G_N
    np.testing.assert_allclose(ir.tool_deflection(arm, [0.0]), [0.0, 0.0, -0.5 * torque / k],
                               rtol=1e-10, atol=1e-15)


M1, M2, L1, L2, K1, K2 = 2.0, 1.2, 0.5, 0.4, 6000.0, 1500.0


def sprung_2r():
    """Planar 2R of uniform rods with two joint springs (invented)."""
    m1, m2, l1, l2, k1, k2 = M1, M2, L1, L2, K1, K2
    i1, i2 = m1 * l1**2 / 12, m2 * l2**2 / 12
    return ir.Arm.from_dict({
        "name": "sprung_2r", "format": 1,
        "joints": [
            {"axis": [0.0, 0.0, 1.0],
             "link": {"mass_kg": m1, "com_m": [l1 / 2, 0.0, 0.0],
                      "inertia_kgm2": [0.0, i1, i1, 0.0, 0.0, 0.0]},
             "actuator": {"stiffness_Nm_per_rad": k1}},
            {"xyz_m": [l1, 0.0, 0.0], "axis": [0.0, 0.0, 1.0],
             "link": {"mass_kg": m2, "com_m": [l2 / 2, 0.0, 0.0],
                      "inertia_kgm2": [0.0, i2, i2, 0.0, 0.0, 0.0]},
             "actuator": {"stiffness_Nm_per_rad": k2}},
        ],
        "tool": {"xyz_m": [l2, 0.0, 0.0]},
    })


@pytest.mark.parametrize("q0", [(0.3, 0.9), (-1.1, 2.2), (0.0, -0.4)])
def test_two_joint_planar_against_sympy(q0):
    m1, m2, l1, l2, k1, k2 = M1, M2, L1, L2, K1, K2
    i1, i2 = m1 * l1**2 / 12, m2 * l2**2 / 12
    arm = sprung_2r()
    freqs, mass = planar_2r_frequencies(m1, m2, l1, l1 / 2, l2 / 2, i1, i2,
                                        k1, k2, q0)
    out = ir.natural_frequencies(arm, q0)
    np.testing.assert_allclose(out.frequencies_hz, freqs, rtol=1e-9)
    # mode shapes: (K - omega^2 M) phi = 0 with the sympy M, and phi^T M phi = 1
    m = np.array(mass.tolist(), dtype=float)
    k = np.diag([k1, k2])
    for col, f in enumerate(freqs):
        phi = out.mode_shapes[:, col]
        omega2 = (2 * math.pi * f) ** 2
        np.testing.assert_allclose((k - omega2 * m) @ phi, 0.0, atol=1e-7 * k1)
        assert phi @ m @ phi == pytest.approx(1.0, rel=1e-9)
    # first-mode tool motion: the Jacobian times the first mode, as a unit vector
    v = arm.jacobian(q0)[:3] @ out.mode_shapes[:, 0]
    v /= np.linalg.norm(v)
    v *= np.sign(v[np.argmax(np.abs(v))])
    np.testing.assert_allclose(out.first_mode_tool_direction, v, atol=1e-12)


def test_link_beam_lumped_in_series_with_the_joint_spring():
    # tube along +x, joint axis -y (perpendicular): 1/k_eq = 1/k + L/EI (documented rule [D])
    k = 4000.0
    arm = cantilever_arm([L_TUBE, 0.0, 0.0], payload=1.0, joint_stiffness=k)
    ei = E_AL * I_AREA
    k_eq = 1.0 / (1.0 / k + L_TUBE / ei)
    i_total = ir.Arm.mass_matrix(arm, [0.0])[0, 0]
    f = ir.natural_frequencies(arm, [0.0]).frequencies_hz[0]
    assert f == pytest.approx(math.sqrt(k_eq / i_total) / (2 * math.pi), rel=1e-6)


def payload_arm():
    """One joint about -y, horizontal link at q = 0, task = the vertical line (invented)."""
    return ir.Arm.from_dict({
        "name": "lifter", "format": 1,
        "joints": [{"axis": [0.0, -1.0, 0.0],
                    "link": {"mass_kg": 1.5, "com_m": [0.2, 0.0, 0.0],
                             "inertia_kgm2": [0.0, 0.02, 0.02, 0.0, 0.0, 0.0]},
                    "actuator": {"peak_torque_Nm": 12.0, "gear_ratio": 60.0,
                                 "rotor_inertia_kgm2": 1e-5}}],
        "tool": {"xyz_m": [0.45, 0.0, 0.0], "payload_kg": 0.2},
        "task": {"axes": [[0.0, 0.0, 1.0]]},
    })


@pytest.mark.parametrize("accel", [0.0, 3.0])
def test_payload_capacity_hand_solved_single_joint(accel):
    # Demand at payload m: m1 g lc + m g L + a (I0 + m L^2) / L (Lambda = M / L^2, J = L),
    # I0 = 0.02 + m1 lc^2 + G^2 J_r; at the rating tau_p:
    # m = (tau_p - m1 g lc - a I0 / L) / (g L + a L)   [D]
    tau, m1, lc, length = 12.0, 1.5, 0.2, 0.45
    i0 = 0.02 + m1 * lc**2 + 60.0**2 * 1e-5
    expected = (tau - m1 * G_N * lc - accel * i0 / length) / (G_N * length + accel * length)
    got = ir.payload_capacity(payload_arm(), [0.0], accel)
    assert got == pytest.approx(expected, rel=1e-7)
    # at that payload the headroom of torque_headroom is zero (same rule, other code path)
    loaded = payload_arm().with_values({"tool.payload_kg": float(got)})
    margin = ir.torque_headroom(loaded, [0.0], accel_mps2=accel).min_margin
    assert margin == pytest.approx(0.0, abs=1e-6)


def test_payload_capacity_zero_when_over_rating_unloaded():
    arm = payload_arm().with_values({"joints[0].actuator.peak_torque_Nm": 2.0})
    assert ir.payload_capacity(arm, [0.0], 1.0) == 0.0
    assert ir.payload_capacity(arm, [0.0]) == 0.0


def test_max_tool_speed_hand_solved_two_joint():
    # planar 2R, l1 = 0.5, l2 = 0.4; joint speed limits 1 and 2 rad/s (motor rpm / gear)
    # q = (0, pi/2): J1 = (-0.4, 0.5), J2 = (-0.4, 0); largest |w1 J1 +- w2 J2| = |(-1.2, 0.5)|
    # = 1.3 m/s. Stretched (q2 = 0): w1 (l1 + l2) + w2 l2 = 1.7 m/s   [D]
    rod = {"mass_kg": 1.0, "com_m": [0.2, 0.0, 0.0], "inertia_kgm2": [0.0, 0.01, 0.01, 0, 0, 0]}
    arm = ir.Arm.from_dict({
        "name": "fast_2r", "format": 1,
        "joints": [{"axis": [0, 0, 1], "link": rod,
                    "actuator": {"gear_ratio": 100.0, "rated_speed_rpm": 100.0 * 60 / (2 * math.pi)}},
                   {"xyz_m": [0.5, 0, 0], "axis": [0, 0, 1], "link": rod,
                    "actuator": {"gear_ratio": 100.0, "rated_speed_rpm": 200.0 * 60 / (2 * math.pi)}}],
        "tool": {"xyz_m": [0.4, 0.0, 0.0]},
    })
    np.testing.assert_allclose(ir.max_tool_speed(arm, [[0.0, math.pi / 2], [0.3, 0.0]]),
                               [1.3, 1.7], rtol=1e-12)


def test_rigid_design_and_unrated_design_raise():
    arm = payload_arm()                 # no stiffness anywhere, no rated speed
    with pytest.raises(ValueError, match="rigid"):
        ir.natural_frequencies(arm, [0.0])
    with pytest.raises(ValueError, match="rigid"):
        ir.tool_deflection(arm, [0.0])
    spec = payload_arm().to_dict()
    del spec["joints"][0]["actuator"]["peak_torque_Nm"]
    with pytest.raises(ValueError, match="payload capacity is not defined"):
        ir.payload_capacity(ir.Arm.from_dict(spec), [0.0])
    with pytest.raises(ValueError, match="rated_speed_rpm"):
        ir.max_tool_speed(arm, [0.0])


def test_stiffness_inverse_of_compliance_and_ellipse_axes():
    arm = sprung_2r()
    q = [0.4, 1.1]
    c = ir.tool_compliance(arm, q)
    np.testing.assert_allclose(ir.tool_stiffness(arm, q) @ c, np.eye(2), atol=1e-9)
    stiff, directions = ir.principal_stiffnesses(arm, q)
    assert stiff[0] <= stiff[1]
    for i in range(2):
        u = arm.task_axes @ directions[:, i]
        assert 1.0 / (u @ c @ u) == pytest.approx(stiff[i], rel=1e-9)


def test_rigid_direction_gives_nan_stiffness_and_inf_principal():
    # one joint on a tube: nothing gives along the tube (axial stretch neglected)
    arm = cantilever_arm([L_TUBE, 0.0, 0.0], joint_stiffness=3000.0)
    assert np.all(np.isnan(ir.tool_stiffness(arm, [0.0])))
    stiff = ir.principal_stiffnesses(arm, [0.0]).stiffnesses
    assert np.isfinite(stiff[0]) and np.isinf(stiff[1])
