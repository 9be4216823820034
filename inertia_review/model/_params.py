"""Arrays of an arm, built from its normalised design (private).

Point masses, a tube description and the payload are folded here into one rigid
body per link (mass, centre of mass and inertia about it, in the link frame), so
that the dynamics core knows nothing of design-file details.
"""

from dataclasses import dataclass

import numpy as np

from ._materials import MATERIALS, MODULI, tube_properties, tube_section_stiffness
from ._rotation import inertia_tensor, rpy_matrix, skew

__all__ = ["ArmParams", "build_params", "default_task_axes", "link_body"]


@dataclass(frozen=True, eq=False)
class ArmParams:
    """Validated arrays of an arm (SI units). Shapes use n joints and k task axes."""

    n: int
    mount_rotation: np.ndarray   # (3, 3) R_WB
    mount_position: np.ndarray   # (3,) [m]
    joint_rotation: np.ndarray   # (n, 3, 3) fixed Rot(rpy) of each joint frame in its parent
    joint_position: np.ndarray   # (n, 3) [m] in the parent link frame
    axis: np.ndarray             # (n, 3) unit, joint frame
    axis_skew: np.ndarray        # (n, 3, 3) [a]x
    axis_skew2: np.ndarray       # (n, 3, 3) [a]x^2
    body_mass: np.ndarray        # (n,) [kg], link + point masses (+ payload on the last)
    body_com: np.ndarray         # (n, 3) [m], link frame
    body_inertia: np.ndarray     # (n, 3, 3) [kg m^2] about body_com, link frame
    tool_position: np.ndarray    # (3,) [m], last link frame
    rotor_inertia: np.ndarray    # (n,) [kg m^2] reflected: gear_ratio^2 * rotor inertia
    gravity: np.ndarray          # (3,) [m/s^2], world frame
    task_axes: np.ndarray        # (k, 3) orthonormal rows, world frame
    limits: np.ndarray           # (n, 2) [rad]
    peak_torque: np.ndarray      # (n,) [N m], NaN where not rated
    continuous_torque: np.ndarray  # (n,) [N m], NaN where not rated
    gear_ratio: np.ndarray       # (n,)
    rated_speed: np.ndarray      # (n,) [rad/s] motor side, NaN where not given
    # --- stiffness (see stiffness_arrays): inf stiffness = rigid
    joint_stiffness: np.ndarray  # (n,) [N m/rad] joint torsional stiffness, inf where rigid
    beam_dir: np.ndarray         # (n, 3) unit beam axis of link i in its frame (from its origin)
    beam_length: np.ndarray      # (n,) [m] flexible span of link i (0: none)
    beam_bending: np.ndarray     # (n,) [N m^2] EI of link i's beam, inf where rigid
    beam_torsion: np.ndarray     # (n,) [N m^2] GJ of link i's beam, inf where rigid
    beam_self_mass: np.ndarray   # (n,) [kg] mass spread uniformly along the beam (a tube's own)
    load_mass: np.ndarray        # (n, P) [kg] the rest of body i as point loads (0-padded)
    load_position: np.ndarray    # (n, P, 3) [m] their positions in link i's frame
    payload_mass: float          # [kg] the design's payload (a point mass at the tool point)


def _combine(parts):
    """One rigid body from (mass, com (3,), inertia about com (3, 3)) parts (parallel axes)."""
    mass = sum(m for m, _, _ in parts)
    if mass > 0.0:
        com = sum(m * c for m, c, _ in parts) / mass
    else:
        com = np.zeros(3)
    inertia = np.zeros((3, 3))
    for m, c, i_c in parts:
        d = c - com
        inertia += i_c + m * (np.dot(d, d) * np.eye(3) - np.outer(d, d))
    return mass, com, inertia


def link_body(link):
    """(mass [kg], com (3,) [m], inertia (3, 3) [kg m^2] about com) of a normalised link,
    point masses included."""
    if "tube" in link:
        tube = link["tube"]
        density = tube.get("density_kgm3") or MATERIALS[tube["material"]]
        props = tube_properties(tube["length_m"], tube["outer_diameter_m"], tube["wall_m"], density)
        parts = [(props.mass_kg, np.array(props.com_m), inertia_tensor(props.inertia_kgm2))]
    else:
        parts = [(link["mass_kg"], np.array(link["com_m"], float), inertia_tensor(link["inertia_kgm2"]))]
    parts += [(pm["mass_kg"], np.array(pm["xyz_m"], float), np.zeros((3, 3)))
              for pm in link["point_masses"]]
    return _combine(parts)


def default_task_axes(first_axis_world, all_parallel):
    """Task axes (k, 3): the plane normal to parallel joint axes, else the identity.

    For the plane, the first row is the world basis vector least aligned with the joint
    axis, projected into the plane and normalised; the second is axis x first; each row
    is flipped so that its largest-magnitude component is positive.
    """
    if not all_parallel:
        return np.eye(3)
    n = first_axis_world / np.linalg.norm(first_axis_world)
    basis = np.eye(3)
    e = basis[int(np.argmin(np.abs(n)))]
    u1 = e - np.dot(e, n) * n
    u1 /= np.linalg.norm(u1)
    u2 = np.cross(n, u1)
    rows = []
    for u in (u1, u2):
        if u[np.argmax(np.abs(u))] < 0:
            u = -u
        rows.append(u)
    return np.array(rows)


def build_params(spec):
    """ArmParams from a normalised design (see :func:`._design.normalise_design`)."""
    joints = spec["joints"]
    n = len(joints)
    mount_rotation = rpy_matrix(spec["mount"]["rpy_deg"])
    joint_rotation = np.array([rpy_matrix(j["rpy_deg"]) for j in joints])
    axis = np.array([j["axis"] for j in joints], dtype=float)
    bodies = [link_body(j["link"]) for j in joints]
    tool = spec["tool"]
    tool_position = np.array(tool["xyz_m"], float)
    last = (tool["payload_kg"], tool_position, inertia_tensor(tool["payload_inertia_kgm2"]))
    bodies[-1] = _combine([bodies[-1], last])
    actuators = [j.get("actuator") for j in joints]

    def rating(key):
        return np.array([a[key] if a and a.get(key) is not None else np.nan for a in actuators])

    gear = np.array([a["gear_ratio"] if a else 1.0 for a in actuators])
    rotor = np.array([a["gear_ratio"] ** 2 * a["rotor_inertia_kgm2"] if a else 0.0 for a in actuators])

    # joint axes in W at q = 0 (parallel axes stay parallel at every q)
    rot = mount_rotation
    axes_world = []
    for i in range(n):
        rot = rot @ joint_rotation[i]
        axes_world.append(rot @ axis[i])
    a1 = axes_world[0]
    all_parallel = all(np.linalg.norm(np.cross(a, a1)) <= 1e-9 for a in axes_world)
    if "task" in spec and "axes" in spec["task"]:
        task_axes = np.array(spec["task"]["axes"], float)
    else:
        task_axes = default_task_axes(a1, all_parallel)

    arrays = dict(
        n=n,
        mount_rotation=mount_rotation,
        mount_position=np.array(spec["mount"]["xyz_m"], float),
        joint_rotation=joint_rotation,
        joint_position=np.array([j["xyz_m"] for j in joints], float),
        axis=axis,
        axis_skew=np.array([skew(a) for a in axis]),
        axis_skew2=np.array([skew(a) @ skew(a) for a in axis]),
        body_mass=np.array([b[0] for b in bodies]),
        body_com=np.array([b[1] for b in bodies]),
        body_inertia=np.array([b[2] for b in bodies]),
        tool_position=tool_position,
        rotor_inertia=rotor,
        gravity=np.array(spec["mount"]["gravity_mps2"], float),
        task_axes=task_axes,
        limits=np.deg2rad(np.array([j["limits_deg"] for j in joints], float)),
        peak_torque=rating("peak_torque_Nm"),
        continuous_torque=rating("continuous_torque_Nm"),
        gear_ratio=gear,
        rated_speed=rating("rated_speed_rpm") * (2.0 * np.pi / 60.0),
    )
    arrays.update(stiffness_arrays(spec, tool_position))
    for value in arrays.values():
        if isinstance(value, np.ndarray):
            value.setflags(write=False)
    return ArmParams(**arrays)


# --- stiffness arrays --------------------------------------------------------------------
def _beam(joint, next_offset):
    """(unit direction (3,), length, EI, GJ, uniform mass) of a normalised joint's link beam.

    A tube is its own beam (along +x from the link origin, its length); any other link's
    beam runs from the link origin to the next joint's origin (the tool point on the last
    link). The link's own ``bending_stiffness_Nm2``/``torsional_stiffness_Nm2`` win over the
    tube's section values (E, G from ``MODULI``); neither given: the link is rigid.
    """
    link = joint["link"]
    tube = link.get("tube")
    if tube is not None:
        direction, length = np.array([1.0, 0.0, 0.0]), tube["length_m"]
        density = tube.get("density_kgm3") or MATERIALS[tube["material"]]
        self_mass = tube_properties(tube["length_m"], tube["outer_diameter_m"], tube["wall_m"],
                                    density).mass_kg
        ei = gj = np.inf
        if "material" in tube:
            ei, gj = tube_section_stiffness(tube["outer_diameter_m"], tube["wall_m"],
                                            *MODULI[tube["material"]])
    else:
        offset = np.asarray(next_offset, float)
        length = float(np.linalg.norm(offset))
        direction = offset / length if length > 0.0 else np.zeros(3)
        self_mass, ei, gj = 0.0, np.inf, np.inf
    if "bending_stiffness_Nm2" in link:
        ei, gj = link["bending_stiffness_Nm2"], link["torsional_stiffness_Nm2"]
    return direction, float(length), float(ei), float(gj), float(self_mass)


def stiffness_arrays(spec, tool_position):
    """Joint springs, link beams and the point loads of each link, for ``_stiffness``."""
    joints = spec["joints"]
    n = len(joints)
    offsets = [j["xyz_m"] for j in joints[1:]] + [tool_position]
    beams = [_beam(j, off) for j, off in zip(joints, offsets)]
    loads = []
    for i, j in enumerate(joints):
        link = j["link"]
        items = [] if "tube" in link else [(link["mass_kg"], link["com_m"])]
        items += [(pm["mass_kg"], pm["xyz_m"]) for pm in link["point_masses"]]
        if i == n - 1:
            items.append((spec["tool"]["payload_kg"], list(tool_position)))
        loads.append(items)
    width = max(1, max(len(items) for items in loads))
    load_mass = np.zeros((n, width))
    load_position = np.zeros((n, width, 3))
    for i, items in enumerate(loads):
        for p, (mass, xyz) in enumerate(items):
            load_mass[i, p] = mass
            load_position[i, p] = xyz
    stiffness = np.array([(j.get("actuator") or {}).get("stiffness_Nm_per_rad", np.inf)
                          for j in joints], float)
    return dict(
        joint_stiffness=stiffness,
        beam_dir=np.array([b[0] for b in beams], float),
        beam_length=np.array([b[1] for b in beams]),
        beam_bending=np.array([b[2] for b in beams]),
        beam_torsion=np.array([b[3] for b in beams]),
        beam_self_mass=np.array([b[4] for b in beams]),
        load_mass=load_mass,
        load_position=load_position,
        payload_mass=float(spec["tool"]["payload_kg"]),
    )
