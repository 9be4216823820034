"""Body-region values for the transient-contact model: the editable table and its reader (private).

The shipped table is ``inertia_review/data/body_regions.toml`` (ISO/TS 15066:2016 Annex A,
Tables A.2 and A.3, from secondary transcriptions: references.md item 6, [S]); every region
keeps its source and confirmation status.
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

__all__ = ["BodyRegion", "BodyRegions", "load_body_regions", "NOT_PERMITTED"]

#: How a body-region file marks a region where transient contact is not permitted.
NOT_PERMITTED = "not permitted"

#: Ways to obtain the robot's effective mass m_R.
EFFECTIVE_MASS_MODELS = ("apparent", "simplified")

_FILE_KEYS = ("format", "title", "note", "source", "regions")
_REGION_KEYS = ("name", "effective_mass_kg", "spring_constant_Npmm", "quasi_static_force_N",
                "transient_force_N", "source", "status")



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


