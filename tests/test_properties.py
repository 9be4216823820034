"""Property tests of the dynamics core on random valid arms (tests/strategies.py).

Every identity names its source.  The reference quantities (link frames,
kinetic and potential energy) come from the independent model in
``strategies.py``, written from the conventions of arm-model.md; none of
them reuses the core's mass matrix.  The arms are random invented data.
"""

from __future__ import annotations

import copy
import math

import numpy as np
from hypothesis import HealthCheck, assume, given, settings
from hypothesis import strategies as st
from scipy.spatial.transform import Rotation

import inertia_review as ir

try:  # tests/ may or may not be a package
    from . import strategies as S
except ImportError:
    import strategies as S

PROP = settings(max_examples=30, deadline=None, suppress_health_check=[HealthCheck.too_slow])


def draw_vec(data, n, lo=-math.pi, hi=math.pi):
    return np.array(data.draw(st.lists(st.floats(lo, hi, allow_nan=False, allow_subnormal=False),
                                       min_size=n, max_size=n)))


def dM_dq(arm, q, h=1e-5):
    """Central differences of the core's mass matrix: dM[i] = dM/dq_i, shape (n, n, n)."""
    n = arm.dof
    e = np.eye(n) * h
    plus = arm.mass_matrix(q + e)      # batched over i
    minus = arm.mass_matrix(q - e)
    return (plus - minus) / (2.0 * h)


def mdot(arm, q, qd, h=1e-5):
    """dM/dt = dM/dq . qd by a central difference along qd."""
    return (arm.mass_matrix(q + h * qd) - arm.mass_matrix(q - h * qd)) / (2.0 * h)


def close(a, b, tol):
    a, b = np.asarray(a), np.asarray(b)
    err = float(np.max(np.abs(a - b))) if a.size else 0.0
    assert err <= tol, f"max |a - b| = {err:.3e} > {tol:.3e}\na = {a}\nb = {b}"


# ---------------------------------------------------------------------------
# Kinematics against the reference model
# ---------------------------------------------------------------------------

@PROP
@given(design=S.designs(), data=st.data())
def test_tool_position_matches_reference_kinematics(design, data):
    # Forward kinematics written from arm-model.md's transform rules (independent).
    arm = ir.Arm.from_dict(design)
    q = draw_vec(data, arm.dof)
    close(arm.tool_position(q), S.tool_point(design, q), 1e-12)


@PROP
@given(design=S.designs(), data=st.data())
def test_jacobian_is_derivative_of_reference_kinematics(design, data):
    # Rows 0-2: d(tool point)/dq; rows 3-5: angular velocity of the last link
    # per unit joint rate (definition of the geometric Jacobian:
    # Spong, Hutchinson & Vidyasagar 2006, ch. 4 [M]),
    # by central differences of the reference model.
    arm = ir.Arm.from_dict(design)
    n = arm.dof
    q = draw_vec(data, n)
    jac = arm.jacobian(q)
    assert jac.shape == (6, n)
    h = 1e-6
    r0, _ = S.frames(design, q)[-1]
    for j in range(n):
        dq = np.zeros(n)
        dq[j] = h
        v = (S.tool_point(design, q + dq) - S.tool_point(design, q - dq)) / (2 * h)
        rp, _ = S.frames(design, q + dq)[-1]
        rm, _ = S.frames(design, q - dq)[-1]
        w_hat = ((rp - rm) / (2 * h)) @ r0.T
        w = np.array([w_hat[2, 1] - w_hat[1, 2], w_hat[0, 2] - w_hat[2, 0], w_hat[1, 0] - w_hat[0, 1]]) / 2
        close(jac[:3, j], v, 1e-8)
        close(jac[3:, j], w, 1e-8)


# ---------------------------------------------------------------------------
# Mass matrix
# ---------------------------------------------------------------------------

@PROP
@given(design=S.designs(), data=st.data())
def test_mass_matrix_symmetric_positive_definite(design, data):
    # M = sum of J_i^T diag(m, I) J_i terms plus positive rotor terms: SPD for a
    # valid design (Spong, Hutchinson & Vidyasagar 2006, ch. 7 [M]; arm-model.md).
    arm = ir.Arm.from_dict(design)
    q = draw_vec(data, arm.dof)
    m = arm.mass_matrix(q)
    scale = float(np.max(np.abs(m)))
    close(m, m.T, 1e-13 * scale)
    assert np.min(np.linalg.eigvalsh(m)) > 0.0


@PROP
@given(design=S.designs(), data=st.data())
def test_kinetic_energy_from_link_velocities(design, data):
    # 1/2 qd^T M qd = sum_bodies 1/2 m |v_c|^2 + 1/2 w^T I_W w + rotor terms
    # (Lagrangian mechanics, Koenig's theorem; Spong, Hutchinson & Vidyasagar
    # 2006, ch. 7 [M]).  Link velocities: central differences of the reference
    # kinematics, not the core's Jacobian or mass matrix.
    arm = ir.Arm.from_dict(design)
    n = arm.dof
    q = draw_vec(data, n)
    qd = draw_vec(data, n, -2.0, 2.0)
    t_core = 0.5 * qd @ arm.mass_matrix(q) @ qd
    t_ref = S.kinetic_energy(design, q, qd)
    assert math.isclose(t_core, t_ref, rel_tol=1e-7, abs_tol=1e-10), (t_core, t_ref)


@PROP
@given(design=S.designs(), data=st.data())
def test_mass_matrix_includes_reflected_rotor_inertia(design, data):
    # arm-model.md: N^2 J_m is added to M_ii (common practice, no source;
    # references.md item 4 [D]).  Removing every rotor changes M by exactly that diagonal.
    arm = ir.Arm.from_dict(design)
    bare = copy.deepcopy(design)
    for j in bare["joints"]:
        if j.get("actuator"):
            j["actuator"]["rotor_inertia_kgm2"] = 0.0
    arm0 = ir.Arm.from_dict(bare)
    q = draw_vec(data, arm.dof)
    diff = arm.mass_matrix(q) - arm0.mass_matrix(q)
    close(diff, np.diag(S.reflected_rotor_inertias(design)), 1e-12 * (1 + np.max(np.abs(arm.mass_matrix(q)))))


# ---------------------------------------------------------------------------
# Velocity torques: passivity, Christoffel symbols, skew symmetry
# ---------------------------------------------------------------------------

@PROP
@given(design=S.designs(), data=st.data())
def test_energy_balance_qd_mdot_qd(design, data):
    # qd^T (Mdot - 2C) qd = 0, i.e. qd . (Mdot qd) = 2 qd . C(q, qd) qd
    # (Lagrangian mechanics, skew-symmetry / passivity property: Spong,
    # Hutchinson & Vidyasagar 2006, ch. 7 [M]); dM/dt by central differences.
    arm = ir.Arm.from_dict(design)
    n = arm.dof
    q = draw_vec(data, n)
    qd = draw_vec(data, n, -2.0, 2.0)
    lhs = qd @ mdot(arm, q, qd) @ qd
    rhs = 2.0 * qd @ arm.velocity_torque(q, qd)
    scale = float(np.max(np.abs(arm.mass_matrix(q)))) * (1.0 + qd @ qd) ** 1.5
    assert abs(lhs - rhs) <= 1e-7 * scale, (lhs, rhs)


@PROP
@given(design=S.designs(), data=st.data())
def test_velocity_torque_equals_christoffel_form(design, data):
    # C_kj = sum_i 1/2 (dM_kj/dq_i + dM_ki/dq_j - dM_ij/dq_k) qd_i, Christoffel
    # symbols of the first kind (Spong, Hutchinson & Vidyasagar 2006, ch. 7 [M]),
    # from central differences of mass_matrix; C qd must equal velocity_torque.
    arm = ir.Arm.from_dict(design)
    n = arm.dof
    q = draw_vec(data, n)
    qd = draw_vec(data, n, -2.0, 2.0)
    d = dM_dq(arm, q)                            # d[i, k, j] = dM_kj / dq_i
    gamma = 0.5 * (np.einsum("ikj->kij", d) + np.einsum("jki->kij", d) - np.einsum("kij->kij", d))
    c = np.einsum("kij,i->kj", gamma, qd)
    scale = float(np.max(np.abs(arm.mass_matrix(q)))) * (1.0 + qd @ qd)
    close(c @ qd, arm.velocity_torque(q, qd), 1e-7 * scale)


@PROP
@given(design=S.designs(), data=st.data())
def test_mdot_minus_2c_is_skew_symmetric(design, data):
    # N = Mdot - 2C skew-symmetric for the Christoffel C (Spong, Hutchinson &
    # Vidyasagar 2006, ch. 7 [M]).  C is taken from velocity_torque itself by
    # polarisation of the quadratic form h(qd) = C(q, qd) qd:
    # C(q, qd) x = (h(qd + x) - h(qd - x)) / 4 (Christoffel symbols are symmetric
    # in i, j).  (Built from mass_matrix instead, the check would hold for any
    # symmetric M and could not fail; built this way it tests velocity_torque.)
    arm = ir.Arm.from_dict(design)
    n = arm.dof
    q = draw_vec(data, n)
    qd = draw_vec(data, n, -2.0, 2.0)
    e = np.eye(n)
    c = ((arm.velocity_torque(q, qd + e) - arm.velocity_torque(q, qd - e)) / 4.0).T   # column j = C e_j
    nmat = mdot(arm, q, qd) - 2.0 * c
    scale = float(np.max(np.abs(arm.mass_matrix(q)))) * (1.0 + qd @ qd)
    close(nmat + nmat.T, np.zeros((n, n)), 1e-7 * scale)


@PROP
@given(design=S.designs(), data=st.data())
def test_velocity_torque_is_quadratic_in_qd(design, data):
    # C(q, qd) qd is a quadratic form in qd (Lagrangian mechanics, Spong et al. 2006, ch. 7 [M]).
    arm = ir.Arm.from_dict(design)
    n = arm.dof
    q = draw_vec(data, n)
    qd = draw_vec(data, n, -2.0, 2.0)
    s = data.draw(st.floats(-3.0, 3.0, allow_nan=False))
    h = arm.velocity_torque(q, qd)
    close(arm.velocity_torque(q, s * qd), s * s * h, 1e-12 * (1 + np.max(np.abs(h))) * (1 + s * s))
    assert np.array_equal(arm.velocity_torque(q, np.zeros(n)), np.zeros(n))


@PROP
@given(design=S.designs(actuators=True), data=st.data())
def test_inverse_dynamics_is_sum_of_terms(design, data):
    # tau = M qdd + C qd + G (arm-model.md; Spong et al. 2006, ch. 7 [M]).
    arm = ir.Arm.from_dict(design)
    n = arm.dof
    q, qd, qdd = draw_vec(data, n), draw_vec(data, n, -2, 2), draw_vec(data, n, -5, 5)
    expected = arm.mass_matrix(q) @ qdd + arm.velocity_torque(q, qd) + arm.gravity_torque(q)
    close(arm.inverse_dynamics(q, qd, qdd), expected, 1e-12 * (1 + np.max(np.abs(expected))))


# ---------------------------------------------------------------------------
# Gravity
# ---------------------------------------------------------------------------

@PROP
@given(design=S.designs(gravity=True), data=st.data())
def test_gravity_torque_is_gradient_of_potential(design, data):
    # G = dV/dq with V = -sum m g . c (Lagrangian mechanics, Spong et al. 2006,
    # ch. 7 [M]); V from the reference model, derivative by central differences.
    arm = ir.Arm.from_dict(design)
    n = arm.dof
    q = draw_vec(data, n)
    np.testing.assert_array_equal(arm.gravity, S.gravity_of(design))
    h = 1e-6
    e = np.eye(n) * h
    g_ref = np.array([(S.potential_energy(design, q + e[i]) - S.potential_energy(design, q - e[i])) / (2 * h)
                      for i in range(n)])
    scale = S.total_mass(design) * max(1.0, float(np.linalg.norm(arm.gravity))) * 5.0
    close(arm.gravity_torque(q), g_ref, 1e-8 * scale)


def payload_only(design, payload_kg=1.5):
    """Same geometry, massless links, a point payload, and rotors to keep M regular."""
    d = copy.deepcopy(design)
    for j in d["joints"]:
        j["link"] = {"mass_kg": 0.0, "com_m": [0.0, 0.0, 0.0], "inertia_kgm2": [0.0] * 6}
        j["actuator"] = {"peak_torque_Nm": 100.0, "continuous_torque_Nm": 50.0,
                         "gear_ratio": 10.0, "rotor_inertia_kgm2": 1e-4}
    tool = d.setdefault("tool", {})
    tool["payload_kg"] = payload_kg
    tool.pop("payload_inertia_kgm2", None)
    return d


@PROP
@given(design=S.designs(gravity=True), data=st.data())
def test_gravity_torque_of_payload_from_tool_position(design, data):
    # Only mass: a payload m at the tool point, so V = -m g . p_tool(q) with
    # p_tool the core's own tool_position (Lagrangian mechanics [M]); G = dV/dq.
    d = payload_only(design)
    arm = ir.Arm.from_dict(d)
    n = arm.dof
    q = draw_vec(data, n)
    g = arm.gravity
    h = 1e-6
    e = np.eye(n) * h
    v_plus = -1.5 * arm.tool_position(q + e) @ g      # batched over the n shifts
    v_minus = -1.5 * arm.tool_position(q - e) @ g
    g_ref = (v_plus - v_minus) / (2 * h)
    close(arm.gravity_torque(q), g_ref, 1e-8 * 1.5 * max(1.0, float(np.linalg.norm(g))) * 5.0)
    # and the same payload through J^T: G = -J_v^T m g (principle of virtual work [M])
    close(arm.gravity_torque(q), -1.5 * arm.jacobian(q)[:3].T @ g, 1e-12 * 100)


def _wrap_deg(a):
    return (a + 180.0) % 360.0 - 180.0


@PROP
@given(design=S.designs(), data=st.data())
def test_mount_yaw_about_gravity_leaves_dynamics_unchanged(design, data):
    # Turning the base about the (vertical) gravity axis and moving it changes no
    # joint-space dynamics (invariance of rigid-body mechanics under rotation
    # about the gravity axis and translation; common practice, no source).
    arm = ir.Arm.from_dict(design)
    n = arm.dof
    delta = data.draw(st.floats(-170.0, 170.0, allow_nan=False))
    shift = draw_vec(data, 3, -1.0, 1.0)
    moved = copy.deepcopy(design)
    mount = moved.setdefault("mount", {})
    rpy = list(mount.get("rpy_deg", [0.0, 0.0, 0.0]))
    rpy[2] = _wrap_deg(rpy[2] + delta)
    mount["rpy_deg"] = rpy
    t_old = np.array(mount.get("xyz_m", [0.0, 0.0, 0.0]), dtype=float)
    mount["xyz_m"] = list(map(float, t_old + shift))
    arm2 = ir.Arm.from_dict(moved)
    q = draw_vec(data, n)
    qd = draw_vec(data, n, -2, 2)
    m1, m2 = arm.mass_matrix(q), arm2.mass_matrix(q)
    close(m2, m1, 1e-11 * (1 + np.max(np.abs(m1))))
    g1 = arm.gravity_torque(q)
    close(arm2.gravity_torque(q), g1, 1e-11 * (1 + np.max(np.abs(g1))))
    v1 = arm.velocity_torque(q, qd)
    close(arm2.velocity_torque(q, qd), v1, 1e-11 * (1 + np.max(np.abs(v1))))
    rz = S.rot_z(math.radians(delta))
    close(arm2.tool_position(q), t_old + shift + rz @ (arm.tool_position(q) - t_old), 1e-11)


@PROP
@given(design=S.designs(), data=st.data())
def test_rotating_mount_and_gravity_together_changes_nothing(design, data):
    # Rotating the whole installation (mount and gravity vector) by the same R
    # leaves M, G, C qd unchanged and rotates the tool point and Jacobian
    # (frame invariance of rigid-body mechanics; common practice, no source).
    # Mount angles re-expressed with scipy's extrinsic 'xyz' Euler angles (= R_z R_y R_x).
    arm = ir.Arm.from_dict(design)
    n = arm.dof
    rd = S.rot_rpy_deg(draw_vec(data, 3, -180.0, 180.0))
    moved = copy.deepcopy(design)
    mount = moved.setdefault("mount", {})
    r_old = S.rot_rpy_deg(mount.get("rpy_deg", [0.0, 0.0, 0.0]))
    t_old = np.array(mount.get("xyz_m", [0.0, 0.0, 0.0]), dtype=float)
    mount["rpy_deg"] = list(map(float, Rotation.from_matrix(rd @ r_old).as_euler("xyz", degrees=True)))
    mount["xyz_m"] = list(map(float, rd @ t_old))
    mount["gravity_mps2"] = list(map(float, rd @ S.gravity_of(design)))
    arm2 = ir.Arm.from_dict(moved)
    q = draw_vec(data, n)
    qd = draw_vec(data, n, -2, 2)
    m1 = arm.mass_matrix(q)
    close(arm2.mass_matrix(q), m1, 1e-10 * (1 + np.max(np.abs(m1))))
    g1 = arm.gravity_torque(q)
    close(arm2.gravity_torque(q), g1, 1e-10 * (1 + np.max(np.abs(g1))))
    v1 = arm.velocity_torque(q, qd)
    close(arm2.velocity_torque(q, qd), v1, 1e-10 * (1 + np.max(np.abs(v1))))
    close(arm2.tool_position(q), rd @ arm.tool_position(q), 1e-10)
    jac1 = arm.jacobian(q)
    close(arm2.jacobian(q)[:3], rd @ jac1[:3], 1e-10)
    close(arm2.jacobian(q)[3:], rd @ jac1[3:], 1e-10)


# ---------------------------------------------------------------------------
# Operational-space (apparent) mass
# ---------------------------------------------------------------------------

def _task_jacobian(arm, q):
    return arm.task_axes @ arm.jacobian(q)[:3]


def _check_square_lambda(arm, q):
    jt = _task_jacobian(arm, q)
    assert jt.shape[0] == jt.shape[1]
    assume(np.linalg.cond(jt) < 1e3)
    m = arm.mass_matrix(q)
    # Inverting the mobility matrix loses about eps * cond digits in either
    # form; keep to poses where 1e-8 relative is a fair demand (numerical
    # analysis, e.g. Golub & Van Loan, Matrix Computations, ch. 2 [M]).
    assume(np.linalg.cond(jt @ np.linalg.solve(m, jt.T)) < 1e6)
    jinv = np.linalg.inv(jt)
    lam_a = jinv.T @ m @ jinv                          # Khatib 1987, eq. 18 (non-redundant) [S]
    lam_b = np.linalg.inv(jt @ np.linalg.solve(m, jt.T))   # Khatib 1987, eqs. 51-52 form [S]
    lam = ir.apparent_mass(arm, q)
    scale = float(np.max(np.abs(lam_a)))
    close(lam_a, lam_b, 1e-8 * scale)
    close(lam, lam_a, 1e-8 * scale)
    close(lam, lam.T, 1e-12 * scale)


@PROP
@given(design=S.planar_designs(min_joints=2, max_joints=2), data=st.data())
def test_apparent_mass_square_planar_2r(design, data):
    # Lambda = J^-T M J^-1 = (J M^-1 J^T)^-1 for a square task Jacobian
    # (Khatib 1987, operational-space formulation; references.md item 4 [S], summary only).
    arm = ir.Arm.from_dict(design)
    assert arm.task_axes.shape == (2, 3)
    _check_square_lambda(arm, draw_vec(data, 2))


@PROP
@given(design=S.designs(min_joints=3, max_joints=3), data=st.data())
def test_apparent_mass_square_spatial_3_joint(design, data):
    # Same identity, spatial 3-joint arms (task axes identity, k = 3).
    arm = ir.Arm.from_dict(design)
    assume(arm.task_axes.shape[0] == 3)
    _check_square_lambda(arm, draw_vec(data, 3))


def _regular_pose(design, data):
    """An arm with at least k joints at a drawn pose whose task Jacobian is well conditioned:
    (arm, k, q, J_t, singular values of J_t, M)."""
    arm = ir.Arm.from_dict(design)
    k = arm.task_axes.shape[0]
    assume(arm.dof >= k)
    q = draw_vec(data, arm.dof)
    jt = _task_jacobian(arm, q)
    s = np.linalg.svd(jt, compute_uv=False)
    assume(s[-1] > 1e-2 * s[0])
    return arm, k, q, jt, s, arm.mass_matrix(q)


@PROP
@given(design=S.designs(min_joints=2), data=st.data())
def test_payload_adds_its_mass_to_apparent_mass(design, data):
    # A point payload m_L at the tool point adds exactly m_L I to Lambda
    # (Woodbury identity [D], references.md item 4), valid when the tool-point
    # velocity lies in the task span (default task axes) and Lambda is regular.
    arm, k, q, jt, s, m = _regular_pose(design, data)
    assume(np.linalg.cond(jt @ np.linalg.solve(m, jt.T)) < 1e6)   # see _check_square_lambda
    extra = data.draw(st.floats(0.1, 3.0))
    heavier = copy.deepcopy(design)
    tool = heavier.setdefault("tool", {})
    tool["payload_kg"] = tool.get("payload_kg", 0.0) + extra
    lam0 = ir.apparent_mass(arm, q)
    lam1 = ir.apparent_mass(ir.Arm.from_dict(heavier), q)
    close(lam1 - lam0, extra * np.eye(k), 1e-7 * (1 + float(np.max(np.abs(lam1)))))


@PROP
@given(design=S.designs(min_joints=2), data=st.data())
def test_metrics_agree_with_their_definitions(design, data):
    # principal masses = eigenvalues of Lambda (Khatib 1995 effective mass [S]);
    # mass along u = 1/(u^T A J_v M^-1 J_v^T A^T u) (Khatib 1995 [M formula]);
    # isotropy = sigma_min/sigma_max of A J_v (Salisbury & Craig 1982 [C citation]; the
    # condition number as their measure [S], via Boschetti et al. 2011);
    # manipulability = sqrt(det(Jt Jt^T)) (Yoshikawa 1985 [C citation, M formula]).
    arm, k, q, jt, s, m = _regular_pose(design, data)
    mob = jt @ np.linalg.solve(m, jt.T)
    assume(np.linalg.cond(mob) < 1e6)                               # see _check_square_lambda
    lam = np.linalg.inv(mob)
    pm = ir.principal_masses(arm, q)
    ev = np.linalg.eigvalsh(lam)
    close(pm.masses, ev, 1e-8 * ev[-1])
    dirs = pm.directions
    assert dirs.shape == (3, k)
    close(np.linalg.norm(dirs, axis=0), np.ones(k), 1e-12)
    # each direction is an eigenvector: the mass felt along it is its principal mass
    for i in range(k):
        u_task = arm.task_axes @ dirs[:, i]
        close(1.0 / (u_task @ mob @ u_task), ev[i], 1e-7 * ev[-1])
        close(ir.mass_along(arm, q, dirs[:, i]), ev[i], 1e-7 * ev[-1])
    w = data.draw(st.lists(st.floats(-1, 1), min_size=k, max_size=k).filter(lambda v: np.linalg.norm(v) > 0.1))
    u = arm.task_axes.T @ (np.array(w) / np.linalg.norm(w))
    u = u / np.linalg.norm(u)
    ut = arm.task_axes @ u
    m_u = ir.mass_along(arm, q, u)
    close(m_u, 1.0 / (ut @ mob @ ut), 1e-8 * ev[-1])
    assert ev[0] * (1 - 1e-9) <= m_u <= ev[-1] * (1 + 1e-9)
    close(ir.mass_ratio(arm, q), ev[0] / ev[-1], 1e-8)
    close(ir.isotropy_index(arm, q), s[-1] / s[0], 1e-10)
    close(ir.manipulability(arm, q), math.sqrt(np.linalg.det(jt @ jt.T)), 1e-9 * (1 + np.prod(s)))
