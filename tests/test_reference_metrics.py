"""Arm metrics against published results (references.md items 2, 3, 4).

Sources (status from references.md):
- Salisbury & Craig, "Articulated hands: Force control and kinematic
  issues", IJRR 1(1):4-17, 1982 [C citation]: the isotropic 2R design
  l1 = sqrt(2) l2, q2 = +-135 deg [M numbers, re-derived D].
- Yoshikawa, "Manipulability of robotic mechanisms", IJRR 4(2):3-9, 1985
  [C citation]: w = sqrt(det(J J^T)) = l1 l2 |sin q2| [M formula, checked D].
  (Dynamic manipulability, Yoshikawa ICRA 1985, has no public function in the
  toolkit and is not tested; see the note after the manipulability tests.)
- Khatib, IEEE J. Robotics and Automation RA-3(1), 1987, eq. 18 [S:
  secondary summary only]: Lambda = J^-T M J^-1 = (J M^-1 J^T)^-1; Khatib, IJRR 14(1), 1995:
  effective mass m_u = 1 / (u^T J M^-1 J^T u) [M formula].
- The closed-form Lambda oracles (point masses, uniform rods at q2 = 90 deg,
  payload identity, reflected rotor) are exact consequences of Khatib's
  definition derived in references.md item 4/8 [D], not published numbers.
- Acceleration capability and torque headroom: references.md item 4
  [D, from F = Lambda xdd + p and tau = J^T F; not a published numeric case].

Arms: planar 2R with joint axes along world z, in the world x-y plane, and
gravity rotated to (0, -9.80665, 0) with ``mount.gravity_mps2`` so that the
published convention (q1 from +x, gravity along -y) holds in world x-y.
Lambda is compared in world x-y coordinates: A^T Lambda A with A =
``arm.task_axes`` (any orthonormal basis of the plane gives the same).
"""

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from scipy.optimize import minimize_scalar

import inertia_review as ir

G_N = 9.80665  # standard gravity, 3rd CGPM (1901) [C], references.md item 7

CASE_A = dict(l1=1.0, l2=0.8, m1=2.0, m2=1.0, lc1=0.5, lc2=0.4,
              I1=2.0 * 1.0**2 / 12.0, I2=1.0 * 0.8**2 / 12.0)
CASE_B = dict(l1=1.0, l2=0.8, m1=2.0, m2=1.0, lc1=1.0, lc2=0.8, I1=0.0, I2=0.0)
CASES = {"A": CASE_A, "B": CASE_B}
TAU_MAX = (40.0, 10.0)  # references.md item 4 acceleration / headroom cases
TAU_CONT = (30.0, 8.0)  # invented continuous ratings for the static check

E_XY = np.array([[1.0, 0.0], [0.0, 1.0], [0.0, 0.0]])  # in-plane basis in W

FAST = settings(max_examples=30, deadline=None)


# --------------------------------------------------------------------------
# design helper (explicit design dicts, the file schema of arm-model.md)
# --------------------------------------------------------------------------
def planar_2r_dict(p, *, payload_kg=0.0, ratings=None, rotor=None):
    """Planar 2R in world x-y, gravity along -y (see module docstring).

    ratings: None (no actuators) or a sequence of (peak, continuous) or None
    per joint. rotor: optional (joint index, gear ratio, rotor inertia).
    """
    def link(m, lc, inertia):
        return {"mass_kg": float(m), "com_m": [float(lc), 0.0, 0.0],
                "inertia_kgm2": [0.0, float(inertia), float(inertia),
                                 0.0, 0.0, 0.0]}

    joints = [
        {"name": "shoulder", "xyz_m": [0.0, 0.0, 0.0], "axis": [0.0, 0.0, 1.0],
         "link": link(p["m1"], p["lc1"], p["I1"])},
        {"name": "elbow", "xyz_m": [float(p["l1"]), 0.0, 0.0],
         "axis": [0.0, 0.0, 1.0], "link": link(p["m2"], p["lc2"], p["I2"])},
    ]
    if ratings is not None:
        for joint, r in zip(joints, ratings):
            if r is not None:
                joint["actuator"] = {"peak_torque_Nm": float(r[0]),
                                     "continuous_torque_Nm": float(r[1])}
    if rotor is not None:
        i, n, jm = rotor
        act = joints[i].setdefault(
            "actuator", {"peak_torque_Nm": 100.0, "continuous_torque_Nm": 50.0})
        act["gear_ratio"] = float(n)
        act["rotor_inertia_kgm2"] = float(jm)
    return {
        "name": "planar_2r_reference",
        "format": 1,
        "mount": {"xyz_m": [0.0, 0.0, 0.0], "rpy_deg": [0.0, 0.0, 0.0],
                  "gravity_mps2": [0.0, -G_N, 0.0]},
        "joints": joints,
        "tool": {"xyz_m": [float(p["l2"]), 0.0, 0.0],
                 "payload_kg": float(payload_kg)},
    }


def planar_2r(p, **kw):
    return ir.Arm.from_dict(planar_2r_dict(p, **kw))


def geometry(l1, l2, m1=1.0, m2=1.0):
    """Uniform-rod arm with the given link lengths (kinematic checks)."""
    return dict(l1=l1, l2=l2, m1=m1, m2=m2, lc1=l1 / 2, lc2=l2 / 2,
                I1=m1 * l1**2 / 12, I2=m2 * l2**2 / 12)


# --------------------------------------------------------------------------
# independent oracles (formulas of references.md, computed with numpy)
# --------------------------------------------------------------------------
def jacobian_formula(q, l1, l2):
    s1, c1 = np.sin(q[..., 0]), np.cos(q[..., 0])
    s12, c12 = np.sin(q[..., 0] + q[..., 1]), np.cos(q[..., 0] + q[..., 1])
    return np.stack([np.stack([-l1 * s1 - l2 * s12, -l2 * s12], -1),
                     np.stack([l1 * c1 + l2 * c12, l2 * c12], -1)], -2)


def mass_matrix_formula(q, p):
    """Spong, Hutchinson & Vidyasagar 2006 ch. 7 [M], [D]."""
    c2 = np.cos(q[..., 1])
    m11 = (p["m1"] * p["lc1"] ** 2
           + p["m2"] * (p["l1"] ** 2 + p["lc2"] ** 2
                        + 2 * p["l1"] * p["lc2"] * c2) + p["I1"] + p["I2"])
    m12 = p["m2"] * (p["lc2"] ** 2 + p["l1"] * p["lc2"] * c2) + p["I2"]
    m22 = np.broadcast_to(p["m2"] * p["lc2"] ** 2 + p["I2"], c2.shape)
    return np.stack([np.stack([m11, m12], -1), np.stack([m12, m22], -1)], -2)


def gravity_formula(q, p):
    """Spong 2006 ch. 7 [M], [D]; gravity along -y."""
    c1, c12 = np.cos(q[..., 0]), np.cos(q[..., 0] + q[..., 1])
    g1 = ((p["m1"] * p["lc1"] + p["m2"] * p["l1"]) * G_N * c1
          + p["m2"] * p["lc2"] * G_N * c12)
    return np.stack([g1, p["m2"] * p["lc2"] * G_N * c12], -1)


def lambda_formula(q, p):
    """Khatib 1987 eq. 18: J^-T M J^-1 with numpy.linalg.inv [S summary]."""
    Jinv = np.linalg.inv(jacobian_formula(q, p["l1"], p["l2"]))
    return np.swapaxes(Jinv, -1, -2) @ mass_matrix_formula(q, p) @ Jinv


def lambda_xy(arm, Lam):
    """Task-space Lambda (..., k, k) -> world x-y coordinates (..., 2, 2)."""
    A = np.asarray(arm.task_axes)
    return E_XY.T @ (A.T @ Lam @ A) @ E_XY


def unit_xy(angle):
    angle = np.asarray(angle, dtype=float)
    return np.stack([np.cos(angle), np.sin(angle), np.zeros_like(angle)], -1)


def isotropy_formula(q, l1, l2):
    s = np.linalg.svd(jacobian_formula(q, l1, l2), compute_uv=False)
    return s[..., -1] / s[..., 0]


# ==========================================================================
# Salisbury & Craig (1982): isotropic two-link arm (references.md item 2)
# ==========================================================================
@FAST
@given(q1=st.floats(-np.pi, np.pi), sign=st.sampled_from([1.0, -1.0]),
       l2=st.floats(0.2, 2.0))
def test_isotropic_design_any_q1(q1, sign, l2):
    # Salisbury & Craig 1982 [C citation, M numbers, D]: l1 = sqrt(2) l2 and
    # q2 = +-135 deg give J^T J = l2^2 I, 1/kappa = 1, for any q1.
    arm = planar_2r(geometry(np.sqrt(2.0) * l2, l2))
    q = np.array([q1, sign * 3 * np.pi / 4])
    assert ir.isotropy_index(arm, q) == pytest.approx(1.0, abs=1e-12)
    Jv = E_XY.T @ arm.jacobian(q)[:3, :]
    np.testing.assert_allclose(Jv.T @ Jv, l2**2 * np.eye(2), atol=1e-12)


def test_isotropic_design_check_cases():
    # references.md item 2 check cases: l2 = 1, l1 = sqrt(2): q = (0, 3pi/4),
    # (0.7, 3pi/4), (0, -3pi/4) -> sigma(J) = (1, 1); elsewhere < 1.
    arm = planar_2r(geometry(np.sqrt(2.0), 1.0, m1=3.0, m2=0.4))
    q = np.array([[0.0, 3 * np.pi / 4], [0.7, 3 * np.pi / 4],
                  [0.0, -3 * np.pi / 4]])
    np.testing.assert_allclose(ir.isotropy_index(arm, q), 1.0, atol=1e-12)
    s = np.linalg.svd(E_XY.T @ arm.jacobian(q)[..., :3, :], compute_uv=False)
    np.testing.assert_allclose(s, 1.0, atol=1e-12)
    q_off = np.array([[0.0, 2.0], [0.0, 2.6], [1.0, np.pi / 2]])
    assert np.all(ir.isotropy_index(arm, q_off) < 1.0 - 1e-3)


def test_equal_links_best_inverse_condition_number():
    # references.md item 2 [D] (equal links never isotropic): max 1/kappa
    # = (sqrt5 - 1)/2 = 0.6180339887 at q2 = arccos(-2/3) = 131.8103149 deg.
    # Found here with scipy.optimize.minimize_scalar and on a fine grid.
    arm = planar_2r(geometry(1.0, 1.0))
    best = (np.sqrt(5.0) - 1) / 2

    def neg_iso(q2):
        return -float(ir.isotropy_index(arm, np.array([0.3, q2])))

    res = minimize_scalar(neg_iso, bounds=(np.pi / 2, np.pi - 1e-3),
                          method="bounded", options={"xatol": 1e-10})
    assert -res.fun == pytest.approx(best, rel=1e-9)
    assert res.x == pytest.approx(np.arccos(-2.0 / 3.0), abs=1e-4)
    assert np.degrees(np.arccos(-2.0 / 3.0)) == pytest.approx(131.8103149,
                                                              abs=1e-7)
    q2 = np.linspace(1e-3, np.pi - 1e-3, 20001)
    iso = ir.isotropy_index(arm, np.stack([np.zeros_like(q2), q2], -1))
    assert iso.shape == q2.shape
    assert iso.max() == pytest.approx(best, rel=1e-6)
    assert iso.max() <= best + 1e-12
    assert q2[np.argmax(iso)] == pytest.approx(np.arccos(-2.0 / 3.0), abs=1e-3)
    # exactly at the optimum
    assert ir.isotropy_index(arm, np.array([0.0, np.arccos(-2 / 3)])) == \
        pytest.approx(best, rel=1e-12)


def test_equal_links_at_90_deg():
    # references.md item 2 [D]: sigma(J) = (phi, 1/phi), 1/kappa = 1/phi^2.
    arm = planar_2r(geometry(1.0, 1.0))
    q = np.array([0.4, np.pi / 2])
    assert ir.isotropy_index(arm, q) == pytest.approx(0.3819660113, rel=1e-9)
    s = np.linalg.svd(E_XY.T @ arm.jacobian(q)[:3, :], compute_uv=False)
    np.testing.assert_allclose(s, [1.6180339887, 0.6180339887], rtol=1e-9)


@pytest.mark.parametrize("q, sigma, inv_kappa, rtol", [
    ((0.0, np.pi / 2), (1.39719634, 0.57257522), 0.40980297, 1e-7),
    ((np.pi / 4, np.pi / 6), (1.903013285, 0.2101929624), 0.1104527036, 1e-9),
])
def test_case_a_isotropy_values(q, sigma, inv_kappa, rtol):
    # references.md item 2, Case A geometry (l1 = 1, l2 = 0.8) [D].
    arm = planar_2r(CASE_A)
    q = np.array(q)
    assert ir.isotropy_index(arm, q) == pytest.approx(inv_kappa, rel=rtol)
    s = np.linalg.svd(E_XY.T @ arm.jacobian(q)[:3, :], compute_uv=False)
    np.testing.assert_allclose(s, sigma, rtol=rtol)


@FAST
@given(seed=st.integers(0, 2**32 - 1), l1=st.floats(0.2, 2.0),
       l2=st.floats(0.2, 2.0), m1=st.floats(0.1, 5.0), m2=st.floats(0.1, 5.0))
def test_isotropy_index_is_kinematic(seed, l1, l2, m1, m2):
    # sigma_min / sigma_max of the task Jacobian (Salisbury & Craig 1982
    # condition number [S], via Boschetti et al. 2011); masses play no part;
    # numpy SVD of the formula.
    q = np.random.default_rng(seed).uniform(-np.pi, np.pi, size=(6, 2))
    arm = planar_2r(geometry(l1, l2, m1, m2))
    # atol as in test_manipulability_formula (Gram-matrix rounding near
    # singular poses); the core gives 0 where it classes q as singular.
    np.testing.assert_allclose(ir.isotropy_index(arm, q),
                               isotropy_formula(q, l1, l2), rtol=1e-9,
                               atol=1e-9)


# ==========================================================================
# Yoshikawa (1985): manipulability (item 3)
# ==========================================================================
@pytest.mark.parametrize("q2, w", [(np.pi / 6, 0.4), (np.pi / 2, 0.8),
                                   (-np.pi / 2, 0.8), (0.0, 0.0)])
def test_manipulability_check_cases(q2, w):
    # Yoshikawa 1985 [C citation]; references.md item 3 check cases [D]:
    # l1 = 1, l2 = 0.8: q2 = pi/6 -> 0.4, q2 = pi/2 -> 0.8.
    arm = planar_2r(CASE_A)
    assert ir.manipulability(arm, np.array([0.9, q2])) == pytest.approx(
        w, rel=1e-12, abs=1e-12)


@FAST
@given(seed=st.integers(0, 2**32 - 1), l1=st.floats(0.2, 2.0),
       l2=st.floats(0.2, 2.0))
def test_manipulability_formula(seed, l1, l2):
    # Yoshikawa 1985: w = sqrt(det(J J^T)) = l1 l2 |sin q2| for the 2R arm.
    q = np.random.default_rng(seed).uniform(-np.pi, np.pi, size=(3, 4, 2))
    arm = planar_2r(geometry(l1, l2))
    w = ir.manipulability(arm, q)
    assert w.shape == (3, 4)
    # atol: a Gram-matrix route (det or eigenvalues of J J^T) loses about
    # sqrt(eps) * sigma_max^2 absolute near singular poses (numerical
    # analysis, common practice, no source); 1e-10 (l1 + l2)^2 allows that
    # only for |sin q2| below ~1e-7, so any formula error still fails.
    np.testing.assert_allclose(w, l1 * l2 * np.abs(np.sin(q[..., 1])),
                               rtol=1e-9, atol=1e-10 * (l1 + l2) ** 2)


def test_manipulability_best_split_of_fixed_reach():
    # references.md item 3 [M, D from the formula]: for fixed l1 + l2 = L,
    # w is largest at l1 = l2 = L/2, q2 = +-90 deg, w_max = L^2/4.
    L = 1.8
    l1s = np.linspace(0.3, 1.5, 13)
    w = [float(ir.manipulability(
        ir.planar_chain([l1, L - l1], [1.0, 1.0]), np.array([0.0, np.pi / 2])))
        for l1 in l1s]
    assert l1s[int(np.argmax(w))] == pytest.approx(L / 2, abs=1e-12)
    assert max(w) == pytest.approx(L**2 / 4, rel=1e-12)


# Yoshikawa's dynamic manipulability w_d = sqrt(det(J (M^T M)^-1 J^T)) (ICRA 1985; for a square
# J, |det J| / |det M|; references.md item 3) is not tested here: the toolkit has no public
# function for it, and a test that recomputed it from arm.jacobian and arm.mass_matrix would
# only re-check J and M, which the closed forms of references.md items 1 and 2 already check
# (tests/test_reference_planar2r.py, the isotropy and manipulability tests above).


# ==========================================================================
# Khatib (1987, 1995): operational-space inertia (references.md item 4)
# ==========================================================================
TABLE_ITEM4 = [
    # case, q, Lambda (x-y), eigenvalues, min/max, m_x, m_y, rtol
    ("A", (0.0, np.pi / 2), [[1 / 3, 0.0], [0.0, 5 / 3]], (1 / 3, 5 / 3), 0.2,
     1 / 3, 5 / 3, 1e-12),
    ("A", (np.pi / 4, np.pi / 6),
     [[0.4792740578, 0.8333333333], [0.8333333333, 4.520725942]],
     (0.3141871586, 4.685812841), 0.06705072721, 0.3256605778, 3.07177532,
     1e-9),
    ("B", (0.0, np.pi / 2), [[1.0, 0.0], [0.0, 3.0]], (1.0, 3.0), 1 / 3, 1.0,
     3.0, 1e-12),
    ("B", (np.pi / 4, np.pi / 6), [[1.535898385, 2.0], [2.0, 8.464101615]],
     (1.0, 9.0), 1 / 9, 1.063314266, 5.859762657, 1e-9),
    ("B", (0.3, 2.0), [[2.073807514, -1.201820019], [-1.201820019, 2.345093360]],
     (1.0, 3.418900874), 1 / 3.418900874, None, None, 1e-9),
]


def test_case_b_mass_ratio_to_seven_digits():
    # references.md item 4 [D], case B at q = (0.3, 2.0): eigenvalues 1 and 3.418900874, so
    # m_min / m_max = 1 / 3.418900874 = 0.29249166, printed as 0.2924917 (corrected value)
    r = float(ir.mass_ratio(planar_2r(CASES["B"]), np.array([0.3, 2.0])))
    assert r == pytest.approx(1 / 3.418900874, rel=1e-9)
    assert f"{r:.7f}" == "0.2924917"


@pytest.mark.parametrize("case, q, lam, eig, ratio, m_x, m_y, rtol",
                         TABLE_ITEM4)
def test_apparent_mass_table_values(case, q, lam, eig, ratio, m_x, m_y, rtol):
    # references.md item 4 check cases [D] (Khatib 1987 eq. 18 [S summary];
    # m_u per Khatib 1995 [M formula]). Case B at (0.3, 2.0): the ratio is
    # 1 / 3.418900874 = 0.29249166 (references.md item 4, corrected: 0.2924917, not 0.2924918),
    # checked at the 1e-9 of the 10-digit eigenvalue like every other entry.
    arm = planar_2r(CASES[case])
    q = np.array(q)
    np.testing.assert_allclose(lambda_xy(arm, ir.apparent_mass(arm, q)), lam,
                               rtol=rtol, atol=1e-12)
    pm = ir.principal_masses(arm, q)
    np.testing.assert_allclose(pm.masses, eig, rtol=rtol)
    assert ir.mass_ratio(arm, q) == pytest.approx(ratio, rel=rtol)
    if m_x is not None:
        assert ir.mass_along(arm, q, np.array([1.0, 0.0, 0.0])) == \
            pytest.approx(m_x, rel=rtol)
        assert ir.mass_along(arm, q, np.array([0.0, 1.0, 0.0])) == \
            pytest.approx(m_y, rel=rtol)


@pytest.mark.parametrize("case", CASES)
def test_apparent_mass_equals_inverse_jacobian_form(case):
    # Khatib 1987 eq. 18 [S summary]: for square invertible J,
    # (J M^-1 J^T)^-1 = J^-T M J^-1, computed here with numpy.linalg.inv
    # (a) from the core's own J and M, (b) from the closed-form J and M.
    p = CASES[case]
    arm = planar_2r(p)
    rng = np.random.default_rng(1987)
    q = rng.uniform(-np.pi, np.pi, size=(40, 2))
    q = q[np.abs(np.sin(q[:, 1])) > 0.1][:20].reshape(4, 5, 2)
    Lam = lambda_xy(arm, ir.apparent_mass(arm, q))
    assert Lam.shape == (4, 5, 2, 2)
    Jinv = np.linalg.inv(E_XY.T @ arm.jacobian(q)[..., :3, :])
    from_core = np.swapaxes(Jinv, -1, -2) @ arm.mass_matrix(q) @ Jinv
    np.testing.assert_allclose(Lam, from_core, rtol=1e-9, atol=1e-10)
    np.testing.assert_allclose(Lam, lambda_formula(q, p), rtol=1e-9, atol=1e-10)


@FAST
@given(l1=st.floats(0.2, 2.0), l2=st.floats(0.2, 2.0), m1=st.floats(0.1, 5.0),
       m2=st.floats(0.1, 5.0), q1=st.floats(-np.pi, np.pi),
       q2=st.floats(0.15, np.pi - 0.15), sign=st.sampled_from([1.0, -1.0]))
def test_point_mass_lambda_closed_form(l1, l2, m1, m2, q1, q2, sign):
    # references.md item 4/8 [D] from Khatib's definition: point masses at
    # the link ends give Lambda = m2 I + (m1 / sin^2 q2) u12 u12^T,
    # eigenvalues {m2, m2 + m1/sin^2 q2}, the larger along link 2.
    q2 = sign * q2
    p = dict(l1=l1, l2=l2, m1=m1, m2=m2, lc1=l1, lc2=l2, I1=0.0, I2=0.0)
    arm = planar_2r(p)
    q = np.array([q1, q2])
    u12 = np.array([np.cos(q1 + q2), np.sin(q1 + q2)])
    expected = m2 * np.eye(2) + m1 / np.sin(q2) ** 2 * np.outer(u12, u12)
    np.testing.assert_allclose(lambda_xy(arm, ir.apparent_mass(arm, q)),
                               expected, rtol=1e-8, atol=1e-9 * expected.max())
    pm = ir.principal_masses(arm, q)
    np.testing.assert_allclose(pm.masses, [m2, m2 + m1 / np.sin(q2) ** 2],
                               rtol=1e-8)
    d = np.asarray(pm.directions)
    assert d.shape == (3, 2)
    assert abs(d[:, 1] @ np.array([*u12, 0.0])) == pytest.approx(1.0, abs=1e-6)
    assert ir.mass_ratio(arm, q) == pytest.approx(
        m2 / (m2 + m1 / np.sin(q2) ** 2), rel=1e-8)


@FAST
@given(l1=st.floats(0.2, 2.0), l2=st.floats(0.2, 2.0), m1=st.floats(0.1, 5.0),
       m2=st.floats(0.1, 5.0), q1=st.floats(-np.pi, np.pi),
       sign=st.sampled_from([1.0, -1.0]))
def test_uniform_rods_at_90_deg(l1, l2, m1, m2, q1, sign):
    # references.md item 4 [D]: uniform rods at q2 = +-90 deg, in the frame
    # (perpendicular to link 2, along link 2): Lambda = diag(m2/3, m1/3 + m2).
    arm = planar_2r(geometry(l1, l2, m1, m2))
    q = np.array([q1, sign * np.pi / 2])
    th = q1 + q[1]
    F = np.array([[-np.sin(th), np.cos(th)], [np.cos(th), np.sin(th)]]).T
    Lam = F.T @ lambda_xy(arm, ir.apparent_mass(arm, q)) @ F
    np.testing.assert_allclose(Lam, np.diag([m2 / 3, m1 / 3 + m2]), rtol=1e-9,
                               atol=1e-10 * (m1 + m2))


def test_uniform_rods_case_a_exact():
    # references.md item 4/8 [D]: Case A at q = (0, pi/2): diag(1/3, 5/3).
    arm = planar_2r(CASE_A)
    np.testing.assert_allclose(
        lambda_xy(arm, ir.apparent_mass(arm, np.array([0.0, np.pi / 2]))),
        np.diag([1 / 3, 5 / 3]), rtol=1e-12, atol=1e-13)


@pytest.mark.parametrize("case, q", [("A", (np.pi / 4, np.pi / 6)),
                                     ("B", (0.3, 2.0)), ("A", (-1.2, -0.7))])
def test_mass_along_and_its_extremes(case, q):
    # Khatib 1995 effective mass [M formula]: m_u = 1/(u^T J M^-1 J^T u)
    # (numpy from the closed forms); m_u <= u^T Lambda u with equality iff u
    # is an eigenvector; min/max over directions = principal masses [D].
    p = CASES[case]
    arm = planar_2r(p)
    q = np.array(q)
    ang = np.linspace(0.0, 2 * np.pi, 7201)
    u = unit_xy(ang)
    m_u = ir.mass_along(arm, q, u)
    assert m_u.shape == ang.shape
    J = jacobian_formula(q, p["l1"], p["l2"])
    W = J @ np.linalg.solve(mass_matrix_formula(q, p), J.T)
    u2 = u[:, :2]
    np.testing.assert_allclose(m_u, 1.0 / np.einsum("ni,ij,nj->n", u2, W, u2),
                               rtol=1e-9)
    Lam = lambda_formula(q, p)
    uLu = np.einsum("ni,ij,nj->n", u2, Lam, u2)
    assert np.all(m_u <= uLu * (1 + 1e-9))
    pm = ir.principal_masses(arm, q)
    assert m_u.min() == pytest.approx(pm.masses[0], rel=1e-5)
    assert m_u.max() == pytest.approx(pm.masses[1], rel=1e-5)
    assert m_u.min() >= pm.masses[0] * (1 - 1e-9)
    assert m_u.max() <= pm.masses[1] * (1 + 1e-9)
    # along the principal directions the effective mass is exactly the
    # principal mass, and d is an eigenvector of Lambda in W
    d = np.asarray(pm.directions)
    np.testing.assert_allclose(np.linalg.norm(d, axis=0), 1.0, rtol=1e-12)
    for j in range(2):
        assert ir.mass_along(arm, q, d[:, j]) == pytest.approx(pm.masses[j],
                                                               rel=1e-9)
        np.testing.assert_allclose(Lam @ d[:2, j], pm.masses[j] * d[:2, j],
                                   rtol=1e-8, atol=1e-9)


def test_mass_along_rejects_direction_outside_task_plane():
    # arm-model.md "Arguments": u must be unit and in the task span.
    arm = planar_2r(CASE_A)
    q = np.array([0.3, 1.0])
    with pytest.raises(ValueError, match=r"(?i)(unit|span|task|plane)"):
        ir.mass_along(arm, q, np.array([0.0, 0.0, 1.0]))
    with pytest.raises(ValueError, match=r"(?i)(unit|norm|length)"):
        ir.mass_along(arm, q, np.array([2.0, 0.0, 0.0]))


@pytest.mark.parametrize("m_L", [0.5, 2.0])
def test_payload_identity(m_L):
    # references.md item 4 [D] (Woodbury identity): a point payload m_L at
    # the tool point adds exactly m_L I to Lambda; via tool.payload_kg and
    # via ir.planar_chain(payload_kg=...).
    q = np.random.default_rng(4).uniform(-np.pi, np.pi, size=(30, 2))
    q = q[np.abs(np.sin(q[:, 1])) > 0.2][:12]
    for base, loaded in [
        (planar_2r(CASE_A), planar_2r(CASE_A, payload_kg=m_L)),
        (ir.planar_chain([1.0, 0.8], [2.0, 1.0]),
         ir.planar_chain([1.0, 0.8], [2.0, 1.0], payload_kg=m_L)),
    ]:
        dL = ir.apparent_mass(loaded, q) - ir.apparent_mass(base, q)
        np.testing.assert_allclose(dL, np.broadcast_to(m_L * np.eye(2), dL.shape),
                                   rtol=0, atol=1e-9)


def test_reflected_rotor_check_case():
    # references.md item 4 [D]: Case A at (0, pi/2), n = 100, J_m = 1e-4 on
    # joint 1 -> M11 = 1.88 + 1 = 2.88 and Lambda = diag(1/3, 8/3); via the
    # design dict and via ir.planar_chain(gear_ratio=, rotor_inertia_kgm2=).
    q = np.array([0.0, np.pi / 2])
    arms = [
        planar_2r(CASE_A, rotor=(0, 100.0, 1.0e-4)),
        ir.planar_chain([1.0, 0.8], [2.0, 1.0], gear_ratio=[100.0, 1.0],
                        rotor_inertia_kgm2=[1.0e-4, 0.0],
                        peak_torque_Nm=[100.0, 100.0],
                        continuous_torque_Nm=[50.0, 50.0]),
    ]
    for arm in arms:
        M = arm.mass_matrix(q)
        np.testing.assert_allclose(M, [[2.88, 0.64 / 3], [0.64 / 3, 0.64 / 3]],
                                   rtol=1e-12)
        pm = ir.principal_masses(arm, q)
        np.testing.assert_allclose(pm.masses, [1 / 3, 8 / 3], rtol=1e-12)
        assert ir.mass_ratio(arm, q) == pytest.approx(0.125, rel=1e-12)
    np.testing.assert_allclose(lambda_xy(arms[0], ir.apparent_mass(arms[0], q)),
                               np.diag([1 / 3, 8 / 3]), rtol=1e-12, atol=1e-13)


@pytest.mark.parametrize("case", CASES)
def test_singular_configuration_behaviour(case):
    # arm-model.md "Singularities" and references.md item 4 [D]: at q2 = 0 or
    # pi the mass along link 2 is unbounded: principal_masses -> inf,
    # mass_ratio 0, isotropy 0, apparent_mass all NaN, no exception; regular
    # poses in the same batch stay finite.
    p = CASES[case]
    arm = planar_2r(p)
    q = np.array([[0.3, 0.0], [0.3, np.pi / 2], [-1.0, np.pi], [0.3, 1.0]])
    singular = np.array([True, False, True, False])
    Lam = ir.apparent_mass(arm, q)
    assert Lam.shape == (4, 2, 2)
    assert np.all(np.isnan(Lam[singular]))
    assert np.all(np.isfinite(Lam[~singular]))
    pm = ir.principal_masses(arm, q)
    assert np.all(np.isinf(pm.masses[singular, 1]))
    assert np.all(np.isfinite(pm.masses[:, 0]))
    np.testing.assert_array_equal(ir.mass_ratio(arm, q)[singular], 0.0)
    np.testing.assert_array_equal(ir.isotropy_index(arm, q)[singular], 0.0)
    assert np.all(ir.mass_ratio(arm, q)[~singular] > 0.0)
    # the bounded principal mass at the stretched pose: the mass felt across
    # the straight arm, 1 / (u^T J M^-1 J^T u) with the closed forms [D]
    q0 = q[0]
    u_perp = np.array([-np.sin(q0[0]), np.cos(q0[0])])
    J = jacobian_formula(q0, p["l1"], p["l2"])
    W = J @ np.linalg.solve(mass_matrix_formula(q0, p), J.T)
    m_perp = 1.0 / (u_perp @ W @ u_perp)
    assert pm.masses[0, 0] == pytest.approx(m_perp, rel=1e-9)
    assert ir.mass_along(arm, q0, np.array([*u_perp, 0.0])) == pytest.approx(
        m_perp, rel=1e-9)
    if case == "B":
        # point masses: across the straight arm only m2 is felt (limit of
        # the closed form's m2 eigenvalue) [D]
        assert m_perp == pytest.approx(1.0, rel=1e-12)


def test_near_singular_mask():
    # arm-model.md: near_singular = isotropy_index < threshold; expected mask
    # from the numpy SVD of the closed-form Jacobian (Salisbury & Craig
    # condition number [S], via Boschetti et al. 2011).
    arm = planar_2r(CASE_A)
    q2 = np.array([0.0, 1e-4, 3e-3, 0.2, 0.5, np.pi / 2, np.pi - 1e-3, np.pi])
    q = np.stack([np.full_like(q2, 0.7), q2], -1)
    iso = isotropy_formula(q, 1.0, 0.8)
    iso[[0, -1]] = 0.0
    assert np.all(np.abs(iso - 0.01) > 2e-3)  # no case sits on the threshold
    mask = ir.near_singular(arm, q)
    assert mask.dtype == bool
    np.testing.assert_array_equal(mask, iso < 0.01)
    assert mask.any() and not mask.all()
    np.testing.assert_array_equal(ir.near_singular(arm, q, threshold=0.2),
                                  iso < 0.2)


# ==========================================================================
# acceleration capability and torque headroom (references.md item 4) [D]
# ==========================================================================
def _accel_oracle(q, p, u2, tau, hold_gravity):
    """a_max(u) = min_i over joints, d = J^T Lambda u (references.md item 4)."""
    J = jacobian_formula(q, p["l1"], p["l2"])
    d = J.T @ lambda_formula(q, p) @ u2
    g = gravity_formula(q, p) if hold_gravity else np.zeros(2)
    out = []
    for i in range(2):
        if d[i] > 1e-12:
            out.append((tau[i] - g[i]) / d[i])
        elif d[i] < -1e-12:
            out.append((-tau[i] - g[i]) / d[i])
    return max(min(out), 0.0)


def _row_norms(q, p):
    """||row_j(J^T Lambda)||: torque per unit tool acceleration, worst u."""
    J = jacobian_formula(q, p["l1"], p["l2"])
    return np.linalg.norm(J.T @ lambda_formula(q, p), axis=-1)


@pytest.mark.parametrize("q, u, hold, expected", [
    ((0.0, np.pi / 2), (1, 0), False, 37.5),
    ((0.0, np.pi / 2), (1, 0), True, 37.5),
    ((0.0, np.pi / 2), (0, 1), False, 24.0),
    ((0.0, np.pi / 2), (0, 1), True, 12.23202),
    ((0.0, np.pi / 2), (0, -1), False, 24.0),
    ((0.0, np.pi / 2), (0, -1), True, 35.76798),
    ((0.0, np.pi / 2), (-1, 0), True, 37.5),
    ((np.pi / 4, np.pi / 6), (0, 1), False, 13.79562593),
    ((np.pi / 4, np.pi / 6), (0, 1), True, 8.66228851),
])
def test_acceleration_along_check_values(q, u, hold, expected):
    # references.md item 4 "Acceleration capability" [D], Case A,
    # tau_max = (40, 10) N m, gravity along -y.
    arm = planar_2r(CASE_A, ratings=[(40.0, 30.0), (10.0, 8.0)])
    a = ir.acceleration_along(arm, np.array(q), np.array([*u, 0.0], float),
                              hold_gravity=hold)
    assert a == pytest.approx(expected, rel=1e-9)


def test_acceleration_along_random_directions():
    # references.md item 4 formula [D] evaluated with numpy from the closed
    # forms, Case A, tau_max = (40, 10), random poses and directions, batch.
    p = CASE_A
    arm = planar_2r(p, ratings=[(40.0, 30.0), (10.0, 8.0)])
    rng = np.random.default_rng(1995)
    q = rng.uniform(-np.pi, np.pi, size=(40, 2))
    q = q[np.abs(np.sin(q[:, 1])) > 0.2][:15]
    ang = rng.uniform(0, 2 * np.pi, size=len(q))
    u = unit_xy(ang)
    for hold in (True, False):
        a = ir.acceleration_along(arm, q, u, hold_gravity=hold)
        assert a.shape == (len(q),)
        expected = [_accel_oracle(qi, p, ui[:2], TAU_MAX, hold)
                    for qi, ui in zip(q, u)]
        np.testing.assert_allclose(a, expected, rtol=1e-9, atol=1e-9)


@pytest.mark.parametrize("q", [(0.0, np.pi / 2), (np.pi / 4, np.pi / 6),
                               (-0.5, 2.2), (2.6, 0.4), (np.pi - 0.3, -1.1)])
def test_acceleration_capability(q):
    # min over all task directions of acceleration_along with gravity held:
    # closed form min_j (tau_j - |G_j|) / ||row_j(J^T Lambda)|| [D], and the
    # minimum of the core's own acceleration_along over a fine direction
    # grid (consistency).
    p = CASE_A
    arm = planar_2r(p, ratings=[(40.0, 30.0), (10.0, 8.0)])
    q = np.array(q)
    expected = np.min((np.array(TAU_MAX) - np.abs(gravity_formula(q, p)))
                      / _row_norms(q, p))
    cap = ir.acceleration_capability(arm, q)
    assert cap == pytest.approx(expected, rel=1e-9)
    ang = np.linspace(0, 2 * np.pi, 3601)
    grid = ir.acceleration_along(arm, q, unit_xy(ang), hold_gravity=True)
    assert grid.min() == pytest.approx(cap, rel=1e-4)
    assert grid.min() >= cap * (1 - 1e-9)


def test_acceleration_capability_check_value_case_a():
    # Case A at (0, pi/2), tau_max = (40, 10), computed by hand [D]:
    # Lambda = diag(1/3, 5/3), J^T Lambda rows: (-0.8/3, 5/3), (-0.8/3, 0);
    # joint 1 limits: (40 - 19.6133) / sqrt(0.64/9 + 25/9) = 12.0783936 m/s^2.
    arm = planar_2r(CASE_A, ratings=[(40.0, 30.0), (10.0, 8.0)])
    expected = (40.0 - 2 * G_N) / np.sqrt(0.64 / 9 + 25 / 9)
    assert expected == pytest.approx(12.0783936, rel=1e-8)
    assert ir.acceleration_capability(arm, np.array([0.0, np.pi / 2])) == \
        pytest.approx(expected, rel=1e-9)


def test_acceleration_zero_where_arm_cannot_hold_itself():
    # tau_max1 = 20 N m < |G1| = 23.53596 N m at (0, 0): no acceleration is
    # possible from rest in any direction (references.md item 4 [D]).
    # The mirror pose (pi, 0) needs G1 = -23.53596 N m: it cannot hold either.
    arm = planar_2r(CASE_A, ratings=[(20.0, 15.0), (10.0, 8.0)])
    q = np.array([[0.0, 0.0], [0.0, 0.3], [0.0, np.pi / 2], [np.pi, 0.0],
                  [np.pi, -np.pi / 2]])
    cap = ir.acceleration_capability(arm, q)
    assert cap.shape == (5,)
    # |G1| = 23.36 N m at (0, 0.3) (still cannot hold), 19.6133 N m at
    # (0, pi/2) and (pi, -pi/2) (can); |G2| <= 3.93 N m < 10 N m everywhere
    # (Spong 2006 ch. 7 [M]).
    G1 = np.abs(gravity_formula(q, CASE_A)[:, 0])
    np.testing.assert_array_equal(cap == 0.0, G1 >= 20.0)
    np.testing.assert_array_equal(cap == 0.0, [True, True, False, True, False])
    assert cap[2] > 0.0 and cap[4] > 0.0
    # and in that pose no direction can be accelerated (gravity held)
    u = unit_xy(np.linspace(0.0, 2 * np.pi, 13))
    np.testing.assert_array_equal(
        ir.acceleration_along(arm, q[3], u, hold_gravity=True), 0.0)


def test_torque_headroom_at_rest_check_values():
    # references.md item 4 [D]: Case A at (0, 0), tau_max = (40, 10):
    # headroom (16.46404, 6.07734) N m, utilisation (0.588399, 0.392266);
    # static torques = |G| = (23.53596, 3.92266) (item 1); static utilisation
    # against the invented continuous ratings (30, 8).
    for arm in (planar_2r(CASE_A, ratings=[(40.0, 30.0), (10.0, 8.0)]),
                ir.planar_chain([1.0, 0.8], [2.0, 1.0],
                                peak_torque_Nm=[40.0, 10.0],
                                continuous_torque_Nm=[30.0, 8.0])):
        th = ir.torque_headroom(arm, np.zeros(2))
        np.testing.assert_allclose(th.static_torque_Nm, [23.53596, 3.92266],
                                   rtol=1e-12)
        np.testing.assert_allclose(th.worst_torque_Nm, [23.53596, 3.92266],
                                   rtol=1e-12)
        np.testing.assert_allclose(th.headroom_Nm, [16.46404, 6.07734],
                                   rtol=1e-12)
        np.testing.assert_allclose(th.utilisation, [0.588399, 0.392266],
                                   rtol=1e-12)
        np.testing.assert_allclose(th.static_utilisation,
                                   [23.53596 / 30.0, 3.92266 / 8.0], rtol=1e-12)
        assert th.min_margin == pytest.approx(1 - 0.588399, rel=1e-12)
        assert int(th.limiting_joint) == 0


def test_torque_headroom_with_acceleration():
    # worst torque over all unit task directions at accel a:
    # |G_j| + a ||row_j(J^T Lambda)|| (closed forms, [D]); it bounds
    # |G + a J^T Lambda u| for every sampled u and is reached on the grid.
    p = CASE_A
    arm = planar_2r(p, ratings=[(40.0, 30.0), (10.0, 8.0)])
    q = np.array([[np.pi / 4, np.pi / 6], [0.0, np.pi / 2], [-0.4, -2.0]])
    a = 5.0
    th = ir.torque_headroom(arm, q, accel_mps2=a)
    G = gravity_formula(q, p)
    worst = np.abs(G) + a * np.stack([_row_norms(qi, p) for qi in q])
    np.testing.assert_allclose(th.worst_torque_Nm, worst, rtol=1e-9)
    np.testing.assert_allclose(th.static_torque_Nm, np.abs(G), rtol=1e-9,
                               atol=1e-12)
    np.testing.assert_allclose(th.utilisation, worst / np.array(TAU_MAX),
                               rtol=1e-9)
    np.testing.assert_allclose(th.headroom_Nm, np.array(TAU_MAX) - worst,
                               rtol=1e-9, atol=1e-9)
    margin = 1 - worst / np.array(TAU_MAX)
    np.testing.assert_allclose(th.min_margin, margin.min(axis=-1), rtol=1e-9)
    np.testing.assert_array_equal(th.limiting_joint, margin.argmin(axis=-1))
    ang = np.linspace(0, 2 * np.pi, 3601)
    u2 = unit_xy(ang)[:, :2]
    for i, qi in enumerate(q):
        JtL = jacobian_formula(qi, p["l1"], p["l2"]).T @ lambda_formula(qi, p)
        tau = np.abs(G[i] + a * u2 @ JtL.T)
        assert np.all(tau.max(axis=0) <= th.worst_torque_Nm[i] * (1 + 1e-9))
        np.testing.assert_allclose(tau.max(axis=0), th.worst_torque_Nm[i],
                                   rtol=1e-5)


def test_torque_headroom_unrated_joint_is_skipped():
    # arm-model.md / headroom contract: an unrated joint gives NaN in the
    # rating-based arrays and is skipped in min_margin and limiting_joint.
    arm = planar_2r(CASE_A, ratings=[None, (10.0, 8.0)])
    th = ir.torque_headroom(arm, np.zeros(2))
    assert np.isnan(th.utilisation[0]) and np.isnan(th.headroom_Nm[0])
    assert np.isnan(th.static_utilisation[0])
    assert th.utilisation[1] == pytest.approx(0.392266, rel=1e-12)
    assert th.min_margin == pytest.approx(1 - 0.392266, rel=1e-12)
    assert int(th.limiting_joint) == 1


def test_torque_headroom_without_any_rating_raises():
    # contract: a design with no rated joint raises ValueError.
    arm = planar_2r(CASE_A)
    with pytest.raises(ValueError, match=r"(?i)(rat|actuator|torque)"):
        ir.torque_headroom(arm, np.zeros(2))
