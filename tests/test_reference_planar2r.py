"""Planar 2R arm against published closed forms (references.md item 1).

Sources (status from references.md):
- Spong, Hutchinson & Vidyasagar, *Robot Modeling and Control*, Wiley 2006,
  ch. 7, two-link revolute arm: M, G and C(q, qd) qd for distributed links [M].
- Craig, *Introduction to Robotics*, 3rd ed., Pearson 2005, ch. 6 worked
  example, point masses at the link ends [M].
- Both re-derived with sympy (Lagrange) [D]; a sympy independent derivation
  also runs inside this file (``_lagrange_oracle``).
- Standard gravity g_n = 9.80665 m/s^2, 3rd CGPM (1901) [C].

Conventions of the published formulas: q1 from +x, q2 relative, gravity
along -y, tool point at the distal end of link 2.

How the designs are built here (two layouts, both must reproduce the
formulas):
- ``"xy"``: joint axes along world +z, the arm moves in the world x-y plane,
  gravity rotated with ``mount.gravity_mps2 = [0, -9.80665, 0]``; in-plane
  coordinates are (x, y) of W.
- ``"xz"``: the base is rolled by +90 deg (``mount.rpy_deg = [90, 0, 0]``), so
  the joint axes lie along world -y, the arm moves in the world x-z plane,
  and the default gravity (0, 0, -g_n) acts along the in-plane -y; in-plane
  coordinates are (x, z) of W.
"""

import numpy as np
import pytest
import sympy as sp
from hypothesis import given, settings
from hypothesis import strategies as st

import inertia_review as ir

G_N = 9.80665  # standard gravity, 3rd CGPM (1901) [C], references.md item 7

# references.md "Conventions": Case A uniform rods, Case B point masses.
CASE_A = dict(l1=1.0, l2=0.8, m1=2.0, m2=1.0, lc1=0.5, lc2=0.4,
              I1=2.0 * 1.0**2 / 12.0, I2=1.0 * 0.8**2 / 12.0)
CASE_B = dict(l1=1.0, l2=0.8, m1=2.0, m2=1.0, lc1=1.0, lc2=0.8, I1=0.0, I2=0.0)
CASES = {"A": CASE_A, "B": CASE_B}

# In-plane basis (columns: in-plane x, in-plane y "up") in W for each layout.
PLANE_BASIS = {
    "xy": np.array([[1.0, 0.0], [0.0, 1.0], [0.0, 0.0]]),
    "xz": np.array([[1.0, 0.0], [0.0, 0.0], [0.0, 1.0]]),
}
LAYOUTS = tuple(PLANE_BASIS)

FAST = settings(max_examples=30, deadline=None)


# --------------------------------------------------------------------------
# design helper (explicit design dicts, the file schema of arm-model.md)
# --------------------------------------------------------------------------
def planar_2r_dict(p, *, layout="xy", payload_kg=0.0, actuators=None,
                   gravity=True):
    """Design dict of a planar 2R arm with parameters ``p`` (Case A keys).

    Link i lies along its frame's +x; COM at (lc_i, 0, 0); transverse
    inertia I_i about the COM (about y and z), zero about the rod axis.
    """
    mount = {"xyz_m": [0.0, 0.0, 0.0]}
    if layout == "xy":
        mount["rpy_deg"] = [0.0, 0.0, 0.0]
        if gravity:
            mount["gravity_mps2"] = [0.0, -G_N, 0.0]
        else:
            mount["gravity_mps2"] = [0.0, 0.0, 0.0]
    elif layout == "xz":
        mount["rpy_deg"] = [90.0, 0.0, 0.0]
        if not gravity:
            mount["gravity_mps2"] = [0.0, 0.0, 0.0]
    else:  # pragma: no cover - helper misuse
        raise AssertionError(layout)

    def link(m, lc, inertia):
        return {"mass_kg": float(m), "com_m": [float(lc), 0.0, 0.0],
                "inertia_kgm2": [0.0, float(inertia), float(inertia),
                                 0.0, 0.0, 0.0]}

    joints = [
        {"name": "shoulder", "xyz_m": [0.0, 0.0, 0.0],
         "rpy_deg": [0.0, 0.0, 0.0], "axis": [0.0, 0.0, 1.0],
         "link": link(p["m1"], p["lc1"], p["I1"])},
        {"name": "elbow", "xyz_m": [float(p["l1"]), 0.0, 0.0],
         "rpy_deg": [0.0, 0.0, 0.0], "axis": [0.0, 0.0, 1.0],
         "link": link(p["m2"], p["lc2"], p["I2"])},
    ]
    if actuators is not None:
        for joint, act in zip(joints, actuators):
            if act is not None:
                joint["actuator"] = dict(act)
    return {
        "name": f"planar_2r_{layout}",
        "format": 1,
        "mount": mount,
        "joints": joints,
        "tool": {"xyz_m": [float(p["l2"]), 0.0, 0.0],
                 "payload_kg": float(payload_kg)},
    }


def planar_2r(p, **kw):
    return ir.Arm.from_dict(planar_2r_dict(p, **kw))


# --------------------------------------------------------------------------
# closed forms (Spong 2006 ch. 7 [M]; Craig 2005 ch. 6 [M]; both [D])
# --------------------------------------------------------------------------
def spong_mass_matrix(q, p):
    c2 = np.cos(q[..., 1])
    m11 = (p["m1"] * p["lc1"] ** 2
           + p["m2"] * (p["l1"] ** 2 + p["lc2"] ** 2
                        + 2 * p["l1"] * p["lc2"] * c2)
           + p["I1"] + p["I2"])
    m12 = p["m2"] * (p["lc2"] ** 2 + p["l1"] * p["lc2"] * c2) + p["I2"]
    m22 = np.broadcast_to(p["m2"] * p["lc2"] ** 2 + p["I2"], c2.shape)
    return np.stack([np.stack([m11, m12], -1), np.stack([m12, m22], -1)], -2)


def spong_gravity(q, p, g=G_N):
    c1 = np.cos(q[..., 0])
    c12 = np.cos(q[..., 0] + q[..., 1])
    g1 = (p["m1"] * p["lc1"] + p["m2"] * p["l1"]) * g * c1 \
        + p["m2"] * p["lc2"] * g * c12
    g2 = p["m2"] * p["lc2"] * g * c12
    return np.stack([g1, g2], -1)


def gravity_torque_in_plane(q, p, g_plane):
    """G = dV/dq for any in-plane gravity vector g_plane = (gx, gy).

    V = -(gx X + gy Y), X, Y = sum m_i (x_ci, y_ci); with g_plane = (0, -g)
    this is exactly the Spong 2006 ch. 7 gravity vector [M], [D].
    """
    gx, gy = g_plane
    s1, c1 = np.sin(q[..., 0]), np.cos(q[..., 0])
    s12, c12 = np.sin(q[..., 0] + q[..., 1]), np.cos(q[..., 0] + q[..., 1])
    a = p["m1"] * p["lc1"] + p["m2"] * p["l1"]
    b = p["m2"] * p["lc2"]
    dX = np.stack([-a * s1 - b * s12, -b * s12], -1)
    dY = np.stack([a * c1 + b * c12, b * c12], -1)
    return -(gx * dX + gy * dY)


def spong_velocity_torque(q, qd, p):
    h = p["m2"] * p["l1"] * p["lc2"] * np.sin(q[..., 1])
    qd1, qd2 = qd[..., 0], qd[..., 1]
    return np.stack([-h * (2 * qd1 * qd2 + qd2 ** 2), h * qd1 ** 2], -1)


def craig_point_mass(q, l1, l2, m1, m2, g=G_N):
    """Craig 2005 ch. 6 example, point masses at the link ends [M][D]."""
    c1, c2 = np.cos(q[..., 0]), np.cos(q[..., 1])
    c12 = np.cos(q[..., 0] + q[..., 1])
    m11 = l2**2 * m2 + 2 * l1 * l2 * m2 * c2 + l1**2 * (m1 + m2)
    m12 = l2**2 * m2 + l1 * l2 * m2 * c2
    m22 = np.broadcast_to(l2**2 * m2, c2.shape)
    M = np.stack([np.stack([m11, m12], -1), np.stack([m12, m22], -1)], -2)
    G = np.stack([m2 * l2 * g * c12 + (m1 + m2) * l1 * g * c1,
                  m2 * l2 * g * c12], -1)
    return M, G


def jacobian_formula(q, l1, l2):
    """Tool-point Jacobian of references.md "Conventions"."""
    s1, c1 = np.sin(q[..., 0]), np.cos(q[..., 0])
    s12, c12 = np.sin(q[..., 0] + q[..., 1]), np.cos(q[..., 0] + q[..., 1])
    return np.stack([np.stack([-l1 * s1 - l2 * s12, -l2 * s12], -1),
                     np.stack([l1 * c1 + l2 * c12, l2 * c12], -1)], -2)


def in_plane_jacobian(arm, q, E):
    return np.swapaxes(E, -1, -2) @ arm.jacobian(q)[..., :3, :]


# --------------------------------------------------------------------------
# sympy independent derivation (Lagrange), numbers substituted early
# --------------------------------------------------------------------------
def _lagrange_oracle(p, g=G_N):
    """Return callables M(q), G(q), Cqd(q, qd) from T and V with sympy.

    sympy independent derivation [D]: COM positions -> T = sum 1/2 m v^2 +
    1/2 I w^2, V = sum m g y; M = d2T/dqd2, G = dV/dq,
    (C qd)_i = sum_jk (dM_ij/dq_k - 1/2 dM_jk/dq_i) qd_j qd_k.
    No simplify: the parameters are numbers from the start.
    """
    q1, q2, u1, u2 = sp.symbols("q1 q2 u1 u2", real=True)
    q, u = [q1, q2], [u1, u2]
    num = {k: sp.Float(v, 17) for k, v in p.items()}
    x1 = num["lc1"] * sp.cos(q1)
    y1 = num["lc1"] * sp.sin(q1)
    x2 = num["l1"] * sp.cos(q1) + num["lc2"] * sp.cos(q1 + q2)
    y2 = num["l1"] * sp.sin(q1) + num["lc2"] * sp.sin(q1 + q2)

    def speed2(x, y):
        xd = sum(sp.diff(x, qi) * ui for qi, ui in zip(q, u))
        yd = sum(sp.diff(y, qi) * ui for qi, ui in zip(q, u))
        return xd**2 + yd**2

    T = (num["m1"] * speed2(x1, y1) / 2 + num["I1"] * u1**2 / 2
         + num["m2"] * speed2(x2, y2) / 2 + num["I2"] * (u1 + u2)**2 / 2)
    V = sp.Float(g, 17) * (num["m1"] * y1 + num["m2"] * y2)
    M = sp.Matrix(2, 2, lambda i, j: sp.expand(sp.diff(T, u[i], u[j])))
    G = sp.Matrix([sp.diff(V, qi) for qi in q])
    C = sp.Matrix([
        sum((sp.diff(M[i, j], q[k]) - sp.diff(M[j, k], q[i]) / 2) * u[j] * u[k]
            for j in range(2) for k in range(2))
        for i in range(2)])
    fM = sp.lambdify((q1, q2), M, "numpy")
    fG = sp.lambdify((q1, q2), G, "numpy")
    fC = sp.lambdify((q1, q2, u1, u2), C, "numpy")
    return (lambda qq: np.array(fM(*qq), dtype=float),
            lambda qq: np.array(fG(*qq), dtype=float).ravel(),
            lambda qq, uu: np.array(fC(*qq, *uu), dtype=float).ravel())


# --------------------------------------------------------------------------
# table values, references.md item 1 (Spong 2006 [M]; Craig 2005 [M]; [D])
# --------------------------------------------------------------------------
TABLE_ITEM1 = [
    ("A", (0.0, 0.0), [[2.68, 0.6133333333], [0.6133333333, 0.2133333333]],
     [23.53596, 3.92266]),
    ("A", (0.0, np.pi / 2), [[1.88, 0.2133333333], [0.2133333333, 0.2133333333]],
     [19.6133, 0.0]),
    ("A", (np.pi / 4, np.pi / 6),
     [[2.572820323, 0.5597434948], [0.5597434948, 0.2133333333]],
     [14.88395655, 1.015259115]),
    ("B", (0.0, 0.0), [[5.24, 1.44], [1.44, 0.64]], [37.26527, 7.84532]),
    ("B", (0.0, np.pi / 2), [[3.64, 0.64], [0.64, 0.64]], [29.41995, 0.0]),
    ("B", (np.pi / 4, np.pi / 6),
     [[5.025640646, 1.332820323], [1.332820323, 0.64]],
     [22.83356438, 2.030518231]),
]


@pytest.mark.parametrize("layout", LAYOUTS)
@pytest.mark.parametrize("case, q, M_ref, G_ref", TABLE_ITEM1)
def test_mass_matrix_and_gravity_table_values(layout, case, q, M_ref, G_ref):
    # references.md item 1 check cases; Spong 2006 ch. 7 [M] / Craig 2005
    # ch. 6 [M], re-derived with sympy [D]; values given to 10 digits.
    arm = planar_2r(CASES[case], layout=layout)
    q = np.array(q)
    np.testing.assert_allclose(arm.mass_matrix(q), M_ref, rtol=1e-9, atol=1e-12)
    np.testing.assert_allclose(arm.gravity_torque(q), G_ref, rtol=1e-9, atol=1e-9)


def test_table_hand_checks_case_a_stretched():
    # references.md item 1 hand checks: M11 = m1 lc1^2 + I1 + m2 (l1+lc2)^2
    # + I2 = 2.68 and G1 = 2.4 g_n, G2 = 0.4 g_n (Spong 2006 [M], [D]).
    arm = planar_2r(CASE_A)
    M = arm.mass_matrix(np.zeros(2))
    assert M[0, 0] == pytest.approx(0.5 + 1 / 6 + 1.96 + 0.64 / 12, rel=1e-12)
    np.testing.assert_allclose(arm.gravity_torque(np.zeros(2)),
                               [2.4 * G_N, 0.4 * G_N], rtol=1e-12)


# --------------------------------------------------------------------------
# closed forms at random configurations and random parameters
# --------------------------------------------------------------------------
lengths = st.floats(0.2, 2.0)
masses = st.floats(0.1, 5.0)
fractions = st.floats(0.1, 1.0)


@st.composite
def rod_params(draw):
    l1, l2 = draw(lengths), draw(lengths)
    m1, m2 = draw(masses), draw(masses)
    lc1, lc2 = draw(fractions) * l1, draw(fractions) * l2
    # inertia about the COM between 0 (point mass) and that of a uniform rod
    # times 2 (any non-negative value is physically admissible here)
    I1 = draw(st.floats(0.0, 2.0)) * m1 * l1**2 / 12
    I2 = draw(st.floats(0.0, 2.0)) * m2 * l2**2 / 12
    return dict(l1=l1, l2=l2, m1=m1, m2=m2, lc1=lc1, lc2=lc2, I1=I1, I2=I2)


@FAST
@given(p=rod_params(), seed=st.integers(0, 2**32 - 1),
       layout=st.sampled_from(LAYOUTS))
def test_closed_forms_at_random_configurations(p, seed, layout):
    # Spong 2006 ch. 7 [M], [D]: M(q), G(q) and C(q, qd) qd closed forms.
    rng = np.random.default_rng(seed)
    q = rng.uniform(-np.pi, np.pi, size=(7, 2))
    qd = rng.uniform(-3.0, 3.0, size=(7, 2))
    arm = planar_2r(p, layout=layout)
    np.testing.assert_allclose(arm.mass_matrix(q), spong_mass_matrix(q, p),
                               rtol=1e-10, atol=1e-12)
    np.testing.assert_allclose(arm.gravity_torque(q), spong_gravity(q, p),
                               rtol=1e-10, atol=1e-10)
    np.testing.assert_allclose(arm.velocity_torque(q, qd),
                               spong_velocity_torque(q, qd, p),
                               rtol=1e-9, atol=1e-10)


@FAST
@given(l1=lengths, l2=lengths, m1=masses, m2=masses,
       seed=st.integers(0, 2**32 - 1))
def test_point_mass_arm_matches_craig_example(l1, l2, m1, m2, seed):
    # Craig 2005 ch. 6 worked example, point masses at the link ends [M], [D].
    p = dict(l1=l1, l2=l2, m1=m1, m2=m2, lc1=l1, lc2=l2, I1=0.0, I2=0.0)
    q = np.random.default_rng(seed).uniform(-np.pi, np.pi, size=(5, 2))
    arm = planar_2r(p)
    M_ref, G_ref = craig_point_mass(q, l1, l2, m1, m2)
    np.testing.assert_allclose(arm.mass_matrix(q), M_ref, rtol=1e-10, atol=1e-12)
    np.testing.assert_allclose(arm.gravity_torque(q), G_ref, rtol=1e-10,
                               atol=1e-10)


@FAST
@given(l1=lengths, l2=lengths, m1=masses, m2=masses, q2=st.floats(-np.pi, np.pi),
       q1=st.floats(-np.pi, np.pi))
def test_point_mass_determinant_identity(l1, l2, m1, m2, q1, q2):
    # references.md item 1 [D]: det M = m2 l1^2 l2^2 (m1 + m2 sin^2 q2) for
    # point masses at the link ends.
    p = dict(l1=l1, l2=l2, m1=m1, m2=m2, lc1=l1, lc2=l2, I1=0.0, I2=0.0)
    M = planar_2r(p).mass_matrix(np.array([q1, q2]))
    expected = m2 * l1**2 * l2**2 * (m1 + m2 * np.sin(q2) ** 2)
    assert np.linalg.det(M) == pytest.approx(expected, rel=1e-9)


def test_point_mass_determinant_check_value():
    # references.md item 1 [D]: Case B at q2 = pi/6 gives det M = 1.44.
    M = planar_2r(CASE_B).mass_matrix(np.array([0.3, np.pi / 6]))
    assert np.linalg.det(M) == pytest.approx(1.44, rel=1e-12)


@pytest.mark.parametrize("case", CASES)
def test_sympy_lagrange_derivation(case):
    # sympy independent derivation [D] (references.md item 1 confirmation).
    p = CASES[case]
    fM, fG, fC = _lagrange_oracle(p)
    arm = planar_2r(p)
    rng = np.random.default_rng(20240611)
    q = rng.uniform(-np.pi, np.pi, size=(6, 2))
    qd = rng.uniform(-2.0, 2.0, size=(6, 2))
    M_core = arm.mass_matrix(q)
    G_core = arm.gravity_torque(q)
    C_core = arm.velocity_torque(q, qd)
    for i in range(len(q)):
        np.testing.assert_allclose(M_core[i], fM(q[i]), rtol=1e-10, atol=1e-12)
        np.testing.assert_allclose(G_core[i], fG(q[i]), rtol=1e-10, atol=1e-10)
        np.testing.assert_allclose(C_core[i], fC(q[i], qd[i]), rtol=1e-9,
                                   atol=1e-10)


def test_velocity_torque_check_values_case_a():
    # Spong 2006 ch. 7 [M], [D]: at q2 = pi/2, h = m2 l1 lc2 = 0.4;
    # qd = (1, 2): C qd = (-0.4 (2*1*2 + 4), 0.4 * 1) = (-3.2, 0.4).
    arm = planar_2r(CASE_A)
    np.testing.assert_allclose(
        arm.velocity_torque(np.array([0.3, np.pi / 2]), np.array([1.0, 2.0])),
        [-3.2, 0.4], rtol=1e-12)
    # No velocity, no velocity torque; stretched arm (sin q2 = 0): none.
    np.testing.assert_allclose(
        arm.velocity_torque(np.array([0.3, 0.0]), np.array([1.5, -2.0])),
        [0.0, 0.0], atol=1e-12)


def test_inverse_dynamics_matches_equation_of_motion():
    # Spong 2006 ch. 7 [M]: tau = M qdd + C qd + G; with a reflected rotor
    # n^2 J_m on joint 1 (arm-model.md, common practice, no source) the rotor
    # adds to the qdd term only.
    act = [{"peak_torque_Nm": 40.0, "continuous_torque_Nm": 30.0,
            "gear_ratio": 100.0, "rotor_inertia_kgm2": 1.0e-4},
           {"peak_torque_Nm": 10.0, "continuous_torque_Nm": 8.0}]
    arm = planar_2r(CASE_A, actuators=act)
    rng = np.random.default_rng(7)
    q = rng.uniform(-np.pi, np.pi, size=(4, 3, 2))
    qd = rng.uniform(-2.0, 2.0, size=(4, 3, 2))
    qdd = rng.uniform(-5.0, 5.0, size=(4, 3, 2))
    M = spong_mass_matrix(q, CASE_A).copy()
    M[..., 0, 0] += 100.0**2 * 1.0e-4
    expected = (np.einsum("...ij,...j->...i", M, qdd)
                + spong_velocity_torque(q, qd, CASE_A)
                + spong_gravity(q, CASE_A))
    tau = arm.inverse_dynamics(q, qd, qdd)
    assert tau.shape == (4, 3, 2)
    np.testing.assert_allclose(tau, expected, rtol=1e-10, atol=1e-10)


@pytest.mark.parametrize("case", CASES)
def test_mass_matrix_symmetric_positive_definite(case):
    # references.md item 1 "extra identities": M symmetric positive definite.
    arm = planar_2r(CASES[case])
    q2 = np.linspace(-np.pi, np.pi, 73)
    q = np.stack([np.full_like(q2, 0.4), q2], -1)
    M = arm.mass_matrix(q)
    np.testing.assert_allclose(M, np.swapaxes(M, -1, -2), rtol=0, atol=1e-14)
    assert np.all(np.linalg.eigvalsh(M) > 0)


def test_worst_static_torque_in_outstretched_horizontal_pose():
    # references.md item 1 "extra identities" [D]: for Case A the largest
    # |G1| over all q is 23.53596 N m, the largest |G2| 3.92266 N m, both at
    # the outstretched horizontal pose (0, 0).
    arm = planar_2r(CASE_A)
    t = np.linspace(-np.pi, np.pi, 121)
    q = np.stack(np.meshgrid(t, t, indexing="ij"), -1)
    G = np.abs(arm.gravity_torque(q))
    assert G.shape == (121, 121, 2)
    np.testing.assert_allclose(G.reshape(-1, 2).max(axis=0),
                               [23.53596, 3.92266], rtol=1e-12)
    np.testing.assert_allclose(np.abs(arm.gravity_torque(np.zeros(2))),
                               [23.53596, 3.92266], rtol=1e-12)


@pytest.mark.parametrize("layout", LAYOUTS)
def test_no_gravity_means_no_gravity_torque(layout):
    # Consequence of V = 0 when g = 0 (Spong 2006 ch. 7 [M] with g = 0).
    arm = planar_2r(CASE_A, layout=layout, gravity=False)
    q = np.random.default_rng(3).uniform(-np.pi, np.pi, size=(5, 2))
    np.testing.assert_allclose(arm.gravity_torque(q), 0.0, atol=1e-14)


# --------------------------------------------------------------------------
# kinematics of the published convention
# --------------------------------------------------------------------------
@pytest.mark.parametrize("layout", LAYOUTS)
def test_tool_position_and_jacobian_formula(layout):
    # Forward kinematics (l1 c1 + l2 c12, l1 s1 + l2 s12) and the Jacobian of
    # references.md "Conventions" (Spong 2006 ch. 3-4 [M], [D]).
    p = CASE_A
    E = PLANE_BASIS[layout]
    arm = planar_2r(p, layout=layout)
    q = np.random.default_rng(11).uniform(-np.pi, np.pi, size=(3, 4, 2))
    pos = arm.tool_position(q)
    assert pos.shape == (3, 4, 3)
    q1, q12 = q[..., 0], q[..., 0] + q[..., 1]
    expected = np.stack([p["l1"] * np.cos(q1) + p["l2"] * np.cos(q12),
                         p["l1"] * np.sin(q1) + p["l2"] * np.sin(q12)], -1)
    np.testing.assert_allclose(pos @ E, expected, atol=1e-12)
    # nothing leaves the plane
    normal = np.cross(E[:, 0], E[:, 1])
    np.testing.assert_allclose(pos @ normal, 0.0, atol=1e-12)

    J = arm.jacobian(q)
    assert J.shape == (3, 4, 6, 2)
    np.testing.assert_allclose(np.swapaxes(E, 0, 1) @ J[..., :3, :],
                               jacobian_formula(q, p["l1"], p["l2"]),
                               atol=1e-12)
    # the last link turns at qd1 + qd2 about the common joint axis (normal)
    np.testing.assert_allclose(J[..., 3:, :],
                               np.broadcast_to(normal[:, None], (3, 4, 3, 2)),
                               atol=1e-12)


@pytest.mark.parametrize("layout", LAYOUTS)
def test_default_task_axes_span_the_plane(layout):
    # arm-model.md "Task axes default": all joint axes parallel -> k = 2, the
    # plane normal to them (contract; needed to read Lambda in-plane below).
    arm = planar_2r(CASE_A, layout=layout)
    A = np.asarray(arm.task_axes)
    assert A.shape == (2, 3)
    np.testing.assert_allclose(A @ A.T, np.eye(2), atol=1e-12)
    normal = np.cross(PLANE_BASIS[layout][:, 0], PLANE_BASIS[layout][:, 1])
    np.testing.assert_allclose(A @ normal, 0.0, atol=1e-12)


# --------------------------------------------------------------------------
# ir.planar_chain against the explicit design dicts
# --------------------------------------------------------------------------
def chain_case_a(**kw):
    # Case A: uniform rods (rod inertia m l^2/12, COM at mid-length).
    return ir.planar_chain([1.0, 0.8], [2.0, 1.0], **kw)


def chain_case_b(**kw):
    # Case B: massless links, 2 kg "motor" riding at the elbow (motor of
    # joint 2 sits at the distal end of link 1), 1 kg payload at the tip.
    return ir.planar_chain([1.0, 0.8], [0.0, 0.0], motor_masses_kg=[0.0, 2.0],
                           payload_kg=1.0, **kw)


CHAINS = {"A": chain_case_a, "B": chain_case_b}


def chain_plane(arm, reach):
    """In-plane basis read off the chain's own tool positions.

    Centre = midpoint of the stretched arm at q1 = 0 and q1 = pi; in-plane x
    = direction of the stretched arm at q = 0; in-plane y = at q = (pi/2, 0).
    """
    p0 = arm.tool_position(np.array([0.0, 0.0]))
    pi = arm.tool_position(np.array([np.pi, 0.0]))
    p90 = arm.tool_position(np.array([np.pi / 2, 0.0]))
    centre = (p0 + pi) / 2
    ex, ey = p0 - centre, p90 - centre
    assert np.linalg.norm(ex) == pytest.approx(reach, rel=1e-12)
    assert np.linalg.norm(ey) == pytest.approx(reach, rel=1e-12)
    return centre, np.stack([ex, ey], -1) / reach


@pytest.mark.parametrize("case", CASES)
def test_planar_chain_matches_explicit_design(case):
    # ir.planar_chain must build the same arm as the explicit dict: M equal
    # (Spong 2006 ch. 7 [M] / Craig 2005 ch. 6 [M]), Jacobian in its own plane
    # equal to the formula, gravity torque = dV/dq for the gravity it carries
    # (the builder's brief does not fix the sense of rotation, so the plane
    # basis is read off the chain's own tool positions).
    p = CASES[case]
    chain = CHAINS[case]()
    ref = planar_2r(p)
    assert chain.dof == 2
    q = np.random.default_rng(5).uniform(-np.pi, np.pi, size=(9, 2))
    np.testing.assert_allclose(chain.mass_matrix(q), ref.mass_matrix(q),
                               rtol=1e-12, atol=1e-14)
    np.testing.assert_allclose(chain.mass_matrix(q), spong_mass_matrix(q, p),
                               rtol=1e-10, atol=1e-12)
    _, E = chain_plane(chain, p["l1"] + p["l2"])
    np.testing.assert_allclose(in_plane_jacobian(chain, q, E),
                               jacobian_formula(q, p["l1"], p["l2"]),
                               atol=1e-12)
    g_vec = np.asarray(chain.gravity)
    assert np.linalg.norm(g_vec) == pytest.approx(G_N, rel=1e-15)
    g_plane = g_vec @ E
    # plane_tilt_deg = 0: a vertical plane, all of gravity lies in it
    assert np.linalg.norm(g_plane) == pytest.approx(G_N, rel=1e-12)
    np.testing.assert_allclose(chain.gravity_torque(q),
                               gravity_torque_in_plane(q, p, g_plane),
                               rtol=1e-10, atol=1e-10)
    np.testing.assert_allclose(chain.velocity_torque(q, q[::-1]),
                               spong_velocity_torque(q, q[::-1], p),
                               rtol=1e-9, atol=1e-10)


def test_planar_chain_q1_measured_from_horizontal():
    # Published convention (references.md "Conventions", Spong 2006 ch. 7
    # [M]): q1 from the +x axis with gravity along -y, i.e. q = 0 is the
    # outstretched horizontal pose and q1 = pi/2 points the arm straight up.
    chain = chain_case_a()
    _, E = chain_plane(chain, 1.8)
    up = -np.asarray(chain.gravity) / np.linalg.norm(chain.gravity)
    assert E[:, 0] @ up == pytest.approx(0.0, abs=1e-12)
    assert E[:, 1] @ up == pytest.approx(1.0, rel=1e-12)
    np.testing.assert_allclose(chain.gravity_torque(np.zeros(2)),
                               [23.53596, 3.92266], rtol=1e-12)


@pytest.mark.parametrize("tilt_deg", [0.0, 30.0, 90.0])
def test_planar_chain_plane_tilt_scales_gravity(tilt_deg):
    # Tilting the plane by theta from vertical leaves g cos(theta) in the
    # plane, and only that part makes joint torque (all joint axes are along
    # the plane normal): G = dV/dq with the in-plane gravity (Spong 2006
    # ch. 7 [M] with g -> g cos theta, [D]); M does not change; 90 deg is a
    # horizontal plane: G = 0.
    p = CASE_A
    chain = chain_case_a(plane_tilt_deg=tilt_deg)
    q = np.random.default_rng(9).uniform(-np.pi, np.pi, size=(6, 2))
    np.testing.assert_allclose(chain.mass_matrix(q), spong_mass_matrix(q, p),
                               rtol=1e-10, atol=1e-12)
    _, E = chain_plane(chain, p["l1"] + p["l2"])
    g_plane = np.asarray(chain.gravity) @ E
    assert np.linalg.norm(g_plane) == pytest.approx(
        G_N * np.cos(np.radians(tilt_deg)), abs=1e-12)
    np.testing.assert_allclose(chain.gravity_torque(q),
                               gravity_torque_in_plane(q, p, g_plane),
                               rtol=1e-9, atol=1e-9)
    if tilt_deg == 90.0:
        np.testing.assert_allclose(chain.gravity_torque(q), 0.0, atol=1e-12)


def test_planar_chain_base_yaw_turns_about_world_z():
    # base_yaw_deg turns the base about world z: tool positions turn by
    # Rz(yaw); M and G do not change (gravity is along z; rotation
    # invariance, common practice, no source).
    yaw = np.radians(35.0)
    Rz = np.array([[np.cos(yaw), -np.sin(yaw), 0.0],
                   [np.sin(yaw), np.cos(yaw), 0.0], [0.0, 0.0, 1.0]])
    a0, a1 = chain_case_a(), chain_case_a(base_yaw_deg=35.0)
    q = np.random.default_rng(13).uniform(-np.pi, np.pi, size=(6, 2))
    np.testing.assert_allclose(a1.tool_position(q), a0.tool_position(q) @ Rz.T,
                               atol=1e-12)
    np.testing.assert_allclose(a1.mass_matrix(q), a0.mass_matrix(q), rtol=1e-12)
    np.testing.assert_allclose(a1.gravity_torque(q), a0.gravity_torque(q),
                               rtol=1e-10, atol=1e-10)


def test_planar_chain_rotor_and_payload_against_closed_form():
    # Reflected rotor n^2 J_m on M11 (arm-model.md, common practice, no
    # source) and a point payload m_L at the tip (Spong 2006 ch. 7 [M] with
    # m2 -> m2 + m_L, lc2 -> (m2 lc2 + m_L l2)/(m2 + m_L), I2 -> I2 + the
    # parallel-axis terms; [D]). Compared here via the equivalent explicit
    # design with the payload in tool.payload_kg.
    chain = chain_case_a(payload_kg=0.5, gear_ratio=[100.0, 1.0],
                         rotor_inertia_kgm2=[1.0e-4, 0.0],
                         peak_torque_Nm=[40.0, 10.0],
                         continuous_torque_Nm=[30.0, 8.0])
    ref = planar_2r(CASE_A, payload_kg=0.5,
                    actuators=[{"peak_torque_Nm": 40.0,
                                "continuous_torque_Nm": 30.0,
                                "gear_ratio": 100.0,
                                "rotor_inertia_kgm2": 1.0e-4},
                               {"peak_torque_Nm": 10.0,
                                "continuous_torque_Nm": 8.0}])
    q = np.random.default_rng(17).uniform(-np.pi, np.pi, size=(6, 2))
    np.testing.assert_allclose(chain.mass_matrix(q), ref.mass_matrix(q),
                               rtol=1e-12, atol=1e-14)
    # closed form: payload as an extra point mass at l2 on link 2
    m2, lc2, l2, mL = CASE_A["m2"], CASE_A["lc2"], CASE_A["l2"], 0.5
    m2p = m2 + mL
    lc2p = (m2 * lc2 + mL * l2) / m2p
    I2p = CASE_A["I2"] + m2 * (lc2 - lc2p) ** 2 + mL * (l2 - lc2p) ** 2
    p = dict(CASE_A, m2=m2p, lc2=lc2p, I2=I2p)
    M = spong_mass_matrix(q, p).copy()
    M[..., 0, 0] += 100.0**2 * 1.0e-4
    np.testing.assert_allclose(ref.mass_matrix(q), M, rtol=1e-10, atol=1e-12)
    np.testing.assert_allclose(ref.gravity_torque(q), spong_gravity(q, p),
                               rtol=1e-10, atol=1e-10)
