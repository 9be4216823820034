"""Metric maps over a task region, as labelled xarray Datasets (private).

One batched pass: the region's points are solved for configurations (``_ik``), then
every metric is evaluated at once through the shared core terms.
"""

import numpy as np

from ..core import _metrics, _payload, _stiffness
from ..core._layout import to_core
from ..model._regions import Task
from ._cautions import STIFFNESS_CAUTION, TORQUE_CAUTION
from ._ik import SOLVED, STATUS, solve_positions

__all__ = ["metric_map", "METRIC_ATTRS", "STIFFNESS_VARIABLES"]

#: map variables of the linear-elastic and rating model: shown with STIFFNESS_CAUTION
STIFFNESS_VARIABLES = ("first_frequency", "sag", "stiffness_min", "payload_capacity",
                       "max_tool_speed")

#: units and one-line definitions of the map variables (also used for plot labels)
METRIC_ATTRS = {
    "isotropy": ("1", "isotropy index", "sigma_min / sigma_max of the task Jacobian A J_v "
                 "(Salisbury & Craig 1982); 0 at singular configurations"),
    "mass_ratio": ("1", "min/max apparent mass ratio", "lambda_min / lambda_max of the apparent "
                   "mass Lambda = (A J_v M^-1 J_v^T A^T)^-1 (Khatib 1987); 0 where singular"),
    "principal_mass": ("kg", "principal apparent mass", "eigenvalues of Lambda, ascending; inf "
                       "along unbounded directions"),
    "principal_direction": ("1", "principal direction", "unit eigenvectors of Lambda in the "
                            "world frame, one per principal mass"),
    "mass_along_approach": ("kg", "apparent mass along the approach direction",
                            "1 / (u^T J_v M^-1 J_v^T u) for the task's approach direction u"),
    "manipulability": ("m^k", "manipulability", "Yoshikawa (1985): sqrt(det(J_t J_t^T))"),
    "static_torque": ("N m", "gravity torque", "|g(q)|: the torque that holds the arm and "
                      "payload still"),
    "utilisation": ("1", "torque utilisation", "(|g| + a ||row_j(J_t^T Lambda)||) / peak rating: "
                    "worst case over task directions of the required acceleration a"),
    "min_margin": ("1", "torque headroom", "min over rated joints of 1 - utilisation; "
                   "negative: over the peak rating"),
    "limiting_joint": ("1", "limiting joint", "index of the joint with the least headroom"),
    "accel_capability": ("m s^-2", "acceleration capability", "largest tool acceleration "
                         "reachable in every task direction from rest within the peak ratings"),
    "near_singular": ("1", "near-singular", "isotropy index below the threshold "
                      "(attribute 'threshold'; 0.01 by default)"),
    # stiffness, vibration and payload (linear-elastic estimates; see STIFFNESS_CAUTION)
    "first_frequency": ("Hz", "first natural frequency", "lowest f of K phi = omega^2 M(q) phi "
                        "with joint springs and link beams lumped into them"),
    "sag": ("m", "tool sag", "length of the static tool displacement under gravity on the arm "
            "and payload (joint springs and link beams)"),
    "stiffness_min": ("N m^-1", "lowest tool stiffness", "smallest principal translational "
                      "stiffness of the tool point in the task (inf where rigid)"),
    "payload_capacity": ("kg", "payload capacity", "largest payload with every rated joint within "
                         "its peak torque at the required acceleration in every task direction"),
    "max_tool_speed": ("m s^-1", "largest tool speed", "largest tool speed in the task with every "
                       "joint within its rated speed (rated motor speed / gear ratio)"),
    "q": ("rad", "joint angles", "configuration solved for the point (NaN where not solved)"),
    "status": ("1", "solution status", "0 ok, 6 solved at a branch seam (both carry values); "
               "see flag_values / flag_meanings"),
}


def _attrs(name):
    units, long_name, description = METRIC_ATTRS[name]
    return {"units": units, "long_name": long_name, "description": description}


def metric_map(arm, region, *, accel_mps2=None, approach=None, payload_kg=None,
               posture="elbow_up", reference_deg=None, tool_angle_deg=None, elbow_joint=None,
               near_singular_threshold=0.01, stiffness=True,
               **solver_options):
    """Every metric at every point of a task region, as an ``xarray.Dataset``.

    Parameters
    ----------
    arm : Arm
    region : Task or region (Rectangle, Box, PointSet)
        A :class:`Task` also supplies the required acceleration, payload and approach
        direction (explicit keywords override it).
    accel_mps2 : float, optional
        Required tool acceleration in any task direction [m/s^2] for the headroom (default 0).
    approach : (3,) world vector, optional
        Direction for ``mass_along_approach`` (projected into the task span and normalised).
    payload_kg : float, optional
        Replaces the design's payload for this map.
    near_singular_threshold : float, default 0.01
        Isotropy index below which a point is flagged ``near_singular``.
    stiffness : bool, default True
        Also compute ``first_frequency``, ``sag``, ``stiffness_min`` (designs with an elastic
        joint or link), ``payload_capacity`` (rated designs) and ``max_tool_speed`` (every
        joint with a rated speed); they carry ``attrs["stiffness_caution"]``.
    posture, reference_deg, tool_angle_deg, elbow_joint, **solver_options
        Passed to :func:`inertia_review.solve_positions`.

    Returns
    -------
    xarray.Dataset
        Dimensions: the region's grid axes (``v_m``, ``u_m`` for a rectangle; ``w_m``,
        ``v_m``, ``u_m`` for a box; ``point`` for a point list) [m], plus ``joint``,
        ``principal`` and ``component``; 2-D (or 3-D) coordinates ``x_m``, ``y_m``, ``z_m``.
        Every variable has ``units``, ``long_name`` and ``description`` attributes; points
        that could not be solved hold NaN with their reason in ``status``.
    """
    import xarray as xr

    values, solution, points, grid, arm, attrs = map_arrays(
        arm, region, accel_mps2=accel_mps2, approach=approach, payload_kg=payload_kg,
        posture=posture, reference_deg=reference_deg, tool_angle_deg=tool_angle_deg,
        elbow_joint=elbow_joint, near_singular_threshold=near_singular_threshold,
        stiffness=stiffness, **solver_options)
    return _to_dataset(xr, arm, values, solution, points, grid, attrs)


def map_arrays(arm, region, *, accel_mps2=None, approach=None, payload_kg=None,
               posture="elbow_up", reference_deg=None, tool_angle_deg=None, elbow_joint=None,
               near_singular_threshold=0.01, stiffness=True,
               **solver_options):
    """The arrays behind :func:`metric_map` (flat over the grid), without building a Dataset."""
    task = region if isinstance(region, Task) else None
    if task is not None:
        region = task.region
        accel_mps2 = task.accel_mps2 if accel_mps2 is None else accel_mps2
        approach = task.approach if approach is None else approach
        payload_kg = task.payload_kg if payload_kg is None else payload_kg
    accel = 0.0 if accel_mps2 is None else float(accel_mps2)
    if not np.isfinite(accel) or accel < 0.0:
        raise ValueError(f"`accel_mps2` must be a finite number >= 0 [m/s^2]; got {accel_mps2!r}")
    if payload_kg is not None:
        arm = arm.with_values({"tool.payload_kg": float(payload_kg)})
    params = arm._params
    points, grid = region.sample()
    solver_options.setdefault("table_size", int(min(16384, max(2048, 4 * points[..., 0].size))))
    # one branch over the whole grid, by continuation (a point list has no neighbours)
    solver_options.setdefault("continuation", "grid" if region.kind in ("rectangle", "box")
                              else "none")
    solution = solve_positions(arm, points, posture=posture, reference_deg=reference_deg,
                               tool_angle_deg=tool_angle_deg, elbow_joint=elbow_joint,
                               **solver_options)
    ok = np.isin(solution.status, SOLVED)
    flat_ok = ok.reshape(-1)
    n, k = params.n, params.task_axes.shape[0]
    count = int(flat_ok.sum())

    def blank(*trailing, value=np.nan, dtype=float):
        return np.full((flat_ok.size,) + trailing, value, dtype=dtype)

    values = {
        "isotropy": blank(), "mass_ratio": blank(), "manipulability": blank(),
        "principal_mass": blank(k), "principal_direction": blank(3, k),
        "mass_along_approach": blank(), "near_singular": blank(value=False, dtype=bool),
    }
    rated = bool(np.any(np.isfinite(params.peak_torque)))
    if rated:
        values.update(static_torque=blank(n), utilisation=blank(n), min_margin=blank(),
                      limiting_joint=blank(value=-1, dtype=np.int16), accel_capability=blank())
    if count:
        (qc,), _ = to_core(solution.q.reshape(-1, n)[flat_ok])
        terms = _metrics.task_terms(params, qc)
        iso = _metrics.isotropy_index(params, terms)
        values["isotropy"][flat_ok] = iso
        values["near_singular"][flat_ok] = iso < near_singular_threshold
        values["mass_ratio"][flat_ok] = _metrics.mass_ratio(params, terms)
        values["manipulability"][flat_ok] = _metrics.manipulability(params, terms)
        masses, directions = _metrics.principal_masses(params, terms)
        values["principal_mass"][flat_ok] = masses.T
        values["principal_direction"][flat_ok] = np.moveaxis(directions, -1, 0)
        if approach is not None:
            u = np.asarray(approach, float)
            w = params.task_axes @ u
            if np.linalg.norm(w) < 1e-9:
                raise ValueError(f"approach direction {u.tolist()} has no part in the task span "
                                 f"{params.task_axes.tolist()}")
            w = (w / np.linalg.norm(w))[:, None] * np.ones((1, count))
            values["mass_along_approach"][flat_ok] = _metrics.mass_along(params, terms, w)
        if rated:
            head = _metrics.torque_headroom(params, terms, accel)
            values["static_torque"][flat_ok] = head.static_torque_Nm.T
            values["utilisation"][flat_ok] = head.utilisation.T
            values["min_margin"][flat_ok] = head.min_margin
            values["limiting_joint"][flat_ok] = head.limiting_joint
            values["accel_capability"][flat_ok] = _metrics.acceleration_capability(params, terms)
        if stiffness:
            _stiffness_values(params, terms, accel, values, flat_ok)
    elif stiffness:
        _stiffness_values(params, None, accel, values, flat_ok)
    if approach is None:
        del values["mass_along_approach"]
    attrs = {
        "design": arm.name, "region_kind": region.kind,
        "cell_measure": region.cell_measure,
        "cell_measure_units": {"rectangle": "m^2", "box": "m^3", "points": "1"}[region.kind],
        "accel_mps2": accel, "posture": posture,
        "near_singular_threshold": float(near_singular_threshold),
        "payload_kg": float(arm.to_dict()["tool"]["payload_kg"]),
        "moving_mass_kg": arm.moving_mass,
        "gravity_mps2": list(map(float, params.gravity)),
        "task_axes": params.task_axes.ravel().tolist(),
        "caution": TORQUE_CAUTION,
    }
    if region.kind in ("rectangle", "box"):
        attrs["region_center_m"] = list(map(float, region.center_m))
        attrs["region_axes"] = [float(x) for row in region.axes for x in row]
    if approach is not None:
        attrs["approach"] = list(map(float, approach))
    if any(key in values for key in STIFFNESS_VARIABLES):
        attrs["stiffness_caution"] = STIFFNESS_CAUTION
    values["status"] = solution.status.reshape(-1)
    return values, solution, points, grid, arm, attrs



def _stiffness_values(params, terms, accel, values, flat_ok, names=STIFFNESS_VARIABLES):
    """Stiffness, vibration, payload and speed variables where the design defines them: an
    elastic part for the first three, a peak rating for the payload, a rated speed on every
    joint for the tool speed (a variable the design cannot define is left out of the map).
    ``names`` restricts them to a subset (the batched variants compute only what they score)."""
    size = flat_ok.size
    elastic = _stiffness.has_compliance(params)
    rated = bool(np.any(np.isfinite(params.peak_torque)))
    speeds = bool(np.all(np.isfinite(params.rated_speed)))
    for key, wanted in (("first_frequency", elastic), ("sag", elastic), ("stiffness_min", elastic),
                        ("payload_capacity", rated), ("max_tool_speed", speeds)):
        if wanted and key in names:
            values[key] = np.full(size, np.nan)
    if terms is None:
        return
    if "first_frequency" in values:
        modes = _stiffness.natural_modes(params, terms.frames, terms.mass, terms.jacobian)
        values["first_frequency"][flat_ok] = modes.frequencies_hz[0]
    if "sag" in values:
        sag = _stiffness.gravity_sag(params, terms.frames, terms.jacobian)
        values["sag"][flat_ok] = np.sqrt(np.sum(sag * sag, axis=0))
    if "stiffness_min" in values:
        comp = _stiffness.tool_compliance(params, terms.frames, terms.jacobian)
        a = params.task_axes
        vals, _ = _metrics.sym_eig(np.einsum("ki,ijN,lj->klN", a, comp, a))
        values["stiffness_min"][flat_ok] = np.where(vals[-1] > 0.0, 1.0 / np.where(
            vals[-1] > 0.0, vals[-1], 1.0), np.inf)
    if "payload_capacity" in values:
        values["payload_capacity"][flat_ok] = _payload.payload_capacity(params, terms, accel)
    if "max_tool_speed" in values:
        values["max_tool_speed"][flat_ok] = _payload.max_tool_speed(params, terms)


def _to_dataset(xr, arm, values, solution, points, grid, attrs):
    params = arm._params
    shape = points.shape[:-1]
    n = params.n
    k = params.task_axes.shape[0]
    dims = tuple(grid)
    coords = {name: (name, axis, {"units": "m" if name != "point" else "1"})
              for name, axis in grid.items()}
    for i, name in enumerate(("x_m", "y_m", "z_m")):
        coords[name] = (dims, points[..., i], {"units": "m", "long_name": f"world {name[0]}"})
    coords["joint"] = ("joint", list(arm.joint_names))
    coords["principal"] = ("principal", np.arange(k))
    coords["component"] = ("component", ["x", "y", "z"])
    data_vars = {}
    for name, arr in values.items():
        if name == "status":
            continue
        trailing = arr.shape[1:]
        if name in ("static_torque", "utilisation"):
            var_dims = dims + ("joint",)
        elif name == "principal_mass":
            var_dims = dims + ("principal",)
        elif name == "principal_direction":
            var_dims = dims + ("component", "principal")
        else:
            var_dims = dims
        data_vars[name] = (var_dims, arr.reshape(shape + trailing), _attrs(name))
    data_vars["q"] = (dims + ("joint",), solution.q.reshape(shape + (n,)), _attrs("q"))
    data_vars["near_singular"][2]["threshold"] = attrs["near_singular_threshold"]
    data_vars["near_singular"][2]["description"] = (
        f"isotropy index below {attrs['near_singular_threshold']:g}")
    status_attrs = _attrs("status")
    status_attrs.update(flag_values=list(STATUS), flag_meanings=" ".join(STATUS.values()))
    data_vars["status"] = (dims, solution.status.reshape(shape), status_attrs)
    ds = xr.Dataset(data_vars, coords=coords)
    ds.attrs.update(attrs)
    return ds
