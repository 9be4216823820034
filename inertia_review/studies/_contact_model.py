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


from dataclasses import dataclass, field

import numpy as np

from ._body_regions import BodyRegion, _region
from ._cautions import CONTACT_CAUTION

__all__ = ["reduced_mass", "transient_energy_limit", "transient_speed_limit",
           "simplified_effective_mass", "ContactSpeed", "contact_speed", "permissible_speed",
           "EFFECTIVE_MASS_MODELS"]

#: Ways to obtain the robot's effective mass m_R.
EFFECTIVE_MASS_MODELS = ("apparent", "simplified")


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
    from ..core._api import mass_along

    _check_model(effective_mass)
    region = _region(body_region, regions)
    m_along = np.asarray(mass_along(arm, q, direction))    # validates q and direction
    if effective_mass == "simplified":
        m_r = np.full(m_along.shape, _simplified_mass(arm))
    else:
        m_r = m_along
    return contact_speed(region, m_r, mass_model=effective_mass,
                         direction=np.asarray(direction, float))


