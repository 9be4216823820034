"""Body-region values for the transient-contact model: the editable table and its reader (private).

The shipped table is ``inertia_review/data/body_regions.toml`` (ISO/TS 15066:2016 Annex A,
Tables A.2 and A.3, from secondary transcriptions: references.md item 6, [S]); every region
keeps its source and confirmation status.

A body REGION (e.g. "Hands and fingers") carries the force values and the effective mass and
spring constant; its body AREAS (palm, forefinger pad, ...) carry the permissible pressures
(N/cm^2). The governing area of a region is the area with the lowest transient pressure,
unless the user names one.
"""

import functools
import tomllib
from collections.abc import Mapping
from importlib import resources
from pathlib import Path
from typing import NamedTuple

from ..model._errors import DesignError
from ..model._validate import (
    Problems,
    check_keys,
    get_number,
    get_string,
    get_table,
    join,
)
from ._cautions import CONTACT_CAUTION

__all__ = ["BodyArea", "BodyRegion", "BodyRegions", "load_body_regions", "NOT_PERMITTED"]

#: How a body-region file marks a region where transient contact is not permitted.
NOT_PERMITTED = "not permitted"

#: Ways to obtain the robot's effective mass m_R.
EFFECTIVE_MASS_MODELS = ("apparent", "simplified")

_FILE_KEYS = ("format", "title", "note", "source", "regions")
_REGION_KEYS = ("name", "effective_mass_kg", "spring_constant_Npmm", "quasi_static_force_N",
                "transient_force_N", "source", "status", "areas")
_AREA_KEYS = ("name", "quasi_static_pressure_Npcm2", "transient_pressure_Npcm2", "source",
              "status")


class BodyArea(NamedTuple):
    """Permissible pressures of one body area (ISO/TS 15066:2016 Annex A, Table A.2 [S]).

    ``transient_pressure_Npcm2`` is None where transient contact is not permitted.
    Pressures in N/cm^2.
    """

    key: str
    name: str
    quasi_static_pressure_Npcm2: float          # p_QS [N/cm^2]
    transient_pressure_Npcm2: float | None      # p_T [N/cm^2]; None: not permitted
    source: str
    status: str

    def describe(self):
        """One line with the values and their source."""
        pt = (NOT_PERMITTED if self.transient_pressure_Npcm2 is None
              else f"{self.transient_pressure_Npcm2:g} N/cm^2")
        return (f"{self.name} ('{self.key}'): p_QS = {self.quasi_static_pressure_Npcm2:g} N/cm^2, "
                f"p_T = {pt}; source: {self.source}; status: {self.status}")


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
    areas: tuple = ()                 # BodyArea, in file order

    @property
    def transient_permitted(self):
        """False where the table forbids transient contact."""
        return self.transient_force_N is not None

    @property
    def spring_constant_Npm(self):
        """Effective spring constant k = K * 1000 [N/m]."""
        return self.spring_constant_Npmm * 1000.0

    def area(self, body_area=None):
        """The governing body area: the one named ``body_area`` (a key), else the area with
        the lowest transient pressure (the conservative choice when any area can be hit)."""
        if not self.areas:
            raise ValueError(f"body region '{self.key}' lists no body areas with pressures: the "
                             "pressure route cannot be evaluated; add [regions."
                             f"{self.key}.areas.NAME] tables to the body-region file")
        if body_area is not None:
            for a in self.areas:
                if a.key == body_area:
                    return a
            raise ValueError(f"'{body_area}' is not a body area of region '{self.key}'; "
                             f"available areas: {', '.join(a.key for a in self.areas)}")
        permitted = [a for a in self.areas if a.transient_pressure_Npcm2 is not None]
        if not permitted:
            return self.areas[0]
        return min(permitted, key=lambda a: a.transient_pressure_Npcm2)

    def crossover_area_cm2(self, body_area=None):
        """Contact area A* = F_T / p_T [cm^2] below which the pressure route governs
        (None where transient contact is not permitted)."""
        a = self.area(body_area)
        if not self.transient_permitted or a.transient_pressure_Npcm2 is None:
            return None
        return self.transient_force_N / a.transient_pressure_Npcm2

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
        for r in self.values():
            lines.append(f"  {r.describe()}")
            lines += [f"      area {a.describe()}" for a in r.areas]
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
                                            low=_MIN_VALUE, high=_MAX_MASS_KG),
            "spring_constant_Npmm": get_number(problems, entry, "spring_constant_Npmm", path,
                                               low=_MIN_VALUE, high=_MAX_K_NPMM),
            "quasi_static_force_N": get_number(problems, entry, "quasi_static_force_N", path,
                                               low=_MIN_VALUE, high=_MAX_FORCE_N),
            "transient_force_N": _transient_force(problems, entry, path),
            "source": _nonempty_string(problems, entry, "source", path),
            "status": _nonempty_string(problems, entry, "status", path),
            "areas": _areas(problems, entry, path),
        }
        if values["transient_force_N"] is not None:
            forbidden = [a.key for a in values["areas"] if a.transient_pressure_Npcm2 is None]
            if forbidden:
                problems.add(join(path, "areas"), f"areas {forbidden} say transient contact is "
                             f"not permitted but the region gives a transient force")
        elif str(entry.get("transient_force_N", "")).strip().lower() == NOT_PERMITTED:
            allowed = [a.key for a in values["areas"] if a.transient_pressure_Npcm2 is not None]
            if allowed:
                problems.add(join(path, "areas"), f"areas {allowed} give a transient pressure "
                             f"but transient contact with the region is not permitted")
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


def _transient_value(problems, entry, key, path, unit, high):
    """A transient limit as float, None for "not permitted"; a problem otherwise."""
    field_path = join(path, key)
    value = entry.get(key, _MISSING_FT)
    if value is _MISSING_FT:
        problems.add(field_path, f'required key is missing (a value in {unit}, or "{NOT_PERMITTED}")')
        return None
    if isinstance(value, str):
        if value.strip().lower() == NOT_PERMITTED:
            return None
        problems.add(field_path, f'must be a number > 0 [{unit}] or "{NOT_PERMITTED}"; got {value!r}')
        return None
    return get_number(problems, entry, key, path, low=_MIN_VALUE, high=high)


def _transient_force(problems, entry, path):
    """F_T as float, None for "not permitted"; a problem otherwise."""
    return _transient_value(problems, entry, "transient_force_N", path, "N", _MAX_FORCE_N)


#: Bounds of physical sense for the table's values (generous; the shipped values lie far inside).
_MIN_VALUE = 1.0e-3             # smallest mass [kg], K [N/mm], force [N] or pressure [N/cm^2]
_MAX_MASS_KG = 1000.0          # effective body mass m_H
_MAX_K_NPMM = 1.0e5            # effective spring constant K [N/mm]
_MAX_FORCE_N = 1.0e5           # forces [N]
_MAX_PRESSURE_NPCM2 = 1.0e5    # pressures [N/cm^2]


def _areas(problems, entry, path):
    """The body areas of a region (at least one), as a tuple of BodyArea."""
    table = get_table(problems, entry, "areas", path, required=True)
    where = join(path, "areas")
    if table is None:
        return ()
    if not table and "areas" in entry:
        problems.add(where, "must list at least one body area")
    out = []
    for key, area in table.items():
        apath = join(where, key)
        if not isinstance(area, dict):
            problems.add(apath, "must be a table")
            continue
        check_keys(problems, area, _AREA_KEYS, apath)
        qs = get_number(problems, area, "quasi_static_pressure_Npcm2", apath, low=_MIN_VALUE,
                        high=_MAX_PRESSURE_NPCM2)
        pt = _transient_value(problems, area, "transient_pressure_Npcm2", apath, "N/cm^2",
                              _MAX_PRESSURE_NPCM2)
        if qs is not None and pt is not None and pt < qs:
            problems.add(join(apath, "transient_pressure_Npcm2"),
                         f"must be >= the quasi-static pressure {qs:g} N/cm^2; got {pt:g}")
        out.append(BodyArea(key=str(key), name=_nonempty_string(problems, area, "name", apath),
                            quasi_static_pressure_Npcm2=qs, transient_pressure_Npcm2=pt,
                            source=_nonempty_string(problems, area, "source", apath),
                            status=_nonempty_string(problems, area, "status", apath)))
    return tuple(out)


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


