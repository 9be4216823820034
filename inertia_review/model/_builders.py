"""Builders of common arm layouts; each returns an ordinary :class:`Arm` (private)."""

import numpy as np

from ._arm import Arm

__all__ = ["planar_chain", "yaw_pitch_pitch_arm"]


def _per_joint(value, n, name, default=None):
    if value is None:
        return [default] * n
    arr = np.atleast_1d(np.asarray(value, dtype=float))
    if arr.shape == (1,):
        arr = np.repeat(arr, n)
    if arr.shape != (n,):
        raise ValueError(f"`{name}` must be a number or {n} numbers (one per joint); got {arr.shape[0]}")
    return [float(v) for v in arr]


def _actuators(n, peak, continuous, gear, rotor):
    peak = _per_joint(peak, n, "peak_torque_Nm")
    continuous = _per_joint(continuous, n, "continuous_torque_Nm")
    gear = _per_joint(gear, n, "gear_ratio")
    rotor = _per_joint(rotor, n, "rotor_inertia_kgm2")
    tables = []
    for i in range(n):
        table = {"peak_torque_Nm": peak[i], "continuous_torque_Nm": continuous[i],
                 "gear_ratio": gear[i], "rotor_inertia_kgm2": rotor[i]}
        table = {k: v for k, v in table.items() if v is not None}
        tables.append(table or None)
    return tables


def _rod(mass, length, along):
    """Slender-rod inertia entries about the COM: m l^2 / 12 transverse, 0 axial."""
    t = mass * length**2 / 12.0
    entries = [t, t, t, 0.0, 0.0, 0.0]
    entries["xyz".index(along)] = 0.0
    return entries


def planar_chain(link_lengths_m, link_masses_kg, *, com_fractions=0.5, motor_masses_kg=None,
                 plane_tilt_deg=0.0, base_yaw_deg=0.0, payload_kg=0.0, peak_torque_Nm=None,
                 continuous_torque_Nm=None, gear_ratio=None, rotor_inertia_kgm2=None,
                 limits_deg=(-180.0, 180.0), name="planar_chain"):
    """A planar chain of revolute joints with parallel axes.

    Links lie along the local x axis; joint angles are q1 from the base's in-plane x axis
    and q_i relative to the previous link (0 = stretched out). Each link is a slender rod,
    m l^2 / 12 about its centre of mass (transverse), 0 about its own axis.

    Parameters
    ----------
    link_lengths_m, link_masses_kg : sequence of float, shape (n,)
        Joint-to-joint lengths [m] (the last one to the tool point) and link masses [kg].
    com_fractions : float or sequence, default 0.5
        Centre of mass of each link as a fraction of its length from its joint.
    motor_masses_kg : sequence of float, shape (n,), optional
        Motor (with gearbox) of joint i as a point mass at joint i: joint 1's rides the
        base and does not move; joint i > 1's rides the distal end of link i - 1.
    plane_tilt_deg : float, default 0
        Tilt of the arm's plane from vertical [deg]: 0 is a vertical plane (gravity in the
        plane), 90 a horizontal one. Mount rpy_deg = [90 - tilt, 0, base_yaw_deg].
    base_yaw_deg : float
        Rotation of the base about world z [deg].
    payload_kg, peak_torque_Nm, continuous_torque_Nm, gear_ratio, rotor_inertia_kgm2
        Payload at the tool point; actuator data per joint (number or one per joint).

    Returns
    -------
    Arm
    """
    lengths = _per_joint(link_lengths_m, len(np.atleast_1d(link_lengths_m)), "link_lengths_m")
    n = len(lengths)
    masses = _per_joint(link_masses_kg, n, "link_masses_kg")
    fractions = _per_joint(com_fractions, n, "com_fractions")
    motors = _per_joint(motor_masses_kg, n, "motor_masses_kg", default=0.0)
    actuators = _actuators(n, peak_torque_Nm, continuous_torque_Nm, gear_ratio, rotor_inertia_kgm2)
    joints = []
    for i in range(n):
        link = {"mass_kg": masses[i], "com_m": [fractions[i] * lengths[i], 0.0, 0.0],
                "inertia_kgm2": _rod(masses[i], lengths[i], "x")}
        if i + 1 < n and motors[i + 1] > 0.0:
            link["point_masses"] = [{"mass_kg": motors[i + 1], "xyz_m": [lengths[i], 0.0, 0.0]}]
        joint = {"name": f"joint{i + 1}", "xyz_m": [lengths[i - 1] if i else 0.0, 0.0, 0.0],
                 "axis": [0.0, 0.0, 1.0], "limits_deg": list(limits_deg), "link": link}
        if actuators[i]:
            joint["actuator"] = actuators[i]
        joints.append(joint)
    design = {"name": name, "format": 1,
              "mount": {"rpy_deg": [90.0 - float(plane_tilt_deg), 0.0, float(base_yaw_deg)]},
              "joints": joints,
              "tool": {"xyz_m": [lengths[-1], 0.0, 0.0], "payload_kg": float(payload_kg)}}
    return Arm.from_dict(design)


def yaw_pitch_pitch_arm(base_height_m, upper_arm_m, forearm_m, *, link_masses_kg,
                        com_fractions=0.5, motor_masses_kg=None, mount_xyz_m=(0.0, 0.0, 0.0),
                        mount_rpy_deg=(0.0, 0.0, 0.0), payload_kg=0.0, peak_torque_Nm=None,
                        continuous_torque_Nm=None, gear_ratio=None, rotor_inertia_kgm2=None,
                        limits_deg=None, name="yaw_pitch_pitch"):
    """A spatial positioning arm: a yaw joint on a column, then shoulder and elbow pitch.

    Joint 1 turns about the base's z axis; the column (link 1) rises ``base_height_m``
    along z; joints 2 and 3 turn about -y so that positive angles lift the arm; the upper
    arm and forearm lie along x (q = 0: arm stretched out horizontally). Links are
    slender rods; ``motor_masses_kg[i]`` is a point mass at joint i (joint 1's on the base).

    Returns
    -------
    Arm
    """
    lengths = [float(base_height_m), float(upper_arm_m), float(forearm_m)]
    masses = _per_joint(link_masses_kg, 3, "link_masses_kg")
    fractions = _per_joint(com_fractions, 3, "com_fractions")
    motors = _per_joint(motor_masses_kg, 3, "motor_masses_kg", default=0.0)
    actuators = _actuators(3, peak_torque_Nm, continuous_torque_Nm, gear_ratio, rotor_inertia_kgm2)
    limits = limits_deg if limits_deg is not None else [(-170.0, 170.0), (-10.0, 190.0),
                                                        (-160.0, 160.0)]
    column = {"mass_kg": masses[0], "com_m": [0.0, 0.0, fractions[0] * lengths[0]],
              "inertia_kgm2": _rod(masses[0], lengths[0], "z")}
    upper = {"mass_kg": masses[1], "com_m": [fractions[1] * lengths[1], 0.0, 0.0],
             "inertia_kgm2": _rod(masses[1], lengths[1], "x")}
    fore = {"mass_kg": masses[2], "com_m": [fractions[2] * lengths[2], 0.0, 0.0],
            "inertia_kgm2": _rod(masses[2], lengths[2], "x")}
    if motors[1] > 0.0:
        column["point_masses"] = [{"mass_kg": motors[1], "xyz_m": [0.0, 0.0, lengths[0]]}]
    if motors[2] > 0.0:
        upper["point_masses"] = [{"mass_kg": motors[2], "xyz_m": [lengths[1], 0.0, 0.0]}]
    specs = [("yaw", [0.0, 0.0, 0.0], [0.0, 0.0, 1.0], column),
             ("shoulder", [0.0, 0.0, lengths[0]], [0.0, -1.0, 0.0], upper),
             ("elbow", [lengths[1], 0.0, 0.0], [0.0, -1.0, 0.0], fore)]
    joints = []
    for i, (jname, xyz, axis, link) in enumerate(specs):
        joint = {"name": jname, "xyz_m": xyz, "axis": axis, "limits_deg": list(limits[i]),
                 "link": link}
        if actuators[i]:
            joint["actuator"] = actuators[i]
        joints.append(joint)
    design = {"name": name, "format": 1,
              "mount": {"xyz_m": list(mount_xyz_m), "rpy_deg": list(mount_rpy_deg)},
              "joints": joints,
              "tool": {"xyz_m": [lengths[2], 0.0, 0.0], "payload_kg": float(payload_kg)}}
    return Arm.from_dict(design)
