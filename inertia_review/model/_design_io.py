"""Reading and writing design files (TOML) (private).

Read with the standard library's ``tomllib``; write with ``tomli_w``; writes go
to a temporary file in the same folder that is renamed over the target, so a
failed save never leaves a half-written file.
"""

import re
import tomllib
from pathlib import Path

import tomli_w

from ._arm import Arm
from ._atomic import write_text_atomic
from ._errors import DesignError

__all__ = ["load_design", "save_design", "read_design_dict", "write_text_atomic"]


def read_design_dict(path):
    """The raw mapping of a TOML design file; DesignError naming the file on a syntax error."""
    path = Path(path)
    try:
        with open(path, "rb") as fh:
            return tomllib.load(fh)
    except tomllib.TOMLDecodeError as exc:
        raise DesignError(path.name, [("(file)", f"{path}: not valid TOML: {exc}")]) from None
    except OSError as exc:
        raise DesignError(path.name, [("(file)", f"{path}: cannot be read: {exc.strerror}")]) from None


def load_design(path):
    """Read and validate a design file.

    Parameters
    ----------
    path : str or path-like
        A TOML design file (schema in arm-model.md). The design's ``name`` defaults to
        the file's stem.

    Returns
    -------
    Arm

    Raises
    ------
    DesignError
        On a syntax error (naming the file) or any schema problem (all of them at once).
    """
    path = Path(path)
    return Arm.from_dict(read_design_dict(path), default_name=path.stem)


def _drop_none(value):
    if isinstance(value, dict):
        return {k: _drop_none(v) for k, v in value.items() if v is not None}
    if isinstance(value, list):
        return [_drop_none(v) for v in value]
    return value


_NUMBER_ARRAY = re.compile(r"\[\n((?:[ \t]*[-+0-9.eEinfa]+,\n)+)[ \t]*\]")


def _compact_arrays(text):
    """Put arrays of plain numbers on one line (tomli_w writes one item a line)."""
    def one_line(match):
        items = [item.strip().rstrip(",") for item in match.group(1).splitlines()]
        return "[" + ", ".join(items) + "]"
    return _NUMBER_ARRAY.sub(one_line, text)


def dumps_design(data):
    """TOML text of a design mapping, checked to read back to the same mapping."""
    data = _drop_none(data)
    text = _compact_arrays(tomli_w.dumps(data))
    if tomllib.loads(text) != data:  # the compaction must never change the content
        text = tomli_w.dumps(data)
    return text


def save_design(arm, path):
    """Write ``arm`` as a TOML design file in its normalised full form.

    ``load_design(path)`` then gives an arm whose arrays are exactly equal (floats are
    written with their shortest exact representation).
    """
    write_text_atomic(path, dumps_design(arm.to_dict()))
    return Path(path)
