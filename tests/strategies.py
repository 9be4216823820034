"""Hypothesis strategies for random *valid* inertia_review design dicts.

The dicts follow the design-file schema of ``arm-model.md`` (the same schema
as the TOML files, as plain Python dicts), so they can be fed to
``ir.Arm.from_dict`` or written with ``tomli_w`` and read by
``ir.load_design``.  All numbers are invented test data.

Besides the strategies, this module holds a small independent reference
model of the arm (forward kinematics from the design dict, the list of
rigid bodies it carries, tube properties) written straight from the
conventions of ``arm-model.md``.  The property tests compare the core
against it; it never calls ``inertia_review``.
"""

from __future__ import annotations

import math

import numpy as np
from hypothesis import strategies as st

# Standard gravity, exact by definition: 3rd CGPM (1901) [C] (references.md item 7).
G_N = 9.80665

# Densities, references.md item 7: 6061 2700 kg/m^3 (Aluminum Association typical
# values; Gere) [C]; structural steel 7850 kg/m^3 (EN 1993-1-1 / Gere) [C];
# carbon fibre/epoxy 1700 kg/m^3 (Callister & Rethwisch, Table B.1) [C].
DENSITIES = {"aluminium_6061": 2700.0, "structural_steel": 7850.0, "cfrp": 1700.0}


def _finite(lo, hi):
    return st.floats(lo, hi, allow_nan=False, allow_infinity=False, allow_subnormal=False)


def _vec(lo, hi, size=3):
    return st.lists(_finite(lo, hi), min_size=size, max_size=size)


# ---------------------------------------------------------------------------
# Rotations (written from the conventions of arm-model.md)
# ---------------------------------------------------------------------------

def rot_x(a):
    c, s = math.cos(a), math.sin(a)
    return np.array([[1.0, 0.0, 0.0], [0.0, c, -s], [0.0, s, c]])


def rot_y(a):
    c, s = math.cos(a), math.sin(a)
    return np.array([[c, 0.0, s], [0.0, 1.0, 0.0], [-s, 0.0, c]])


def rot_z(a):
    c, s = math.cos(a), math.sin(a)
    return np.array([[c, -s, 0.0], [s, c, 0.0], [0.0, 0.0, 1.0]])


def rot_rpy_deg(rpy_deg):
    """Fixed-axis X-Y-Z: R = Rz(yaw) Ry(pitch) Rx(roll) (arm-model.md, Frames)."""
    roll, pitch, yaw = (math.radians(float(v)) for v in rpy_deg)
    return rot_z(yaw) @ rot_y(pitch) @ rot_x(roll)


def rot_axis_angle(axis, angle):
    """Rodrigues' rotation formula (common practice, no source)."""
    a = np.asarray(axis, dtype=float)
    a = a / np.linalg.norm(a)
    k = np.array([[0.0, -a[2], a[1]], [a[2], 0.0, -a[0]], [-a[1], a[0], 0.0]])
    return np.eye(3) + math.sin(angle) * k + (1.0 - math.cos(angle)) * (k @ k)


def inertia_entries(tensor):
    """3x3 tensor -> [Ixx, Iyy, Izz, Ixy, Ixz, Iyz] (the tensor's own entries)."""
    t = np.asarray(tensor, dtype=float)
    return [t[0, 0], t[1, 1], t[2, 2], t[0, 1], t[0, 2], t[1, 2]]


def inertia_tensor(entries):
    ixx, iyy, izz, ixy, ixz, iyz = (float(v) for v in entries)
    return np.array([[ixx, ixy, ixz], [ixy, iyy, iyz], [ixz, iyz, izz]])


def tube_reference(length_m, outer_diameter_m, wall_m, density_kgm3):
    """Mass, COM (link frame) and inertia about the COM of a tube along +x.

    Machinery's Handbook, 31st ed., pp. 236-237, radius of gyration of a hollow
    cylinder [C] (references.md item 7): axial k^2 = (R^2 + r^2)/2, transverse
    about the mid-length diameter k^2 = (R^2 + r^2)/4 + L^2/12; m = rho pi (R^2 - r^2) L.
    """
    big_r = outer_diameter_m / 2.0
    small_r = big_r - wall_m
    mass = density_kgm3 * math.pi * (big_r**2 - small_r**2) * length_m
    i_axial = mass * (big_r**2 + small_r**2) / 2.0
    i_trans = mass * ((big_r**2 + small_r**2) / 4.0 + length_m**2 / 12.0)
    com = np.array([length_m / 2.0, 0.0, 0.0])
    return mass, com, np.diag([i_axial, i_trans, i_trans])


# ---------------------------------------------------------------------------
# Strategies
# ---------------------------------------------------------------------------

@st.composite
def rotations(draw):
    """A rotation matrix from random fixed-axis angles (degrees)."""
    return rot_rpy_deg(draw(_vec(-180.0, 180.0)))


@st.composite
def psd_inertias(draw, scale=(1e-3, 0.05)):
    """Random inertia entries, positive definite and meeting the triangle inequality.

    Built as R diag(s2+s3, s1+s3, s1+s2) R^T from non-negative second moments
    s_i = integral of x_i^2 dm, which gives principal moments that obey the
    triangle inequality by construction (common practice, no source; the
    same rule as arm-model.md, Validation).
    """
    s = draw(_vec(*scale))
    principal = np.array([s[1] + s[2], s[0] + s[2], s[0] + s[1]])
    r = draw(rotations())
    return inertia_entries(r @ np.diag(principal) @ r.T)


@st.composite
def unit_like_axes(draw):
    """A non-zero axis, deliberately not unit length (the core normalises it)."""
    v = draw(_vec(-1.0, 1.0).filter(lambda v: math.sqrt(sum(x * x for x in v)) > 0.3))
    scale = draw(st.sampled_from([1.0, 0.5, 3.0]))
    return [scale * x for x in v]


@st.composite
def links(draw, tubes=True):
    """A [joints.link] table: explicit mass properties or a tube, plus point masses."""
    link = {}
    if tubes and draw(st.integers(0, 3)) == 0:
        outer = draw(_finite(0.02, 0.1))
        tube = {
            "length_m": draw(_finite(0.1, 0.8)),
            "outer_diameter_m": outer,
            "wall_m": draw(_finite(0.05, 0.45)) * outer / 2.0,
        }
        if draw(st.booleans()):
            tube["material"] = draw(st.sampled_from(sorted(DENSITIES)))
        else:
            tube["density_kgm3"] = draw(_finite(1000.0, 8000.0))
        link["tube"] = tube
    else:
        link["mass_kg"] = draw(_finite(0.05, 3.0))
        link["com_m"] = draw(_vec(-0.3, 0.3))
        link["inertia_kgm2"] = draw(psd_inertias())
    n_points = draw(st.integers(0, 2))
    if n_points:
        link["point_masses"] = [
            {"mass_kg": draw(_finite(0.0, 1.0)), "xyz_m": draw(_vec(-0.3, 0.3))}
            for _ in range(n_points)
        ]
    return link


@st.composite
def actuators(draw):
    act = {}
    peak = draw(_finite(5.0, 300.0))
    act["peak_torque_Nm"] = peak
    act["continuous_torque_Nm"] = peak * draw(_finite(0.2, 1.0))
    if draw(st.booleans()):
        act["gear_ratio"] = draw(_finite(1.0, 150.0))
    if draw(st.booleans()):
        act["rotor_inertia_kgm2"] = draw(_finite(0.0, 1e-4))
    return act


@st.composite
def joints(draw, index, tubes=True, planar=False, actuator=None):
    joint = {}
    if draw(st.booleans()):
        joint["name"] = f"j{index + 1}_{draw(st.sampled_from(['base', 'arm', 'wrist']))}"
    if planar:
        # All axes along +-z of frames that differ only by a turn about z.
        joint["xyz_m"] = draw(_vec(-0.5, 0.5, 2)) + [draw(_finite(-0.2, 0.2))]
        joint["rpy_deg"] = [0.0, 0.0, draw(_finite(-180.0, 180.0))]
        joint["axis"] = [0.0, 0.0, draw(st.sampled_from([1.0, -1.0, 2.0]))]
    else:
        if draw(st.booleans()):
            joint["xyz_m"] = draw(_vec(-0.4, 0.4))
        if draw(st.booleans()):
            joint["rpy_deg"] = draw(_vec(-180.0, 180.0))
        joint["axis"] = draw(unit_like_axes())
    if draw(st.booleans()):
        lo = draw(_finite(-180.0, 0.0))
        joint["limits_deg"] = [lo, lo + draw(_finite(10.0, 180.0))]
    joint["link"] = draw(links(tubes=tubes))
    with_act = draw(st.booleans()) if actuator is None else actuator
    if with_act:
        joint["actuator"] = draw(actuators())
    return joint


@st.composite
def designs(draw, min_joints=1, max_joints=6, tubes=True, planar=False,
            task=False, gravity=False, actuators=None, mount=True):
    """A random valid design dict.

    Parameters
    ----------
    min_joints, max_joints : int
        Number of revolute joints.
    tubes : bool
        Allow links given as tubes.
    planar : bool
        All joint axes parallel (a planar chain, task k = 2 by default).
    task : bool
        Sometimes give explicit orthonormal ``[task] axes`` (spatial designs).
    gravity : bool
        Sometimes override ``mount.gravity_mps2``.
    actuators : None or bool
        None: each joint has an actuator table at random; True/False: all/none.
    mount : bool
        Random mount translation and rotation (else the default mount).
    """
    n = draw(st.integers(min_joints, max_joints))
    d = {"format": 1}
    if draw(st.booleans()):
        d["name"] = draw(st.sampled_from(["arm_a", "test-arm", "Bracket 3"]))
    if mount:
        m = {}
        if draw(st.booleans()):
            m["xyz_m"] = draw(_vec(-1.0, 1.0))
        if draw(st.booleans()):
            m["rpy_deg"] = draw(_vec(-180.0, 180.0))
        if gravity and draw(st.booleans()):
            m["gravity_mps2"] = draw(_vec(-12.0, 12.0))
        if m or draw(st.booleans()):
            d["mount"] = m
    d["joints"] = [
        draw(joints(i, tubes=tubes, planar=planar, actuator=actuators)) for i in range(n)
    ]
    if draw(st.integers(0, 3)) > 0:
        tool = {"xyz_m": draw(_vec(-0.4, 0.4))}
        if draw(st.booleans()):
            tool["payload_kg"] = draw(_finite(0.0, 2.0))
            if draw(st.booleans()):
                tool["payload_inertia_kgm2"] = draw(psd_inertias(scale=(1e-4, 5e-3)))
        d["tool"] = tool
    if task and not planar and draw(st.integers(0, 2)) == 0:
        r = draw(rotations())
        k = draw(st.sampled_from([2, 3]))
        d["task"] = {"axes": [list(map(float, row)) for row in r[:k]]}
    return d


def planar_designs(min_joints=2, max_joints=4, **kw):
    """Planar chains (all joint axes parallel) with a random mount."""
    return designs(min_joints=min_joints, max_joints=max_joints, planar=True, **kw)


# ---------------------------------------------------------------------------
# Independent reference model of a design dict
# ---------------------------------------------------------------------------

def gravity_of(design):
    """Gravity vector in W: mount.gravity_mps2 or (0, 0, -g_n) (arm-model.md)."""
    g = design.get("mount", {}).get("gravity_mps2")
    return np.array([0.0, 0.0, -G_N]) if g is None else np.asarray(g, dtype=float)


def frames(design, q):
    """World rotation and origin of every link frame at joint angles q (1-D).

    arm-model.md, Precise rules: T_WB = Trans(mount.xyz_m) Rot(mount.rpy_deg);
    joint i: T = Trans(xyz_m) Rot(rpy_deg) Rot(axis, q_i) in the previous link frame.
    Returns a list of (R, p) for links 1..n.
    """
    mount = design.get("mount", {})
    r = rot_rpy_deg(mount.get("rpy_deg", [0.0, 0.0, 0.0]))
    p = np.asarray(mount.get("xyz_m", [0.0, 0.0, 0.0]), dtype=float)
    out = []
    for qi, joint in zip(q, design["joints"]):
        p = p + r @ np.asarray(joint.get("xyz_m", [0.0, 0.0, 0.0]), dtype=float)
        r = r @ rot_rpy_deg(joint.get("rpy_deg", [0.0, 0.0, 0.0]))
        r = r @ rot_axis_angle(joint["axis"], float(qi))
        out.append((r, p))
    return out


def bodies(design):
    """Rigid bodies carried by the chain: (link index, mass, com in link frame, inertia 3x3).

    Point masses and the payload are bodies with the given (or zero) inertia;
    the payload sits at the tool point with its inertia about the tool point.
    """
    out = []
    for i, joint in enumerate(design["joints"]):
        link = joint["link"]
        if "tube" in link:
            t = link["tube"]
            rho = t.get("density_kgm3", DENSITIES.get(t.get("material")))
            m, c, inertia = tube_reference(t["length_m"], t["outer_diameter_m"], t["wall_m"], rho)
        else:
            m = float(link["mass_kg"])
            c = np.asarray(link["com_m"], dtype=float)
            inertia = inertia_tensor(link["inertia_kgm2"])
        out.append((i, m, c, inertia))
        for pm in link.get("point_masses", []):
            out.append((i, float(pm["mass_kg"]), np.asarray(pm["xyz_m"], dtype=float), np.zeros((3, 3))))
    tool = design.get("tool", {})
    payload = float(tool.get("payload_kg", 0.0))
    pin = tool.get("payload_inertia_kgm2")
    out.append((len(design["joints"]) - 1, payload,
                np.asarray(tool.get("xyz_m", [0.0, 0.0, 0.0]), dtype=float),
                np.zeros((3, 3)) if pin is None else inertia_tensor(pin)))
    return out


def tool_point(design, q):
    r, p = frames(design, q)[-1]
    return p + r @ np.asarray(design.get("tool", {}).get("xyz_m", [0.0, 0.0, 0.0]), dtype=float)


def reflected_rotor_inertias(design):
    """gear_ratio^2 * rotor_inertia per joint (arm-model.md; common practice, no source)."""
    out = []
    for joint in design["joints"]:
        act = joint.get("actuator") or {}
        out.append(float(act.get("gear_ratio", 1.0)) ** 2 * float(act.get("rotor_inertia_kgm2", 0.0)))
    return np.array(out)


def _vee(m):
    return np.array([m[2, 1], m[0, 2], m[1, 0]])


def kinetic_energy(design, q, qd, h=1e-6):
    """Kinetic energy from link velocities obtained by central differences of
    the reference forward kinematics along q + t qd (never uses the core's mass matrix).

    T = sum 1/2 m |v_c|^2 + 1/2 w^T (R I R^T) w over bodies, plus
    1/2 sum (N^2 J_m) qd_i^2 for the reflected rotors (Koenig's theorem,
    common practice, no source; rotor term per arm-model.md).
    """
    q = np.asarray(q, dtype=float)
    qd = np.asarray(qd, dtype=float)
    f0 = frames(design, q)
    fp = frames(design, q + h * qd)
    fm = frames(design, q - h * qd)
    total = 0.0
    for i, m, c, inertia in bodies(design):
        r0, _ = f0[i]
        rp, pp = fp[i]
        rm, pm = fm[i]
        v = ((pp + rp @ c) - (pm + rm @ c)) / (2.0 * h)
        omega_hat = ((rp - rm) / (2.0 * h)) @ r0.T
        w = _vee(0.5 * (omega_hat - omega_hat.T))
        total += 0.5 * m * v @ v + 0.5 * w @ (r0 @ inertia @ r0.T) @ w
    total += 0.5 * float(np.sum(reflected_rotor_inertias(design) * qd**2))
    return total


def potential_energy(design, q):
    """V = -sum m g . c over all bodies (uniform gravity)."""
    g = gravity_of(design)
    f = frames(design, q)
    total = 0.0
    for i, m, c, _ in bodies(design):
        r, p = f[i]
        total -= m * g @ (p + r @ c)
    return total


def total_mass(design):
    return sum(m for _, m, _, _ in bodies(design))
