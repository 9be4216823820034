"""The dynamics core against an independent symbolic Lagrangian reference.

The reference (``tests/sympy_reference.py``) derives forward kinematics, kinetic
and potential energy and Lagrange's equations with sympy from the design dict
alone; it never imports inertia_review. Every package result here is compared
with it to 1e-9 relative on

(a) a planar two-joint arm in a vertical plane (gravity in the plane);
(b) a spatial three-joint arm on a tilted, offset mount with rotated joint
    frames, oblique joint axes, full link inertia tensors, point masses, a
    payload with its own inertia and geared rotors (and tube links in a
    variant);
(c) seeded random arms of 1 to 6 joints that no hand-written test has seen;
(d) a gravity override (``mount.gravity_mps2``).

A second group checks the reference itself against outside values (textbook
two-link closed forms, handbook tube values, scipy's rotation convention) and
against finite-difference identities, so that agreement with the package means
something. All designs are invented test data.
"""

import zlib

import numpy as np
import pytest
from scipy.spatial.transform import Rotation

import inertia_review as ir

try:  # tests/ may or may not be a package
    from . import sympy_reference as ref
except ImportError:
    import sympy_reference as ref

RTOL = 1e-9
ATOL_FRACTION = 1e-11  # absolute tolerance as a fraction of the largest reference entry


def assert_matches(got, want, scale=None):
    """rtol 1e-9, plus an atol of 1e-11 times a scale (default: the largest reference entry).

    Torques pass the case's torque scale: a term that vanishes identically (C qd of a
    one-joint arm, G about a vertical axis) is then compared at the round-off of the
    torques it is added to, not at its own round-off.
    """
    want = np.asarray(want, dtype=float)
    got = np.asarray(got)
    assert got.shape == want.shape, f"shape {got.shape} != reference shape {want.shape}"
    if scale is None:
        scale = float(np.max(np.abs(want))) if want.size else 0.0
    np.testing.assert_allclose(got, want, rtol=RTOL, atol=ATOL_FRACTION * scale)


def inertia_entries(rotation, moments):
    """R diag(a, b, c) R^T as [Ixx, Iyy, Izz, Ixy, Ixz, Iyz] (tensor entries)."""
    tensor = rotation @ np.diag(moments) @ rotation.T
    return [float(tensor[0, 0]), float(tensor[1, 1]), float(tensor[2, 2]),
            float(tensor[0, 1]), float(tensor[0, 2]), float(tensor[1, 2])]


def triangle_moments(sx, sy, sz):
    """Principal moments (sy+sz, sx+sz, sx+sy): they meet the triangle inequality by construction."""
    return [sy + sz, sx + sz, sx + sy]


def rod(mass, length):
    """Slender rod along x: m l^2 / 12 transverse, 0 axial (about its COM)."""
    i = mass * length**2 / 12.0
    return [0.0, i, i, 0.0, 0.0, 0.0]


# ---------------------------------------------------------------------------
# designs (invented)
# ---------------------------------------------------------------------------
def planar_two_vertical():
    """(a) Two joints about -y: the arm moves in the vertical x-z plane, q1 from +x towards +z."""
    return {
        "name": "ref_planar_two", "format": 1,
        "joints": [
            {"name": "shoulder", "axis": [0.0, -1.0, 0.0],
             "link": {"mass_kg": 2.0, "com_m": [0.5, 0.0, 0.0], "inertia_kgm2": rod(2.0, 1.0),
                      "point_masses": [{"mass_kg": 0.7, "xyz_m": [1.0, 0.0, 0.0]}]},
             "actuator": {"peak_torque_Nm": 60.0, "continuous_torque_Nm": 25.0,
                          "gear_ratio": 100.0, "rotor_inertia_kgm2": 2.0e-5}},
            {"name": "elbow", "xyz_m": [1.0, 0.0, 0.0], "axis": [0.0, -1.0, 0.0],
             "link": {"mass_kg": 1.0, "com_m": [0.4, 0.0, 0.0], "inertia_kgm2": rod(1.0, 0.8)},
             "actuator": {"peak_torque_Nm": 20.0, "continuous_torque_Nm": 8.0,
                          "gear_ratio": 80.0, "rotor_inertia_kgm2": 1.0e-5}},
        ],
        "tool": {"xyz_m": [0.8, 0.0, 0.0], "payload_kg": 0.4},
    }


def tilted_spatial_three():
    """(b) Tilted, offset mount; rotated joint frames; oblique axes; full inertia tensors."""
    rot_a = Rotation.from_euler("xyz", [20.0, -35.0, 50.0], degrees=True).as_matrix()
    rot_b = Rotation.from_euler("zyx", [-70.0, 15.0, 40.0], degrees=True).as_matrix()
    rot_c = Rotation.from_euler("xzy", [110.0, 25.0, -60.0], degrees=True).as_matrix()
    rot_p = Rotation.from_euler("yxz", [30.0, -20.0, 75.0], degrees=True).as_matrix()
    return {
        "name": "ref_tilted_three", "format": 1,
        "mount": {"xyz_m": [0.35, -0.2, 1.15], "rpy_deg": [25.0, -40.0, 70.0]},
        "joints": [
            {"name": "base_yaw", "xyz_m": [0.02, -0.01, 0.12], "rpy_deg": [5.0, -3.0, 12.0],
             "axis": [0.15, -0.1, 1.0],
             "link": {"mass_kg": 3.2, "com_m": [0.03, 0.01, 0.09],
                      "inertia_kgm2": inertia_entries(rot_a, triangle_moments(0.004, 0.007, 0.002)),
                      "point_masses": [{"mass_kg": 0.9, "xyz_m": [0.05, 0.0, 0.16]}]},
             "actuator": {"peak_torque_Nm": 80.0, "continuous_torque_Nm": 30.0,
                          "gear_ratio": 120.0, "rotor_inertia_kgm2": 1.5e-5}},
            {"name": "shoulder", "xyz_m": [0.04, 0.03, 0.18], "rpy_deg": [-80.0, 10.0, 30.0],
             "axis": [1.0, -0.4, 0.25],
             "link": {"mass_kg": 2.1, "com_m": [0.18, 0.02, -0.015],
                      "inertia_kgm2": inertia_entries(rot_b, triangle_moments(0.0008, 0.011, 0.009)),
                      "point_masses": [{"mass_kg": 0.6, "xyz_m": [0.38, 0.0, 0.02]},
                                       {"mass_kg": 0.15, "xyz_m": [0.2, -0.03, 0.04]}]},
             "actuator": {"peak_torque_Nm": 60.0, "continuous_torque_Nm": 22.0,
                          "gear_ratio": 100.0, "rotor_inertia_kgm2": 1.2e-5}},
            {"name": "elbow", "xyz_m": [0.38, 0.01, -0.02], "rpy_deg": [15.0, 65.0, -25.0],
             "axis": [-0.1, 0.8, 0.5],
             "link": {"mass_kg": 1.3, "com_m": [0.14, -0.01, 0.02],
                      "inertia_kgm2": inertia_entries(rot_c, triangle_moments(0.0005, 0.006, 0.0055))},
             "actuator": {"peak_torque_Nm": 25.0, "continuous_torque_Nm": 9.0,
                          "gear_ratio": 80.0, "rotor_inertia_kgm2": 8.0e-6}},
        ],
        "tool": {"xyz_m": [0.3, 0.02, -0.01], "payload_kg": 0.75,
                 "payload_inertia_kgm2": inertia_entries(rot_p, triangle_moments(2e-4, 5e-4, 3e-4))},
    }


def tilted_spatial_three_gravity_override():
    """(d) As (b), with an invented gravity vector that is not along any axis."""
    design = tilted_spatial_three()
    design["name"] = "ref_tilted_three_gravity"
    design["mount"]["gravity_mps2"] = [1.3, -2.1, -3.72]
    return design


def tube_links_two():
    """(b, variant) Tube links (one by material, one by density) on a tilted mount, oblique axes."""
    return {
        "name": "ref_tube_two", "format": 1,
        "mount": {"xyz_m": [0.0, 0.1, 0.5], "rpy_deg": [10.0, 20.0, -30.0]},
        "joints": [
            {"axis": [0.2, 0.1, 1.0], "rpy_deg": [0.0, -90.0, 0.0],
             "link": {"tube": {"length_m": 0.5, "outer_diameter_m": 0.06, "wall_m": 0.003,
                               "material": "aluminium_6061"},
                      "point_masses": [{"mass_kg": 0.8, "xyz_m": [0.5, 0.0, 0.0]}]}},
            {"xyz_m": [0.5, 0.0, 0.0], "rpy_deg": [30.0, 0.0, 10.0], "axis": [0.0, 0.3, 1.0],
             "link": {"tube": {"length_m": 0.4, "outer_diameter_m": 0.05, "wall_m": 0.004,
                               "density_kgm3": 1600.0}}},
        ],
        "tool": {"xyz_m": [0.4, 0.0, 0.0], "payload_kg": 0.3},
    }


def random_design(seed, n):
    """(c) A random valid arm of n joints: random axes, offsets, rpy, PSD inertias, point masses."""
    rng = np.random.default_rng(seed)

    def vec(lo, hi):
        return [float(v) for v in rng.uniform(lo, hi, 3)]

    def random_inertia(mass, lo, hi):
        second = mass * rng.uniform(lo, hi, 3)
        rotation = Rotation.random(random_state=rng).as_matrix()
        return inertia_entries(rotation, triangle_moments(*second))

    joints = []
    for i in range(n):
        mass = float(rng.uniform(0.3, 3.0))
        link = {"mass_kg": mass, "com_m": vec(-0.15, 0.15),
                "inertia_kgm2": random_inertia(mass, 2e-4, 5e-3),
                "point_masses": [{"mass_kg": float(rng.uniform(0.05, 1.0)), "xyz_m": vec(-0.3, 0.3)}
                                 for _ in range(int(rng.integers(0, 3)))]}
        joint = {"name": f"j{i + 1}", "xyz_m": vec(-0.3, 0.3), "rpy_deg": vec(-180.0, 180.0),
                 "axis": [float(v) for v in rng.normal(size=3)], "link": link}
        if rng.uniform() < 0.6:
            joint["actuator"] = {"peak_torque_Nm": 50.0, "continuous_torque_Nm": 20.0,
                                 "gear_ratio": float(rng.uniform(20.0, 150.0)),
                                 "rotor_inertia_kgm2": float(rng.uniform(1e-6, 2e-5))}
        joints.append(joint)
    payload = float(rng.uniform(0.0, 1.0))
    return {
        "name": f"ref_random_{n}_{seed}", "format": 1,
        "mount": {"xyz_m": vec(-1.0, 1.0), "rpy_deg": vec(-180.0, 180.0)},
        "joints": joints,
        "tool": {"xyz_m": vec(-0.2, 0.2), "payload_kg": payload,
                 "payload_inertia_kgm2": random_inertia(payload, 1e-4, 1e-3)},
    }


def random_with_massless_link():
    """(c, variant) A random 4-joint arm whose second link carries no mass at all (allowed:
    joint 2 still moves the outboard links)."""
    design = random_design(707, 4)
    design["name"] = "ref_random_massless_link2"
    design["joints"][1]["link"] = {"mass_kg": 0.0, "com_m": [0.0, 0.0, 0.0],
                                   "inertia_kgm2": [0.0] * 6, "point_masses": []}
    design["joints"][1].pop("actuator", None)
    return design


def planar_chain_builder():
    """A builder-made three-link chain on a tilted plane, yawed base (its normal form is the design)."""
    return ir.planar_chain([0.45, 0.35, 0.2], [1.6, 1.1, 0.4], com_fractions=[0.45, 0.5, 0.4],
                           motor_masses_kg=[1.0, 0.7, 0.4], plane_tilt_deg=35.0, base_yaw_deg=20.0,
                           payload_kg=0.6, gear_ratio=[100.0, 80.0, 50.0],
                           rotor_inertia_kgm2=[3e-6, 2e-6, 1e-6], name="ref_planar_chain").to_dict()


def yaw_pitch_pitch_builder():
    """A builder-made yaw-pitch-pitch arm on a tilted bracket (its normal form as the design)."""
    return ir.yaw_pitch_pitch_arm(0.25, 0.4, 0.35, link_masses_kg=[3.0, 2.0, 1.2],
                                  motor_masses_kg=[1.2, 1.0, 0.6], mount_xyz_m=(0.1, -0.2, 0.8),
                                  mount_rpy_deg=(15.0, -30.0, 40.0), payload_kg=0.5,
                                  gear_ratio=[120.0, 100.0, 80.0], rotor_inertia_kgm2=[4e-6, 3e-6, 2e-6],
                                  name="ref_ypp").to_dict()


RANDOM_CASES = [(101, 1), (202, 2), (303, 3), (404, 4), (505, 5), (606, 6)]
CASES = {
    "planar_two_vertical": planar_two_vertical,
    "tilted_spatial_three": tilted_spatial_three,
    "tilted_spatial_three_gravity_override": tilted_spatial_three_gravity_override,
    "tube_links_two": tube_links_two,
    "random_n4_massless_link2": random_with_massless_link,
    "planar_chain_builder": planar_chain_builder,
    "yaw_pitch_pitch_builder": yaw_pitch_pitch_builder,
    **{f"random_n{n}_seed{seed}": (lambda seed=seed, n=n: random_design(seed, n))
       for seed, n in RANDOM_CASES},
}
N_CONFIGS = 7


class Case:
    """One design: the package's Arm, the reference, and sample states with reference values."""

    def __init__(self, name):
        self.design = CASES[name]()
        self.arm = ir.Arm.from_dict(self.design)
        self.model = ref.SymbolicArm(self.design)
        n = self.model.n
        rng = np.random.default_rng(zlib.crc32(name.encode()))
        q = rng.uniform(-np.pi, np.pi, (N_CONFIGS, n))
        q[0] = 0.0  # the zero configuration is always included
        self.q = q
        self.qd = rng.uniform(-2.0, 2.0, (N_CONFIGS, n))
        self.qdd = rng.uniform(-5.0, 5.0, (N_CONFIGS, n))
        self.want = w = self.model.evaluate(self.q, self.qd, self.qdd)
        # torque scale [N m]: largest gravity, inertial (M qdd) or velocity-squared (|M| qd^2) torque
        self.torque_scale = float(max(
            np.abs(w.gravity_torque).max(),
            np.abs(np.einsum("...ij,...j->...i", w.mass_matrix, self.qdd)).max(),
            np.abs(w.mass_matrix).max() * np.abs(self.qd).max() ** 2))


_CASE_CACHE: dict = {}


def get_case(name):
    """Each design is derived once per test session (the derivation is the slow part)."""
    if name not in _CASE_CACHE:
        _CASE_CACHE[name] = Case(name)
    return _CASE_CACHE[name]


@pytest.fixture(params=list(CASES), scope="module")
def case(request):
    return get_case(request.param)


# ---------------------------------------------------------------------------
# the package against the reference
# ---------------------------------------------------------------------------
def test_dof_matches_design(case):
    assert case.arm.dof == case.model.n == len(case.design["joints"])


def test_tool_position(case):
    # source: independent symbolic Lagrangian derivation (sympy), tests/sympy_reference.py
    assert_matches(case.arm.tool_position(case.q), case.want.tool_position)


def test_jacobian_linear_block(case):
    # source: independent symbolic Lagrangian derivation (sympy), tests/sympy_reference.py
    assert_matches(case.arm.jacobian(case.q)[..., :3, :], case.want.jacobian[..., :3, :])


def test_jacobian_angular_block(case):
    # source: independent symbolic Lagrangian derivation (sympy), tests/sympy_reference.py
    assert_matches(case.arm.jacobian(case.q)[..., 3:, :], case.want.jacobian[..., 3:, :])


def test_mass_matrix(case):
    # source: independent symbolic Lagrangian derivation (sympy), tests/sympy_reference.py
    assert_matches(case.arm.mass_matrix(case.q), case.want.mass_matrix)


def test_gravity_torque(case):
    # source: independent symbolic Lagrangian derivation (sympy), tests/sympy_reference.py
    assert_matches(case.arm.gravity_torque(case.q), case.want.gravity_torque, case.torque_scale)


def test_velocity_torque(case):
    # source: independent symbolic Lagrangian derivation (sympy), tests/sympy_reference.py
    assert_matches(case.arm.velocity_torque(case.q, case.qd), case.want.velocity_torque,
                   case.torque_scale)


def test_inverse_dynamics(case):
    # source: independent symbolic Lagrangian derivation (sympy), tests/sympy_reference.py
    assert_matches(case.arm.inverse_dynamics(case.q, case.qd, case.qdd), case.want.inverse_dynamics,
                   case.torque_scale)


def test_single_configuration_gives_unbatched_results(case):
    """q of shape (n,) -> unbatched results equal to the reference at that configuration."""
    arm, want, k = case.arm, case.want, 3
    q, qd, qdd = case.q[k], case.qd[k], case.qdd[k]
    # source: independent symbolic Lagrangian derivation (sympy), tests/sympy_reference.py
    assert_matches(arm.tool_position(q), want.tool_position[k])
    # source: independent symbolic Lagrangian derivation (sympy), tests/sympy_reference.py
    assert_matches(arm.jacobian(q), want.jacobian[k])
    # source: independent symbolic Lagrangian derivation (sympy), tests/sympy_reference.py
    assert_matches(arm.mass_matrix(q), want.mass_matrix[k])
    # source: independent symbolic Lagrangian derivation (sympy), tests/sympy_reference.py
    assert_matches(arm.gravity_torque(q), want.gravity_torque[k], case.torque_scale)
    # source: independent symbolic Lagrangian derivation (sympy), tests/sympy_reference.py
    assert_matches(arm.velocity_torque(q, qd), want.velocity_torque[k], case.torque_scale)
    # source: independent symbolic Lagrangian derivation (sympy), tests/sympy_reference.py
    assert_matches(arm.inverse_dynamics(q, qd, qdd), want.inverse_dynamics[k], case.torque_scale)


def test_two_dimensional_batch(case):
    """A (2, 3, n) batch of the first 6 configurations gives the reference values reshaped."""
    n = case.model.n
    q = case.q[:6].reshape(2, 3, n)
    qd = case.qd[:6].reshape(2, 3, n)
    qdd = case.qdd[:6].reshape(2, 3, n)
    want = case.want
    # source: independent symbolic Lagrangian derivation (sympy), tests/sympy_reference.py
    assert_matches(case.arm.jacobian(q), want.jacobian[:6].reshape(2, 3, 6, n))
    # source: independent symbolic Lagrangian derivation (sympy), tests/sympy_reference.py
    assert_matches(case.arm.mass_matrix(q), want.mass_matrix[:6].reshape(2, 3, n, n))
    # source: independent symbolic Lagrangian derivation (sympy), tests/sympy_reference.py
    assert_matches(case.arm.inverse_dynamics(q, qd, qdd), want.inverse_dynamics[:6].reshape(2, 3, n),
                   case.torque_scale)


def test_velocity_torque_broadcasts_one_rate_over_a_batch():
    """q (N, n) with a single qd (n,): broadcast over leading axes (arm-model.md "Arguments")."""
    c = get_case("tilted_spatial_three")
    qd = c.qd[2]
    want = c.model.evaluate(c.q, np.broadcast_to(qd, c.q.shape))
    # source: independent symbolic Lagrangian derivation (sympy), tests/sympy_reference.py
    assert_matches(c.arm.velocity_torque(c.q, qd), want.velocity_torque, c.torque_scale)


def test_gravity_override_is_used():
    """(d) mount.gravity_mps2: G follows the override; M and C qd do not depend on gravity."""
    base = get_case("tilted_spatial_three")
    over = get_case("tilted_spatial_three_gravity_override")
    # the override must change the reference torques substantially, or this case tests nothing
    diff = np.abs(over.want.gravity_torque - base.model.evaluate(over.q).gravity_torque)
    assert diff.max() > 0.1 * np.abs(over.want.gravity_torque).max()
    np.testing.assert_allclose(over.arm.gravity, [1.3, -2.1, -3.72], rtol=0, atol=0)
    # source: independent symbolic Lagrangian derivation (sympy), tests/sympy_reference.py
    assert_matches(over.arm.gravity_torque(over.q), over.want.gravity_torque, over.torque_scale)
    # source: independent symbolic Lagrangian derivation (sympy), tests/sympy_reference.py
    assert_matches(over.arm.mass_matrix(over.q), base.model.evaluate(over.q).mass_matrix)
    # source: independent symbolic Lagrangian derivation (sympy), tests/sympy_reference.py
    assert_matches(over.arm.velocity_torque(over.q, over.qd),
                   base.model.evaluate(over.q, over.qd).velocity_torque, over.torque_scale)


# ---------------------------------------------------------------------------
# checks of the reference itself (so that agreement with it means something)
# ---------------------------------------------------------------------------
G_N = 9.80665  # standard gravity, 3rd CGPM 1901 (references.md item 7 [C])


def two_link(m1, m2, l1, l2, lc1, lc2, i1, i2):
    """Planar 2R design in the x-z plane (axes -y), gravity -z: the textbook's q1 from the horizontal."""
    return {
        "format": 1,
        "joints": [
            {"axis": [0.0, -1.0, 0.0],
             "link": {"mass_kg": m1, "com_m": [lc1, 0.0, 0.0],
                      "inertia_kgm2": [0.0, i1, i1, 0.0, 0.0, 0.0]}},
            {"xyz_m": [l1, 0.0, 0.0], "axis": [0.0, -1.0, 0.0],
             "link": {"mass_kg": m2, "com_m": [lc2, 0.0, 0.0],
                      "inertia_kgm2": [0.0, i2, i2, 0.0, 0.0, 0.0]}},
        ],
        "tool": {"xyz_m": [l2, 0.0, 0.0]},
    }


CASE_A = dict(m1=2.0, m2=1.0, l1=1.0, l2=0.8, lc1=0.5, lc2=0.4, i1=2.0 / 12.0, i2=0.64 / 12.0)
CASE_B = dict(m1=2.0, m2=1.0, l1=1.0, l2=0.8, lc1=1.0, lc2=0.8, i1=0.0, i2=0.0)


@pytest.mark.parametrize("params, q, m_want, g_want", [
    # references.md item 1 table (Spong, Hutchinson & Vidyasagar 2006 ch. 7 [M]; Craig 2005 ch. 6 [M];
    # values [D] computed by the references author)
    (CASE_A, (0.0, 0.0), [[2.68, 0.6133333333], [0.6133333333, 0.2133333333]], [23.53596, 3.92266]),
    (CASE_A, (0.0, np.pi / 2), [[1.88, 0.2133333333], [0.2133333333, 0.2133333333]], [19.6133, 0.0]),
    (CASE_A, (np.pi / 4, np.pi / 6), [[2.572820323, 0.5597434948], [0.5597434948, 0.2133333333]],
     [14.88395655, 1.015259115]),
    (CASE_B, (0.0, 0.0), [[5.24, 1.44], [1.44, 0.64]], [37.26527, 7.84532]),
    (CASE_B, (0.0, np.pi / 2), [[3.64, 0.64], [0.64, 0.64]], [29.41995, 0.0]),
    (CASE_B, (np.pi / 4, np.pi / 6), [[5.025640646, 1.332820323], [1.332820323, 0.64]],
     [22.83356438, 2.030518231]),
])
def test_reference_reproduces_two_link_table(params, q, m_want, g_want):
    got = ref.reference_values(two_link(**params), np.array(q))
    # source: references.md item 1 table, Spong et al. 2006 ch. 7 / Craig 2005 ch. 6 [M], [D];
    # the table gives 10 significant digits
    np.testing.assert_allclose(got.mass_matrix, m_want, rtol=1e-9, atol=1e-9)
    np.testing.assert_allclose(got.gravity_torque, g_want, rtol=1e-9, atol=1e-9)


def test_reference_reproduces_two_link_closed_form_at_random_states():
    """M, G and C qd of the two-link formulas (Spong, Hutchinson & Vidyasagar 2006 ch. 7 [M], [D])."""
    rng = np.random.default_rng(5)
    m1, m2, l1, l2, lc1, lc2 = 1.7, 0.9, 0.55, 0.45, 0.3, 0.2
    i1, i2 = 0.013, 0.007
    model = ref.SymbolicArm(two_link(m1, m2, l1, l2, lc1, lc2, i1, i2))
    q = rng.uniform(-np.pi, np.pi, (10, 2))
    qd = rng.uniform(-3.0, 3.0, (10, 2))
    got = model.evaluate(q, qd)
    c2, c1, c12, s2 = np.cos(q[:, 1]), np.cos(q[:, 0]), np.cos(q.sum(axis=1)), np.sin(q[:, 1])
    m11 = m1 * lc1**2 + m2 * (l1**2 + lc2**2 + 2 * l1 * lc2 * c2) + i1 + i2
    m12 = m2 * (lc2**2 + l1 * lc2 * c2) + i2
    m22 = np.full_like(c2, m2 * lc2**2 + i2)
    g1 = (m1 * lc1 + m2 * l1) * G_N * c1 + m2 * lc2 * G_N * c12
    g2 = m2 * lc2 * G_N * c12
    h = m2 * l1 * lc2 * s2
    cqd = np.stack([-h * (2 * qd[:, 0] * qd[:, 1] + qd[:, 1] ** 2), h * qd[:, 0] ** 2], axis=-1)
    m_want = np.stack([np.stack([m11, m12], -1), np.stack([m12, m22], -1)], -2)
    # source: Spong, Hutchinson & Vidyasagar 2006 ch. 7 two-link formulas [M], re-derived [D]
    # (references.md item 1)
    np.testing.assert_allclose(got.mass_matrix, m_want, rtol=1e-12, atol=1e-14)
    np.testing.assert_allclose(got.gravity_torque, np.stack([g1, g2], -1), rtol=1e-12, atol=1e-12)
    np.testing.assert_allclose(got.velocity_torque, cqd, rtol=1e-12, atol=1e-12)


def test_reference_rpy_convention_matches_scipy():
    """R = Rz(yaw) Ry(pitch) Rx(roll) is scipy's extrinsic 'xyz' with angles (roll, pitch, yaw)."""
    rpy = [25.0, -40.0, 70.0]
    got = np.array(ref.rpy_matrix(rpy).evalf(), dtype=float)
    # source: scipy.spatial.transform.Rotation.from_euler, extrinsic lower-case axes
    np.testing.assert_allclose(got, Rotation.from_euler("xyz", rpy, degrees=True).as_matrix(),
                               rtol=0, atol=1e-15)


def test_reference_tube_link_handbook_values():
    """6061 tube L = 0.5 m, D = 60 mm, wall 3 mm, pivoting about its end."""
    design = {"format": 1, "joints": [
        {"axis": [0.0, -1.0, 0.0],
         "link": {"tube": {"length_m": 0.5, "outer_diameter_m": 0.06, "wall_m": 0.003,
                           "material": "aluminium_6061"}}}]}
    got = ref.reference_values(design, np.zeros(1))
    # source: Machinery's Handbook 31st ed., radius of gyration, plus the parallel-axis theorem;
    # references.md item 7 [C], check values [D]
    np.testing.assert_allclose(got.mass_matrix, [[0.0607317413]], rtol=1e-9)
    np.testing.assert_allclose(got.gravity_torque, [1.778035533], rtol=1e-9)


def _central(f, x, step, h=1e-6):
    return (f(x + h * step) - f(x - h * step)) / (2 * h)


@pytest.mark.parametrize("name", ["tilted_spatial_three", "random_n4_seed404"])
def test_reference_jacobian_is_derivative_of_tool_position_and_rotation(name):
    """J_v = dp/dq and skew(J_w qd) = Rdot R^T, by central differences of the reference's kinematics."""
    c = get_case(name)
    model = c.model
    for k in (1, 4):
        q, qd = c.q[k], c.qd[k]
        p_dot = _central(lambda x: model.evaluate(x).tool_position, q, qd)
        r_dot = _central(model.last_rotation, q, qd)
        omega_skew = r_dot @ model.last_rotation(q).T
        omega = np.array([omega_skew[2, 1], omega_skew[0, 2], omega_skew[1, 0]])
        jac = c.want.jacobian[k]
        # source: central finite differences (truncation ~h^2 = 1e-12), common practice, no source
        np.testing.assert_allclose(jac[:3] @ qd, p_dot, rtol=1e-6, atol=1e-8)
        np.testing.assert_allclose(jac[3:] @ qd, omega, rtol=1e-6, atol=1e-8)


@pytest.mark.parametrize("name", ["tilted_spatial_three", "random_n4_seed404"])
def test_reference_lagrange_terms_by_finite_differences(name):
    """From the reference's numeric energies T(q, qd), V(q) alone:
    M from T = 1/2 qd^T M qd; G = dV/dq; C qd = d/dt(M qd) - dT/dq along q + t qd."""
    c = get_case(name)
    model, n = c.model, c.model.n
    eye = np.eye(n)
    for k in (2, 5):
        q, qd = c.q[k], c.qd[k]
        mass = c.want.mass_matrix[k]
        t_v = model.energies(q, qd)
        # kinetic energy is the quadratic form of M (Lagrangian mechanics, T = 1/2 qd^T M qd)
        np.testing.assert_allclose(t_v[0], 0.5 * qd @ mass @ qd, rtol=1e-12)
        # G = gradient of V (central differences; common practice, no source)
        grad_v = np.array([_central(lambda x: model.energies(x, qd)[1], q, eye[i]) for i in range(n)])
        np.testing.assert_allclose(c.want.gravity_torque[k], grad_v, rtol=1e-6, atol=1e-7)
        # Lagrange: C qd = d/dt(dT/dqd) - dT/dq at qdd = 0, with dT/dqd = M qd
        ddt = _central(lambda x: model.evaluate(x).mass_matrix @ qd, q, qd)
        dtdq = np.array([_central(lambda x: model.energies(x, qd)[0], q, eye[i]) for i in range(n)])
        np.testing.assert_allclose(c.want.velocity_torque[k], ddt - dtdq, rtol=1e-6, atol=1e-7)
        # skew-symmetry of Mdot - 2C: qd.(Mdot qd) = 2 qd.(C qd)
        # (Spong, Hutchinson & Vidyasagar 2006 ch. 7 [M])
        np.testing.assert_allclose(qd @ ddt, 2 * qd @ c.want.velocity_torque[k], rtol=1e-6, atol=1e-7)


def test_product_rule_and_sympy_diff_give_the_same_reference():
    """The module's own product/chain rule (_partial) against sympy.diff on the same derivation."""
    design = random_design(818, 2)  # small (sympy.diff is the slow route), with every body kind
    assert design["joints"][0]["link"]["point_masses"] and design["tool"]["payload_kg"] > 0
    rng = np.random.default_rng(17)
    q, qd, qdd = (rng.uniform(-3.0, 3.0, (4, 2)) for _ in range(3))
    fast = ref.SymbolicArm(design).evaluate(q, qd, qdd)
    slow = ref.SymbolicArm(design, use_sympy_diff=True).evaluate(q, qd, qdd)
    for name in fast._fields:
        # two differentiation routes through sympy: equal to round-off
        np.testing.assert_allclose(getattr(fast, name), getattr(slow, name), rtol=1e-12, atol=1e-12,
                                   err_msg=name)


def test_closed_form_functions_match_reference_and_shapes():
    c = get_case("random_n3_seed303")
    closed = ref.closed_form_functions(c.design)
    mass, jac = closed
    assert closed.mass_matrix is mass and closed.jacobian is jac
    assert mass.derivation_seconds > 0.0
    got_m, got_j = mass(c.q), jac(c.q)
    assert got_m.shape == (N_CONFIGS, 3, 3) and got_j.shape == (N_CONFIGS, 6, 3)
    # two sympy code paths of the same derivation must agree to round-off
    np.testing.assert_allclose(got_m, c.want.mass_matrix, rtol=1e-12, atol=1e-14)
    np.testing.assert_allclose(got_j, c.want.jacobian, rtol=1e-12, atol=1e-14)
    # and the closed form is the package's mass matrix too
    # source: independent symbolic Lagrangian derivation (sympy), tests/sympy_reference.py
    assert_matches(c.arm.mass_matrix(c.q), got_m)
