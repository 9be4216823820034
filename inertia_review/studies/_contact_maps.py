"""Permissible contact speeds over a task region, and checks of planned speeds (private).

Maps and checks call the transient-contact model of ``_contact_model`` with the apparent mass
along the motion from the core; every result carries ``CONTACT_CAUTION``.
"""

import json
from dataclasses import dataclass, field

import numpy as np

from ._body_regions import (
    NOT_PERMITTED,
    BodyRegion,
    BodyRegions,
    _region,
    load_body_regions,
)
from ._cautions import CONTACT_CAUTION
from ._ik_status import SOLVED
from ._contact_model import (
    _check_model,
    _simplified_mass,
    contact_speed,
    transient_energy_limit,
)

__all__ = ["contact_speed_map", "SpeedCheck", "check_speeds"]


def _project_direction(arm, direction, what="direction"):
    u = np.asarray(direction, dtype=np.float64)
    if u.shape != (3,) or not np.all(np.isfinite(u)):
        raise ValueError(f"`{what}` must be a finite world vector of 3 entries; got {u.tolist()}")
    axes = arm.task_axes
    w = axes @ u
    norm = float(np.linalg.norm(w))
    if norm < 1e-9:
        raise ValueError(f"`{what}` {u.tolist()} has no part in the task span {axes.tolist()}")
    return (w / norm) @ axes


def _region_attrs(region, note, prefix="body_region"):
    ft = region.transient_force_N
    return {
        prefix: region.key,
        f"{prefix}_name": region.name,
        f"{prefix}_effective_mass_kg": region.effective_mass_kg,
        f"{prefix}_spring_constant_Npmm": region.spring_constant_Npmm,
        f"{prefix}_quasi_static_force_N": region.quasi_static_force_N,
        f"{prefix}_transient_force_N": NOT_PERMITTED if ft is None else ft,
        f"{prefix}_source": region.source,
        f"{prefix}_status": region.status,
        f"{prefix}_note": note,
    }


def _region_from_attrs(attrs, prefix="body_region"):
    ft = attrs[f"{prefix}_transient_force_N"]
    return BodyRegion(
        key=str(attrs[prefix]), name=str(attrs[f"{prefix}_name"]),
        effective_mass_kg=float(attrs[f"{prefix}_effective_mass_kg"]),
        spring_constant_Npmm=float(attrs[f"{prefix}_spring_constant_Npmm"]),
        quasi_static_force_N=float(attrs[f"{prefix}_quasi_static_force_N"]),
        transient_force_N=None if isinstance(ft, str) else float(ft),
        source=str(attrs[f"{prefix}_source"]), status=str(attrs[f"{prefix}_status"]))


def _table_note(regions):
    table = load_body_regions() if regions is None else (
        regions if isinstance(regions, BodyRegions) else load_body_regions(regions))
    return table.note


_SPEED_ATTRS = {
    "effective_mass": {
        "units": "kg", "long_name": "robot effective mass m_R",
        "description": "mass the tool point presents along the direction of motion: the "
                       "apparent mass 1 / (u^T J_v M^-1 J_v^T u) (Khatib 1995), or M/2 + m_L "
                       "with effective_mass_model 'simplified'; inf where unbounded"},
    "permissible_speed": {
        "units": "m s^-1", "long_name": "permissible transient-contact speed",
        "description": "v_max = F_T / sqrt(mu k), mu = (1/m_H + 1/m_R)^-1, k = K * 1000 "
                       "(ISO/TS 15066:2016 Annex A, informative); 0 where transient contact "
                       "is not permitted; a design-stage estimate, not a validation"},
}


def contact_speed_map(arm, region_or_task=None, body_region="hand", *, direction=None,
                      regions=None, effective_mass="apparent", payload_kg=None, **map_options):
    """Permissible transient-contact speed over a task region, as an ``xarray.Dataset``.

    Parameters
    ----------
    arm : Arm
    region_or_task : Task or region, optional
        As for :func:`inertia_review.metric_map` (default: the design's own task).
    body_region : str or BodyRegion
        Body region that may be hit.
    direction : (3,) world vector, optional
        Direction of motion at contact (projected into the task span and normalised);
        default: the task's approach direction.
    regions : BodyRegions or path, optional
        Body-region table (default: the shipped one).
    effective_mass : {'apparent', 'simplified'}
        See :func:`permissible_speed`.
    payload_kg, **map_options
        Passed to :func:`inertia_review.metric_map` (posture, solver options, ...).

    Returns
    -------
    xarray.Dataset
        The map's grid coordinates, ``q``, ``status`` and ``near_singular``, and
        ``effective_mass`` [kg] and ``permissible_speed`` [m/s] (NaN where a point was not
        solved). ``attrs`` hold the body region, its values and their source, the direction,
        the design (``design_json``, used by :func:`check_speeds`) and ``caution``.
    """
    import xarray as xr

    from ..model._regions import Task
    from ._maps import metric_map

    _check_model(effective_mass)
    if region_or_task is None:
        region_or_task = arm.task
        if region_or_task is None:
            raise ValueError(f"design '{arm.name}' has no [task]; give a region or task")
    task = region_or_task if isinstance(region_or_task, Task) else None
    if direction is None:
        direction = None if task is None else task.approach
        if direction is None:
            raise ValueError("no direction of motion: give `direction` (world vector) or a "
                             "task with an approach direction")
    u = _project_direction(arm, direction)
    region = _region(body_region, regions)
    note = _table_note(regions)
    if payload_kg is None and task is not None:
        payload_kg = task.payload_kg
    arm_used = arm if payload_kg is None else arm.with_values({"tool.payload_kg": float(payload_kg)})

    base = metric_map(arm_used, region_or_task, approach=u, **map_options)
    solved = (base["status"] == 0).values
    m_along = base["mass_along_approach"].values
    if effective_mass == "simplified":
        m_r = np.where(solved, _simplified_mass(arm_used), np.nan)
    else:
        m_r = m_along
    speed = np.full(m_r.shape, np.nan)
    if np.any(solved):
        speed[solved] = np.asarray(contact_speed(region, m_r[solved]).speed_mps)
    dims = base["status"].dims
    ds = xr.Dataset(
        {"effective_mass": (dims, m_r, dict(_SPEED_ATTRS["effective_mass"])),
         "permissible_speed": (dims, speed, dict(_SPEED_ATTRS["permissible_speed"])),
         "q": base["q"], "status": base["status"], "near_singular": base["near_singular"]},
        coords=base.coords)
    keep = ("design", "region_kind", "cell_measure", "cell_measure_units", "posture",
            "payload_kg", "moving_mass_kg", "gravity_mps2", "task_axes", "region_center_m",
            "region_axes")
    ds.attrs.update({k: base.attrs[k] for k in keep if k in base.attrs})
    ds.attrs.update(_region_attrs(region, note))
    ds.attrs.update({
        "transient_contact": ("permitted" if region.transient_permitted
                              else f"not permitted: {region.not_permitted_reason()}"),
        "energy_limit_J": (float(transient_energy_limit(region.transient_force_N,
                                                        region.spring_constant_Npmm))
                           if region.transient_permitted else 0.0),
        "direction": [float(x) for x in u],
        "effective_mass_model": effective_mass,
        "design_json": json.dumps(arm_used.to_dict()),
        "caution": CONTACT_CAUTION,
    })
    return ds


# ----------------------------------------------------------------------------- speed checks
@dataclass(frozen=True, repr=False, eq=False)
class SpeedCheck:
    """Tool speeds checked against the permissible transient-contact speed, per sample.

    ``margin_mps`` = permissible - actual [m/s] (NaN where the point was not solved),
    ``ratio`` = actual / permissible, ``ok`` per sample (False where not solved, and
    everywhere for a region where transient contact is not permitted), ``worst`` the
    index of the solved sample with the smallest margin (-1 if none was solved).
    ``worst_case_direction`` marks samples without a direction of motion (zero speed or
    no path), where the largest principal apparent mass was used.
    """

    points_m: np.ndarray
    speeds_mps: np.ndarray
    directions: np.ndarray
    worst_case_direction: np.ndarray
    q: np.ndarray
    status: np.ndarray
    effective_mass_kg: np.ndarray
    permissible_speed_mps: np.ndarray
    margin_mps: np.ndarray
    ratio: np.ndarray
    ok: np.ndarray
    worst: int
    body_region: BodyRegion
    mass_model: str
    reason: str = ""
    caution: str = field(default=CONTACT_CAUTION)

    @property
    def all_ok(self):
        return bool(np.all(self.ok))

    @property
    def unsolved(self):
        return int(np.sum(self.status != 0))

    def text(self):
        n = self.ok.size
        lines = ["Transient-contact speed check (ISO/TS 15066:2016 Annex A model, force route)",
                 f"  body region: {self.body_region.describe()}",
                 f"  effective mass model: {self.mass_model}",
                 f"  samples: {n}; within the permissible speed: {int(np.sum(self.ok))}; "
                 f"not solved: {self.unsolved}"]
        if self.reason:
            lines.append(f"  NOT PERMITTED: {self.reason}")
        if self.worst >= 0:
            i = np.unravel_index(self.worst, self.ok.shape) if self.ok.ndim else ()
            lines.append(
                f"  worst sample {self.worst}: point {np.round(self.points_m[i], 6).tolist()} m, "
                f"speed {float(self.speeds_mps[i]):.4g} m/s, permissible "
                f"{float(self.permissible_speed_mps[i]):.4g} m/s, margin "
                f"{float(self.margin_mps[i]):.4g} m/s, m_R {float(self.effective_mass_kg[i]):.4g} kg")
        lines.append(f"  verdict: {'all samples within' if self.all_ok else 'NOT all samples within'}"
                     " the estimated permissible speed")
        lines += ["", self.caution]
        return "\n".join(lines)

    __repr__ = text
    __str__ = text


def check_speeds(speed_map_or_arm, points, speeds, *, q=None, directions=None,
                 body_region=None, regions=None, effective_mass=None, posture=None,
                 **solver_options):
    """Check tool speeds along a path against the permissible transient-contact speed.

    Parameters
    ----------
    speed_map_or_arm : Arm or xarray.Dataset
        An arm, or a map from :func:`contact_speed_map`, which supplies the design, the body
        region, the effective-mass model and the posture (keywords override them).
    points : array_like, shape (..., 3) or None
        Tool points [m] (None with ``q``: taken from ``arm.tool_position(q)``).
    speeds : array_like, shape (...,) or (..., 3)
        Tool speeds [m/s], or tool velocity vectors [m/s] (then the direction of motion is
        the velocity's).
    q : array_like, shape (..., n), optional
        The configurations of the samples (e.g. from a move cycle); else solved from the
        points with :func:`inertia_review.solve_positions`. Given both, they must agree
        within 1e-6 m.
    directions : array_like, shape (..., 3), optional
        Directions of motion (with scalar speeds). Default: along the path, from central
        differences of a (N, 3) point sequence. Directions are projected into the task span
        and normalised; where none is defined (zero length), the largest principal apparent
        mass is used (the worst case over directions).
    body_region, regions, effective_mass
        As for :func:`permissible_speed`.
    posture, **solver_options
        Passed to :func:`inertia_review.solve_positions`.

    Returns
    -------
    SpeedCheck
        Per-sample effective mass, permissible speed, margin and ratio; the worst sample;
        the caution text.
    """
    from ..core._api import mass_along, principal_masses
    from ..model._arm import Arm
    from ._ik import solve_positions

    if isinstance(speed_map_or_arm, Arm):
        arm = speed_map_or_arm
        if body_region is None:
            raise ValueError("give `body_region` (e.g. 'hand') when checking against an arm")
        region = _region(body_region, regions)
        model = "apparent" if effective_mass is None else effective_mass
        posture = "elbow_up" if posture is None else posture
    elif hasattr(speed_map_or_arm, "attrs") and "design_json" in speed_map_or_arm.attrs:
        attrs = speed_map_or_arm.attrs
        arm = Arm.from_dict(json.loads(attrs["design_json"]))
        region = (_region_from_attrs(attrs) if body_region is None
                  else _region(body_region, regions))
        model = attrs["effective_mass_model"] if effective_mass is None else effective_mass
        posture = attrs.get("posture", "elbow_up") if posture is None else posture
    else:
        raise TypeError("`speed_map_or_arm` must be an Arm or a Dataset from "
                        f"contact_speed_map; got {type(speed_map_or_arm).__name__}")
    _check_model(model)

    n = arm.dof
    if q is not None:
        q = arm._q(q)
        from_q = arm.tool_position(q)
        if points is None:
            points = from_q
    if points is None:
        raise ValueError("give `points` (..., 3) [m] or `q` (..., n) [rad]")
    pts = np.asarray(points, dtype=np.float64)
    if pts.ndim == 0 or pts.shape[-1] != 3 or not np.all(np.isfinite(pts)):
        raise ValueError(f"Expected finite `points` with shape (..., 3) [m], got {pts.shape}.")
    batch = pts.shape[:-1]
    if q is not None:
        if q.shape[:-1] != batch:
            raise ValueError(f"`q` has {q.shape[:-1]} samples but `points` has {batch}")
        off = np.linalg.norm(from_q - pts, axis=-1)
        if np.any(off > 1e-6):
            raise ValueError(f"`q` and `points` disagree: tool position differs by up to "
                             f"{float(off.max()):.3g} m (limit 1e-6 m)")

    v = np.asarray(speeds, dtype=np.float64)
    if not np.all(np.isfinite(v)):
        raise ValueError("`speeds` must be finite")
    if v.shape == batch + (3,):
        speed = np.linalg.norm(v, axis=-1)
        if directions is None:
            directions = v
    elif v.shape == batch:
        speed = v
    else:
        raise ValueError(f"`speeds` must have shape {batch} (speeds [m/s]) or {batch + (3,)} "
                         f"(velocity vectors [m/s]) to match `points`; got {v.shape}")
    if np.any(speed < 0):
        raise ValueError("`speeds` must be >= 0 [m/s] (give velocity vectors for directions)")

    if directions is None:
        if pts.ndim == 2 and pts.shape[0] >= 2:
            directions = np.gradient(pts, axis=0)
        else:
            directions = np.zeros(batch + (3,))
    d = np.broadcast_to(np.asarray(directions, dtype=np.float64), batch + (3,))
    if not np.all(np.isfinite(d)):
        raise ValueError("`directions` must be finite")
    axes = arm.task_axes
    w = d @ axes.T
    d_norm = np.linalg.norm(d, axis=-1)
    w_norm = np.linalg.norm(w, axis=-1)
    off = np.linalg.norm(d - w @ axes, axis=-1)
    if np.any(off > 1e-6 * np.maximum(d_norm, 1e-300) + 1e-12):
        i = int(np.argmax(off / np.maximum(d_norm, 1e-300)))
        raise ValueError(f"direction of motion of sample {i} leaves the task span "
                         f"{axes.tolist()}: the tool point cannot move that way")
    known = w_norm > 1e-12 * np.maximum(d_norm, 1.0) + 1e-15
    u = np.where(known[..., None], (w / np.where(known, w_norm, 1.0)[..., None]) @ axes, np.nan)

    if q is None:
        solution = solve_positions(arm, pts, posture=posture, **solver_options)
        q, status = solution.q, solution.status
    else:
        status = np.zeros(batch, dtype=np.int8)
    solved = np.isin(status, SOLVED)

    m_r = np.full(batch, np.nan)
    if model == "simplified":
        m_r[solved] = _simplified_mass(arm)
    else:
        a = solved & known
        if np.any(a):
            m_r[a] = mass_along(arm, q[a], u[a])
        b = solved & ~known
        if np.any(b):
            m_r[b] = principal_masses(arm, q[b]).masses[..., -1]
    perm = np.full(batch, np.nan)
    if np.any(solved):
        perm[solved] = contact_speed(region, m_r[solved]).speed_mps
    margin = perm - speed
    with np.errstate(divide="ignore", invalid="ignore"):
        ratio = np.where(perm > 0, speed / np.where(perm > 0, perm, 1.0),
                         np.where(speed > 0, np.inf, 0.0))
    ratio = np.where(solved, ratio, np.nan)
    ok = solved & (margin >= 0.0) & region.transient_permitted
    if np.any(solved):
        worst = int(np.nanargmin(np.where(solved, margin, np.nan).reshape(-1)))
    else:
        worst = -1
    return SpeedCheck(pts, speed, u, ~known, q, status, m_r, perm, margin, ratio, ok, worst,
                      region, model, region.not_permitted_reason())
