"""Validation vocabulary shared by the design reader and the region layer (private).

Each check takes the collector, the parent mapping, the key and the path of the
parent, records a problem naming the full field path and the rule it breaks, and
returns the converted value (or ``None`` when the value is unusable). Nothing
here raises on bad input; the caller raises one :class:`DesignError` listing all
problems at the end.
"""

import difflib
import math
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


def _is_number(value):
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
    if low is not None and (value < low or (low_open and value == low)):
        problems.add(field, f"must be {'>' if low_open else '>='} {low:g}; got {value:g}")
        return None
    if high is not None and (value > high or (high_open and value == high)):
        problems.add(field, f"must be {'<' if high_open else '<='} {high:g}; got {value:g}")
        return None
    return value


def get_vector(problems, table, key, path, length, *, default=_MISSING):
    """A list of ``length`` finite numbers, as a tuple of floats."""
    field = join(path, key)
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
        out.append(item)
    return tuple(out)


def get_vector_item(problems, rows, index, path, length):
    """Entry ``index`` of a list of vectors, checked as a vector; its path is ``path[index]``."""
    return get_vector(problems, {index: rows[index]}, index, path, length)


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
