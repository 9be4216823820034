"""Permissible speeds for transient contact with a person (private module; import from the package).

The transient-contact model of power-and-force limiting, ISO/TS 15066:2016 Annex A
(informative), clause A.3 (equation numbers not confirmed; references.md item 6, [S]):

- reduced mass of the two-body system, mu = (1/m_H + 1/m_R)^-1 [kg];
- energy the body region can take, E = F^2 / (2 k) = 1/2 mu v^2 [J], with k = K * 1000 [N/m];
- permissible relative speed, the lower of two routes:
  force route v_F = F_T / sqrt(mu k) and pressure route v_p = p_T A / sqrt(mu k) [m/s],
  with F_T the region's transient force [N], p_T the transient pressure of the body area
  [N/cm^2] and A the contact area [cm^2] (the smaller of the robot's and the body's contact
  surface). Both routes share sqrt(mu k), so the pressure route governs exactly when
  A < A* = F_T / p_T (the crossover area), whatever the robot mass.

m_H and K come from the body-region table (``data/body_regions.toml``, editable); the
robot's effective mass m_R is by default the arm's posture- and direction-dependent
apparent mass along the direction of motion (``ir.mass_along``, Khatib 1995). The
simplified estimate m_R = M/2 + m_L is available for comparison only: it can be
non-conservative (references.md item 6, [D]).

Every result carries ``CONTACT_CAUTION``: these are design-stage estimates, not a
validation. The governing body area of a region is the one with the lowest transient
pressure unless the caller names one (``body_area``); every result says which route and
which area governed.
"""


from dataclasses import dataclass, field
from numbers import Real

import numpy as np

from ._body_regions import BodyArea, BodyRegion, _region
from ._cautions import CONTACT_CAUTION

__all__ = ["reduced_mass", "transient_energy_limit", "transient_speed_limit",
           "pressure_speed_limit", "ROUTES",
           "simplified_effective_mass", "ContactSpeed", "contact_speed", "permissible_speed",
           "EFFECTIVE_MASS_MODELS"]

#: Ways to obtain the robot's effective mass m_R.
EFFECTIVE_MASS_MODELS = ("apparent", "simplified")

#: The routes of the transient-contact model; index = code in ``governing_route`` of a map.
ROUTES = ("force", "pressure")

#: Contact areas of physical sense [cm^2]: 0.01 mm^2 (a needle tip) to 1 m^2.
CONTACT_AREA_LIMITS_CM2 = (1.0e-4, 1.0e4)


def _contact_area(contact_area_cm2):
    """The contact area [cm^2] as float, checked (required: no default)."""
    if contact_area_cm2 is None:
        raise ValueError("`contact_area_cm2` is required: the smaller of the robot's and the "
                         "body's contact surface [cm^2] (ISO/TS 15066:2016 Annex A); the "
                         "pressure route governs for small areas (edges, fingertips, below "
                         "about 1 cm^2)")
    if isinstance(contact_area_cm2, (bool, np.bool_)) or not isinstance(contact_area_cm2, Real):
        raise ValueError(f"`contact_area_cm2` must be one number [cm^2]; got {contact_area_cm2!r}")
    a = float(contact_area_cm2)
    lo, hi = CONTACT_AREA_LIMITS_CM2
    if not (lo <= a <= hi):
        raise ValueError(f"`contact_area_cm2` must be between {lo:g} cm^2 (0.01 mm^2) and "
                         f"{hi:g} cm^2 (1 m^2); got {a:g}")
    return a


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


def pressure_speed_limit(pressure_Npcm2, contact_area_cm2, spring_constant_Npmm, body_mass_kg,
                         robot_mass_kg):
    """Pressure route of the permissible speed, v_p = p A / sqrt(mu k) [m/s], broadcasting.

    p [N/cm^2] times A [cm^2] is the force [N] the area may take; mu = reduced mass,
    k = K * 1000 [N/m] (ISO/TS 15066:2016 Annex A, clause A.3 [S]).
    """
    p = _positive("pressure_Npcm2", pressure_Npcm2)
    area = _positive("contact_area_cm2", contact_area_cm2)
    return transient_speed_limit(p * area, spring_constant_Npmm, body_mass_kg, robot_mass_kg)


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

    ``speed_mps`` = min(``force_speed_mps``, ``pressure_speed_mps``), the lower of the force
    and pressure routes; ``governing_route`` ('force' or 'pressure') says which, for the
    body area ``body_area`` and the contact area ``contact_area_cm2``. ``speed_mps`` is 0
    (not NaN) where transient contact is not permitted, with the reason in ``reason``.
    ``caution`` is the text that must be shown with these numbers.
    """

    body_region: BodyRegion
    effective_mass_kg: np.ndarray   # m_R [kg]
    reduced_mass_kg: np.ndarray     # mu [kg]; NaN where not permitted
    energy_limit_J: float           # E_max = min(F_T, p_T A)^2 / (2 k); 0 where not permitted
    speed_mps: np.ndarray           # v_max [m/s], the minimum over routes
    mass_model: str                 # "apparent", "simplified" or "given"
    direction: np.ndarray | None = None
    reason: str = ""
    caution: str = field(default=CONTACT_CAUTION)
    body_area: BodyArea | None = None
    contact_area_cm2: float = float("nan")
    force_speed_mps: np.ndarray | None = None       # F_T / sqrt(mu k); 0 where not permitted
    pressure_speed_mps: np.ndarray | None = None    # p_T A / sqrt(mu k); 0 where not permitted
    governing_route: str = ""                       # "force" or "pressure" ("" if not permitted)
    crossover_area_cm2: float | None = None         # A* = F_T / p_T

    def route_text(self):
        """Which route and area governed, in words."""
        if not self.permitted:
            return "not permitted"
        a = self.body_area
        return (f"{self.governing_route} route governs (body area {a.name} '{a.key}', "
                f"p_T = {a.transient_pressure_Npcm2:g} N/cm^2, contact area "
                f"{self.contact_area_cm2:g} cm^2; the pressure route governs below "
                f"A* = F_T / p_T = {self.crossover_area_cm2:.4g} cm^2)")

    @property
    def permitted(self):
        return self.body_region.transient_permitted

    def text(self):
        r = self.body_region
        lines = ["Permissible transient-contact speed (ISO/TS 15066:2016 Annex A model, lower "
                 "of the force and pressure routes)",
                 f"  body region: {r.describe()}",
                 f"  body area: {self.body_area.describe()}",
                 f"  contact area A: {self.contact_area_cm2:g} cm^2",
                 f"  robot effective mass m_R ({self.mass_model}): "
                 f"{_summary(self.effective_mass_kg, 'kg')}"]
        if self.direction is not None and np.asarray(self.direction).size == 3:
            lines.append(f"  direction of motion: {np.round(self.direction, 6).tolist()}")
        if self.permitted:
            lines += [f"  reduced mass mu: {_summary(self.reduced_mass_kg, 'kg')}",
                      f"  energy limit E = min(F_T, p_T A)^2/(2k): {self.energy_limit_J:.4g} J",
                      f"  force route F_T/sqrt(mu k): {_summary(self.force_speed_mps, 'm/s')}",
                      f"  pressure route p_T A/sqrt(mu k): "
                      f"{_summary(self.pressure_speed_mps, 'm/s')}",
                      f"  permissible speed v_max (minimum): {_summary(self.speed_mps, 'm/s')}",
                      f"  {self.route_text()}"]
        else:
            lines.append(f"  NOT PERMITTED: {self.reason}")
        lines += ["", self.caution]
        return "\n".join(lines)

    __repr__ = text
    __str__ = text


def contact_speed(body_region, robot_mass_kg, *, contact_area_cm2=None, body_area=None,
                  regions=None, mass_model="given", direction=None):
    """Permissible speed of transient contact for given robot effective masses.

    Parameters
    ----------
    body_region : str or BodyRegion
        Region key of the table (e.g. ``'hand'``) or a region.
    robot_mass_kg : array_like
        Robot effective mass m_R [kg] (> 0; inf allowed).
    contact_area_cm2 : float
        Required. Contact area A [cm^2]: the smaller of the robot's and the body's contact
        surface (ISO/TS 15066:2016 Annex A [S]); 1e-4 to 1e4 cm^2.
    body_area : str, optional
        Key of a body area of the region (e.g. ``'palm'``); default the area with the
        lowest transient pressure (conservative when any area of the region can be hit).
    regions : BodyRegions or path, optional
        Table to look the key up in (default: the shipped table).

    Returns
    -------
    ContactSpeed
        ``speed_mps`` = min(F_T, p_T A) / sqrt(mu k), the lower of the force and pressure
        routes, with ``governing_route``; 0 with a reason where transient contact with the
        region is not permitted. Carries the caution text.
    """
    region = _region(body_region, regions)
    area_cm2 = _contact_area(contact_area_cm2)
    area = region.area(body_area)
    m_r = _positive("robot_mass_kg", robot_mass_kg, allow_inf=True)
    if region.transient_permitted:
        mu = np.asarray(reduced_mass(region.effective_mass_kg, m_r))
        k = region.spring_constant_Npmm
        v_force = np.asarray(transient_speed_limit(region.transient_force_N, k,
                                                   region.effective_mass_kg, m_r))
        v_press = np.asarray(pressure_speed_limit(area.transient_pressure_Npcm2, area_cm2, k,
                                                  region.effective_mass_kg, m_r))
        f_press = area.transient_pressure_Npcm2 * area_cm2
        route = "pressure" if f_press < region.transient_force_N else "force"
        speed = np.minimum(v_force, v_press)
        energy = float(transient_energy_limit(min(region.transient_force_N, f_press), k))
        crossover = region.crossover_area_cm2(area.key)
        reason = ""
    else:
        mu = np.full(m_r.shape, np.nan)
        speed = v_force = v_press = np.zeros(m_r.shape)
        energy, route, crossover = 0.0, "", None
        reason = region.not_permitted_reason()

    def out(a):
        return a[()] if a.ndim == 0 else a

    return ContactSpeed(region, out(m_r), out(mu), energy, out(speed), mass_model,
                        None if direction is None else np.asarray(direction, float), reason,
                        body_area=area, contact_area_cm2=area_cm2, force_speed_mps=out(v_force),
                        pressure_speed_mps=out(v_press), governing_route=route,
                        crossover_area_cm2=crossover)


def _simplified_mass(arm):
    payload = float(arm.to_dict()["tool"]["payload_kg"])
    return float(simplified_effective_mass(arm.moving_mass - payload, payload))


def _check_model(effective_mass):
    if effective_mass not in EFFECTIVE_MASS_MODELS:
        raise ValueError(f"'{effective_mass}' is not a valid effective_mass; supported values "
                         f"are {', '.join(EFFECTIVE_MASS_MODELS)} ('apparent' is the default; "
                         "'simplified' = M/2 + m_L is for comparison only)")


def permissible_speed(arm, q, direction, body_region, *, contact_area_cm2=None, body_area=None,
                      regions=None, effective_mass="apparent"):
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
    contact_area_cm2 : float
        Required: contact area [cm^2] (see :func:`contact_speed`).
    body_area : str, optional
        Body area of the region (default: the one with the lowest transient pressure).
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
    from ..core._api import mass_along

    _check_model(effective_mass)
    region = _region(body_region, regions)
    _contact_area(contact_area_cm2)
    region.area(body_area)
    m_along = np.asarray(mass_along(arm, q, direction))    # validates q and direction
    if effective_mass == "simplified":
        m_r = np.full(m_along.shape, _simplified_mass(arm))
    else:
        m_r = m_along
    return contact_speed(region, m_r, contact_area_cm2=contact_area_cm2, body_area=body_area,
                         mass_model=effective_mass, direction=np.asarray(direction, float))


