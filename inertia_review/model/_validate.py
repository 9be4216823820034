"""Validation vocabulary shared by the design reader and the region layer (private).

Each check takes the collector, the parent mapping, the key and the path of the
parent, records a problem naming the full field path and the rule it breaks, and
returns the converted value (or ``None`` when the value is unusable). Nothing
here raises on bad input; the caller raises one :class:`DesignError` listing all
problems at the end.
"""

import difflib
import functools
import math
import sys
from numbers import Real

__all__ = ["Problems", "join", "check_keys", "get_number", "get_vector", "get_vector_item",
           "get_string", "get_table", "get_list"]

_MISSING = object()


class Problems:
    """Collects ``(path, reason)`` pairs."""

    def __init__(self):
        self.items = []

    def add(self, path, reason):
        self.items.append((path, reason))

    def __bool__(self):
        return bool(self.items)

    def __len__(self):
        return len(self.items)


def join(parent, key):
    """Field path of ``key`` under ``parent`` (``''`` is the top level)."""
    if isinstance(key, int):
        return f"{parent}[{key}]"
    return f"{parent}.{key}" if parent else str(key)


def _describe(value):
    if isinstance(value, str):
        return repr(value)
    if isinstance(value, (list, tuple)):
        text = repr(list(value))
        return text if len(text) <= 60 else text[:57] + "..."
    if isinstance(value, dict):
        return "a table"
    return repr(value)


def check_keys(problems, table, allowed, path):
    """Record every key of ``table`` not in ``allowed``, with a suggestion."""
    for key in table:
        if key in allowed:
            continue
        close = difflib.get_close_matches(str(key), list(allowed), n=1, cutoff=0.6)
        hint = f"; did you mean '{close[0]}'?" if close else f"; allowed keys: {', '.join(sorted(allowed))}"
        problems.add(join(path, key), f"unknown key{hint}")


#: Bounds of physical sense, by the unit suffix of a field's name: (largest magnitude, what it
#: is). Far beyond any arm this tool reviews (common practice, no source), and small enough
#: that products of a few such values stay finite in float64. Ratings and rates divide
#: (load / rating, distance / speed): for their suffixes (``DIVISOR_SUFFIXES``) subnormal
#: magnitudes are refused too; grid spacings carry their own lower bound.
PHYSICAL_LIMITS = {
    "_m": (100.0, "100 m, far beyond any arm's size"),
    "_kg": (1.0e4, "10,000 kg"),
    "_kgm2": (1.0e4, "10,000 kg m^2"),
    "_Nm": (1.0e6, "1e6 N m"),
    "_Nm_per_rad": (1.0e10, "1e10 N m/rad"),
    "_deg": (1.0e4, "10,000 degrees"),
    "_mps": (1.0e3, "1,000 m/s"),
    "_mps2": (1.0e4, "10,000 m/s^2"),
    "_mps3": (1.0e7, "1e7 m/s^3"),
    "_dps": (1.0e6, "1e6 deg/s"),
    "_dps2": (1.0e8, "1e8 deg/s^2"),
    "_dps3": (1.0e10, "1e10 deg/s^3"),
    "_s": (1.0e6, "1e6 s"),
    "_rpm": (1.0e6, "1e6 rpm"),
    "_ratio": (1.0e6, "1e6"),
    "_Pa": (1.0e12, "1e12 Pa"),
    "_GPa": (1.0e4, "10,000 GPa"),
    "_kgpm3": (1.0e5, "1e5 kg/m^3"),
}
#: Fields holding directions (normalised by the reader): entries up to this magnitude.
DIRECTION_FIELDS = ("axis", "axes", "approach", "direction")
DIRECTION_LIMIT = 1.0e6


DIVISOR_SUFFIXES = ("_Nm", "_Nm_per_rad", "_rpm", "_ratio", "_mps", "_mps2", "_mps3", "_dps",
                    "_dps2", "_dps3", "_s")


def physical_limit(name):
    """(largest magnitude, description) for a field name by its unit suffix, or None."""
    if not isinstance(name, str):
        return None
    return _physical_limit(name)


@functools.lru_cache(maxsize=1024)
def _physical_limit(name):
    """``physical_limit`` of a string (memoised: validation asks for the same few names)."""
    best = None
    for suffix, limit in PHYSICAL_LIMITS.items():
        if name.endswith(suffix) and (best is None or len(suffix) > len(best[0])):
            best = (suffix, limit)
    return None if best is None else best[1]


def _beyond_sense(name, value):
    """The reason ``value`` is beyond physical sense for field ``name``, or None."""
    if name in DIRECTION_FIELDS:
        if abs(value) > DIRECTION_LIMIT:
            return (f"direction entries must be at most {DIRECTION_LIMIT:g} in magnitude "
                    f"(the direction is normalised); got {value:g}")
        return None
    limit = physical_limit(name)
    if limit is None:
        return None
    if abs(value) > limit[0]:
        return f"magnitude must be at most {limit[1]} (a bound of physical sense); got {value:g}"
    if (0.0 < abs(value) < sys.float_info.min
            and any(name.endswith(suffix) for suffix in DIVISOR_SUFFIXES)):
        return (f"nonzero magnitude must be at least {sys.float_info.min:g} (a subnormal "
                f"number overflows where it divides); got {value:g}")
    return None


def _is_number(value):
    if type(value) in (float, int):            # the common case, without the ABC check
        return True
    return isinstance(value, Real) and not isinstance(value, bool)


def _present(problems, table, key, path, default, missing="required key is missing"):
    """(True, value) when ``key`` is in ``table``; else (False, default or None), recording
    a missing-key problem when there is no default."""
    if key in table:
        return True, table[key]
    if default is _MISSING:
        problems.add(join(path, key), missing)
        return False, None
    return False, default


def get_number(problems, table, key, path, *, default=_MISSING, low=None, low_open=False,
               high=None, high_open=False):
    """A finite real number in the given interval, as float."""
    field = join(path, key)
    found, value = _present(problems, table, key, path, default)
    if not found:
        return value
    if not _is_number(value):
        kind = "a boolean" if isinstance(value, bool) else type(value).__name__
        problems.add(field, f"must be a number; got {kind} {_describe(value)}")
        return None
    value = float(value)
    if not math.isfinite(value):
        problems.add(field, f"must be finite; got {value}")
        return None
    reason = _beyond_sense(key, value)
    if reason:
        problems.add(field, reason)
        return None
    if low is not None and (value < low or (low_open and value == low)):
        problems.add(field, f"must be {'>' if low_open else '>='} {low:g}; got {value:g}")
        return None
    if high is not None and (value > high or (high_open and value == high)):
        problems.add(field, f"must be {'<' if high_open else '<='} {high:g}; got {value:g}")
        return None
    return value


def get_vector(problems, table, key, path, length, *, default=_MISSING, name=None):
    """A list of ``length`` finite numbers, as a tuple of floats (``name`` sets the unit
    suffix for the bounds of physical sense when ``key`` is an index)."""
    field = join(path, key)
    name = key if name is None else name
    found, value = _present(problems, table, key, path, default)
    if not found:
        return value
    if not isinstance(value, (list, tuple)):
        problems.add(field, f"must be a list of {length} numbers; got {_describe(value)}")
        return None
    if len(value) != length:
        problems.add(field, f"must have {length} entries; got {len(value)}")
        return None
    out = []
    for i, item in enumerate(value):
        if not _is_number(item):
            kind = "a boolean" if isinstance(item, bool) else type(item).__name__
            problems.add(f"{field}[{i}]", f"must be a number; got {kind} {_describe(item)}")
            return None
        item = float(item)
        if not math.isfinite(item):
            problems.add(f"{field}[{i}]", f"must be finite; got {item}")
            return None
        reason = _beyond_sense(name, item)
        if reason:
            problems.add(f"{field}[{i}]", reason)
            return None
        out.append(item)
    return tuple(out)


def get_vector_item(problems, rows, index, path, length):
    """Entry ``index`` of a list of vectors, checked as a vector; its path is ``path[index]``."""
    return get_vector(problems, {index: rows[index]}, index, path, length,
                      name=path.rsplit(".", 1)[-1])


def get_string(problems, table, key, path, *, default=_MISSING):
    found, value = _present(problems, table, key, path, default)
    if not found:
        return value
    if not isinstance(value, str):
        problems.add(join(path, key), f"must be a string; got {_describe(value)}")
        return None
    return value


def get_table(problems, table, key, path, *, required=False):
    """A sub-table (dict); ``{}`` when optional and absent, ``None`` if unusable."""
    found, value = _present(problems, table, key, path, _MISSING if required else {},
                            "required table is missing")
    if not found:
        return value
    if not isinstance(value, dict):
        problems.add(join(path, key), f"must be a table; got {_describe(value)}")
        return None
    return value


def get_list(problems, table, key, path, *, required=False):
    """A list of tables; ``[]`` when optional and absent, ``None`` if unusable."""
    found, value = _present(problems, table, key, path, _MISSING if required else [])
    if not found:
        return value
    if not isinstance(value, (list, tuple)) or not all(isinstance(v, dict) for v in value):
        problems.add(join(path, key), f"must be a list of tables; got {_describe(value)}")
        return None
    return list(value)
