"""Permissible speeds for transient contact with a person (private module; import from the package).

The transient-contact model of power-and-force limiting, ISO/TS 15066:2016 Annex A
(informative), clause A.3 (equation numbers not confirmed; references.md item 6, [S]):

- reduced mass of the two-body system, mu = (1/m_H + 1/m_R)^-1 [kg];
- energy the body region can take, E = F^2 / (2 k) = 1/2 mu v^2 [J], with k = K * 1000 [N/m];
- permissible relative speed, v_max = F_T / sqrt(mu k) [m/s].

m_H and K come from the body-region table (``data/body_regions.toml``, editable); the
robot's effective mass m_R is by default the arm's posture- and direction-dependent
apparent mass along the direction of motion (``ir.mass_along``, Khatib 1995). The
simplified estimate m_R = M/2 + m_L is available for comparison only: it can be
non-conservative (references.md item 6, [D]).

Every result carries ``CONTACT_CAUTION``: these are design-stage estimates, not a
validation. Only the force route of the model is implemented; the pressure route
(Table A.2 pressures, contact area) is not.
"""

import functools
import json
import math
import tomllib
from collections.abc import Mapping
from dataclasses import dataclass, field
from importlib import resources
from pathlib import Path
from typing import NamedTuple

import numpy as np

from ._cautions import CONTACT_CAUTION
from ._errors import DesignError
from ._validate import Problems, check_keys, get_number, get_string, get_table, join

__all__ = ["BodyRegion", "BodyRegions", "load_body_regions", "reduced_mass",
           "transient_energy_limit", "transient_speed_limit", "simplified_effective_mass",
           "ContactSpeed", "contact_speed", "permissible_speed", "contact_speed_map",
           "SpeedCheck", "check_speeds", "NOT_PERMITTED", "EFFECTIVE_MASS_MODELS"]

#: How a body-region file marks a region where transient contact is not permitted.
NOT_PERMITTED = "not permitted"

#: Ways to obtain the robot's effective mass m_R.
EFFECTIVE_MASS_MODELS = ("apparent", "simplified")

_FILE_KEYS = ("format", "title", "note", "source", "regions")
_REGION_KEYS = ("name", "effective_mass_kg", "spring_constant_Npmm", "quasi_static_force_N",
                "transient_force_N", "source", "status")


# ----------------------------------------------------------------------------- body regions
class BodyRegion(NamedTuple):
    """Limit values of one body region for transient contact.

    ``transient_force_N`` is None where transient contact is not permitted (skull and
    forehead, face). ``source`` and ``status`` say where the values come from and how far
    they were confirmed.
    """

    key: str
    name: str
    effective_mass_kg: float          # m_H
    spring_constant_Npmm: float       # K [N/mm]
    quasi_static_force_N: float       # F_QS
    transient_force_N: float | None   # F_T, None: transient contact not permitted
    source: str
    status: str

    @property
    def transient_permitted(self):
        """False where the table forbids transient contact."""
        return self.transient_force_N is not None

    @property
    def spring_constant_Npm(self):
        """Effective spring constant k = K * 1000 [N/m]."""
        return self.spring_constant_Npmm * 1000.0

    def not_permitted_reason(self):
        """Why no permissible speed exists for this region ('' where one exists)."""
        if self.transient_permitted:
            return ""
        return (f"transient contact with the {self.name.lower()} ('{self.key}') is not "
                f"permitted (ISO/TS 15066:2016 Annex A): the permissible speed is 0 m/s; "
                f"avoid contact with the head and face altogether")

    def describe(self):
        """One line with the values and their source."""
        ft = (f"{self.transient_force_N:g} N" if self.transient_permitted else NOT_PERMITTED)
        return (f"{self.name} ('{self.key}'): m_H = {self.effective_mass_kg:g} kg, "
                f"K = {self.spring_constant_Npmm:g} N/mm, F_QS = {self.quasi_static_force_N:g} N, "
                f"F_T = {ft}; source: {self.source}; status: {self.status}")


class BodyRegions(Mapping):
    """The body-region table of a file: a read-only mapping key -> :class:`BodyRegion`.

    Attributes ``title``, ``note`` (the file-level caveat), ``source`` and ``path``.
    """

    def __init__(self, regions, *, title, note, source, path):
        self._regions = dict(regions)
        self.title = title
        self.note = note
        self.source = source
        self.path = path

    def __getitem__(self, key):
        try:
            return self._regions[key]
        except KeyError:
            raise KeyError(f"no body region '{key}' in {self.path}; available regions: "
                           f"{', '.join(self._regions)}") from None

    def __iter__(self):
        return iter(self._regions)

    def __len__(self):
        return len(self._regions)

    def __repr__(self):
        return f"<BodyRegions from {self.path}: {', '.join(self._regions)}>"

    def text(self):
        """The table as text, with the file note and the caution."""
        lines = [self.title, f"source: {self.source}", ""]
        lines += [f"  {r.describe()}" for r in self.values()]
        lines += ["", self.note, "", CONTACT_CAUTION]
        return "\n".join(lines)


def _shipped_path():
    return resources.files("inertia_review").joinpath("data", "body_regions.toml")


@functools.lru_cache(maxsize=1)
def _shipped_regions():
    ref = _shipped_path()
    return _parse_regions(ref.read_bytes(), str(ref))


def load_body_regions(path=None):
    """Read and validate a body-region table (TOML).

    Parameters
    ----------
    path : str or Path, optional
        A user's table; default the shipped ``inertia_review/data/body_regions.toml``
        (ISO/TS 15066:2016 Annex A values, informative; check against the current edition).

    Returns
    -------
    BodyRegions

    Raises
    ------
    DesignError
        Listing every problem of the file with its field path, e.g.
        ``regions.hand.spring_constant_Npmm: must be > 0; got -75``.
    """
    if path is None:
        return _shipped_regions()
    path = Path(path)
    return _parse_regions(path.read_bytes(), str(path))


def _parse_regions(raw, where):
    name = Path(where).name
    try:
        data = tomllib.loads(raw.decode("utf-8"))
    except (UnicodeDecodeError, tomllib.TOMLDecodeError) as exc:
        raise DesignError(name, [("(file)", f"not valid TOML: {exc}")]) from None
    problems = Problems()
    check_keys(problems, data, _FILE_KEYS, "")
    fmt = data.get("format")
    if "format" not in data:
        problems.add("format", "required key is missing (the supported format is 1)")
    elif isinstance(fmt, bool) or fmt != 1:
        problems.add("format", f"unsupported format {fmt!r}; the supported format is 1")
    title = get_string(problems, data, "title", "", default="Body-region limits")
    note = _nonempty_string(problems, data, "note", "")
    source = _nonempty_string(problems, data, "source", "")
    table = get_table(problems, data, "regions", "", required=True)
    regions = {}
    if table is not None and not table and "regions" in data:
        problems.add("regions", "must list at least one body region")
    for key, entry in (table or {}).items():
        path = join("regions", key)
        if not isinstance(entry, dict):
            problems.add(path, "must be a table")
            continue
        check_keys(problems, entry, _REGION_KEYS, path)
        values = {
            "name": _nonempty_string(problems, entry, "name", path),
            "effective_mass_kg": get_number(problems, entry, "effective_mass_kg", path,
                                            low=0.0, low_open=True),
            "spring_constant_Npmm": get_number(problems, entry, "spring_constant_Npmm", path,
                                               low=0.0, low_open=True),
            "quasi_static_force_N": get_number(problems, entry, "quasi_static_force_N", path,
                                               low=0.0, low_open=True),
            "transient_force_N": _transient_force(problems, entry, path),
            "source": _nonempty_string(problems, entry, "source", path),
            "status": _nonempty_string(problems, entry, "status", path),
        }
        regions[key] = BodyRegion(key=str(key), **values)
    if problems:
        raise DesignError(name, problems.items)
    return BodyRegions(regions, title=title, note=note, source=source, path=where)


def _nonempty_string(problems, table, key, path):
    value = get_string(problems, table, key, path)
    if value is not None and not value.strip():
        problems.add(join(path, key), "must not be empty")
        return None
    return value


_MISSING_FT = object()


def _transient_force(problems, entry, path):
    """F_T as float, None for "not permitted"; a problem otherwise."""
    field_path = join(path, "transient_force_N")
    value = entry.get("transient_force_N", _MISSING_FT)
    if value is _MISSING_FT:
        problems.add(field_path, f'required key is missing (a force in N, or "{NOT_PERMITTED}")')
        return None
    if isinstance(value, str):
        if value.strip().lower() == NOT_PERMITTED:
            return None
        problems.add(field_path, f'must be a number > 0 [N] or "{NOT_PERMITTED}"; got {value!r}')
        return None
    return get_number(problems, entry, "transient_force_N", path, low=0.0, low_open=True)


def _region(body_region, regions):
    """A BodyRegion from a key (looked up in ``regions``, default the shipped table) or itself."""
    if isinstance(body_region, BodyRegion):
        return body_region
    if not isinstance(body_region, str):
        raise TypeError(f"`body_region` must be a region key (str) or a BodyRegion; "
                        f"got {type(body_region).__name__}")
    table = load_body_regions() if regions is None else (
        regions if isinstance(regions, BodyRegions) else load_body_regions(regions))
    if body_region not in table:
        raise ValueError(f"'{body_region}' is not a body region of {table.path}; available "
                         f"regions: {', '.join(table)}")
    return table[body_region]


# ----------------------------------------------------------------------------- pure model
def _positive(name, value, allow_inf=False):
    arr = np.asarray(value, dtype=np.float64)
    bad = np.isnan(arr) | (arr <= 0.0)
    if not allow_inf:
        bad = bad | np.isinf(arr)
    if np.any(bad):
        got = arr[bad].flat[0]
        rule = "> 0 (inf allowed)" if allow_inf else "finite and > 0"
        raise ValueError(f"`{name}` must be {rule}; got {got}")
    return arr


def reduced_mass(body_mass_kg, robot_mass_kg):
    """Reduced mass mu = (1/m_H + 1/m_R)^-1 of body region and robot [kg], broadcasting.

    ISO/TS 15066:2016 Annex A, clause A.3 [S]. ``robot_mass_kg = inf`` (a direction the
    arm cannot be pushed in, e.g. at a singular configuration) gives mu = m_H.
    """
    m_h = _positive("body_mass_kg", body_mass_kg)
    m_r = _positive("robot_mass_kg", robot_mass_kg, allow_inf=True)
    out = 1.0 / (1.0 / m_h + 1.0 / m_r)
    return out[()] if out.ndim == 0 else out


def transient_energy_limit(force_N, spring_constant_Npmm):
    """Energy a body region can take in transient contact, E = F^2 / (2 k) [J].

    k = K * 1000 [N/m] with K in N/mm (ISO/TS 15066:2016 Annex A, clause A.3 [S]).
    """
    f = _positive("force_N", force_N)
    k = _positive("spring_constant_Npmm", spring_constant_Npmm) * 1000.0
    out = f * f / (2.0 * k)
    return out[()] if out.ndim == 0 else out


def transient_speed_limit(force_N, spring_constant_Npmm, body_mass_kg, robot_mass_kg):
    """Permissible relative speed v_max = F / sqrt(mu k) [m/s], broadcasting.

    mu = reduced mass (see :func:`reduced_mass`), k = K * 1000 [N/m]; equivalently
    1/2 mu v_max^2 = F^2 / (2 k) (ISO/TS 15066:2016 Annex A, clause A.3 [S]).
    """
    f = _positive("force_N", force_N)
    k = _positive("spring_constant_Npmm", spring_constant_Npmm) * 1000.0
    mu = np.asarray(reduced_mass(body_mass_kg, robot_mass_kg))
    out = f / np.sqrt(mu * k)
    return out[()] if out.ndim == 0 else out


def simplified_effective_mass(moving_mass_kg, payload_kg):
    """The simplified robot mass M/2 + m_L [kg], for comparison only.

    M: total mass of the robot's moving parts (without the payload), m_L: payload
    (tooling and workpiece) (ISO/TS 15066:2016 Annex A [S]). It ignores posture and
    direction and can be non-conservative; :func:`permissible_speed` uses the arm's
    apparent mass by default.
    """
    m = np.asarray(moving_mass_kg, dtype=np.float64)
    p = np.asarray(payload_kg, dtype=np.float64)
    if np.any(~np.isfinite(m) | (m < 0)) or np.any(~np.isfinite(p) | (p < 0)):
        raise ValueError(f"`moving_mass_kg` and `payload_kg` must be finite and >= 0; got "
                         f"{m.tolist()} and {p.tolist()}")
    out = m / 2.0 + p
    return out[()] if out.ndim == 0 else out


# ----------------------------------------------------------------------------- results
def _summary(values, unit, digits=4):
    arr = np.asarray(values, dtype=float)
    if arr.size == 1:
        return f"{float(arr.reshape(-1)[0]):.{digits}g} {unit}"
    finite = arr[~np.isnan(arr)]
    if finite.size == 0:
        return f"(no values; {arr.size} samples)"
    return (f"{finite.min():.{digits}g} to {finite.max():.{digits}g} {unit} over "
            f"{finite.size} of {arr.size} samples")


@dataclass(frozen=True, repr=False, eq=False)
class ContactSpeed:
    """Permissible transient-contact speed for one body region (arrays broadcast together).

    ``speed_mps`` is 0 (not NaN) where transient contact is not permitted, with the reason
    in ``reason``. ``caution`` is the text that must be shown with these numbers.
    """

    body_region: BodyRegion
    effective_mass_kg: np.ndarray   # m_R [kg]
    reduced_mass_kg: np.ndarray     # mu [kg]; NaN where not permitted
    energy_limit_J: float           # E_max = F_T^2 / (2 k); 0 where not permitted
    speed_mps: np.ndarray           # v_max [m/s]
    mass_model: str                 # "apparent", "simplified" or "given"
    direction: np.ndarray | None = None
    reason: str = ""
    caution: str = field(default=CONTACT_CAUTION)

    @property
    def permitted(self):
        return self.body_region.transient_permitted

    def text(self):
        r = self.body_region
        lines = ["Permissible transient-contact speed (ISO/TS 15066:2016 Annex A model, force route)",
                 f"  body region: {r.describe()}",
                 f"  robot effective mass m_R ({self.mass_model}): "
                 f"{_summary(self.effective_mass_kg, 'kg')}"]
        if self.direction is not None and np.asarray(self.direction).size == 3:
            lines.append(f"  direction of motion: {np.round(self.direction, 6).tolist()}")
        if self.permitted:
            lines += [f"  reduced mass mu: {_summary(self.reduced_mass_kg, 'kg')}",
                      f"  energy limit E = F_T^2/(2k): {self.energy_limit_J:.4g} J",
                      f"  permissible speed v_max: {_summary(self.speed_mps, 'm/s')}"]
        else:
            lines.append(f"  NOT PERMITTED: {self.reason}")
        lines += ["", self.caution]
        return "\n".join(lines)

    __repr__ = text
    __str__ = text


def contact_speed(body_region, robot_mass_kg, *, regions=None, mass_model="given",
                  direction=None):
    """Permissible speed of transient contact for given robot effective masses.

    Parameters
    ----------
    body_region : str or BodyRegion
        Region key of the table (e.g. ``'hand'``) or a region.
    robot_mass_kg : array_like
        Robot effective mass m_R [kg] (> 0; inf allowed).
    regions : BodyRegions or path, optional
        Table to look the key up in (default: the shipped table).

    Returns
    -------
    ContactSpeed
        ``speed_mps`` = F_T / sqrt(mu k); 0 with a reason where transient contact with the
        region is not permitted. Carries the caution text.
    """
    region = _region(body_region, regions)
    m_r = _positive("robot_mass_kg", robot_mass_kg, allow_inf=True)
    if region.transient_permitted:
        mu = np.asarray(reduced_mass(region.effective_mass_kg, m_r))
        speed = np.asarray(transient_speed_limit(region.transient_force_N,
                                                 region.spring_constant_Npmm,
                                                 region.effective_mass_kg, m_r))
        energy = float(transient_energy_limit(region.transient_force_N,
                                              region.spring_constant_Npmm))
        reason = ""
    else:
        mu = np.full(m_r.shape, np.nan)
        speed = np.zeros(m_r.shape)
        energy = 0.0
        reason = region.not_permitted_reason()
    return ContactSpeed(region, m_r[()] if m_r.ndim == 0 else m_r,
                        mu[()] if mu.ndim == 0 else mu, energy,
                        speed[()] if speed.ndim == 0 else speed, mass_model,
                        None if direction is None else np.asarray(direction, float), reason)


def _simplified_mass(arm):
    payload = float(arm.to_dict()["tool"]["payload_kg"])
    return float(simplified_effective_mass(arm.moving_mass - payload, payload))


def _check_model(effective_mass):
    if effective_mass not in EFFECTIVE_MASS_MODELS:
        raise ValueError(f"'{effective_mass}' is not a valid effective_mass; supported values "
                         f"are {', '.join(EFFECTIVE_MASS_MODELS)} ('apparent' is the default; "
                         "'simplified' = M/2 + m_L is for comparison only)")


def permissible_speed(arm, q, direction, body_region, *, regions=None,
                      effective_mass="apparent"):
    """Permissible transient-contact speed of the tool point moving along ``direction``.

    Parameters
    ----------
    arm : Arm
    q : array_like, shape (..., n)
        Joint angles [rad].
    direction : array_like, shape (..., 3)
        Direction of motion: world unit vectors in the task span (broadcast with ``q``).
    body_region : str or BodyRegion
        E.g. ``'hand'``, ``'lower_arm'``; see :func:`load_body_regions`.
    regions : BodyRegions or path, optional
        Body-region table (default: the shipped one).
    effective_mass : {'apparent', 'simplified'}, default 'apparent'
        'apparent': m_R = ``ir.mass_along(arm, q, direction)``, the apparent mass along the
        direction of motion (Khatib 1995; ``inf`` where the arm cannot be pushed that way,
        giving mu = m_H). 'simplified': M/2 + m_L, for comparison only (can be
        non-conservative).

    Returns
    -------
    ContactSpeed
        ``speed_mps`` (...,) [m/s] and ``effective_mass_kg`` (...,) [kg], with the caution.
    """
    from ._api import mass_along

    _check_model(effective_mass)
    region = _region(body_region, regions)
    m_along = np.asarray(mass_along(arm, q, direction))    # validates q and direction
    if effective_mass == "simplified":
        m_r = np.full(m_along.shape, _simplified_mass(arm))
    else:
        m_r = m_along
    return contact_speed(region, m_r, mass_model=effective_mass,
                         direction=np.asarray(direction, float))


# ----------------------------------------------------------------------------- maps
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

    from ._maps import metric_map
    from ._regions import Task

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
    from ._api import mass_along, principal_masses
    from ._arm import Arm
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
    solved = status == 0

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
