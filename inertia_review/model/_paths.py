"""Parameter paths: names for design values that sweeps and widgets change (private).

Our own short syntax mirrors the field paths of error messages:

- direct values: ``tool.payload_kg``, ``mount.rpy_deg[1]``, ``joints[1].link.mass_kg``,
  ``joints[elbow].actuator.gear_ratio`` (a joint by index or by name),
  ``joints[1].link.point_masses[0].mass_kg``, ``joints[1].link.tube.length_m``;
- derived values that designers think in:
  ``joints[j].link_length_m``: the length of link j (to the next joint, or to the tool
  point for the last link); changing it scales the link's geometry along that direction
  (next joint or tool offset, centre of mass, point masses, tube length; an explicit
  mass and inertia stay as given);
  ``joints[j].link.point_masses[k].along``: where point mass k sits along link j, as a
  fraction of the link length from its joint;
  ``derived.reach_m`` and ``derived.link_ratio``: the sum and the ratio (distal over
  proximal) of the lengths of the last two links.
- names from a closed vocabulary (discrete choices): ``joints[j].link.tube.material``, one of
  the material table's names (``MATERIALS``); ``get_value`` returns the name and setting an
  unknown name raises, naming the path and the known names (``path_choices``).
"""

import copy
import re

import numpy as np

from ._errors import DesignError

__all__ = ["apply_values", "get_value", "parameter_paths", "path_choices", "resolve_joint"]

_TOKEN = re.compile(r"([A-Za-z_][A-Za-z0-9_]*)(?:\[([^\]]+)\])?")


def resolve_joint(spec, key, path):
    names = [j["name"] for j in spec["joints"]]
    if re.fullmatch(r"-?\d+", key):
        index = int(key)
        if not -len(names) <= index < len(names):
            raise KeyError(f"'{path}': joint index {index} is out of range for {len(names)} joints")
        return index % len(names)
    if key not in names:
        import difflib
        close = difflib.get_close_matches(key, names, n=1)
        hint = f"; did you mean '{close[0]}'?" if close else f"; joints are {', '.join(names)}"
        raise KeyError(f"'{path}': no joint named '{key}'{hint}")
    return names.index(key)


def _vocabulary(field):
    """The allowed names of a string field (by its last two path names), or None."""
    if field == ("tube", "material"):
        from ._materials import MATERIALS
        return tuple(MATERIALS)
    return None


#: string fields that hold a name from a closed vocabulary, as (container, key); a new one
#: plugs in here and in ``_vocabulary``
STRING_FIELDS = (("tube", "material"),)


def _field(tokens):
    return (tokens[-2][0], tokens[-1][0]) if len(tokens) >= 2 else (None, tokens[-1][0])


def path_choices(path):
    """The allowed names of a parameter path that holds a name (e.g. a tube's material), or
    None for a numeric path."""
    tokens = _tokens(path)
    if tokens[-1][1] is not None:
        return None
    return _vocabulary(_field(tokens))


def _check_name(path, value, names):
    """``value`` if it is one of ``names``; else KeyError naming the path and the names."""
    if not isinstance(value, str):
        raise ValueError(f"'{path}': holds a name (one of {', '.join(names)}), not a number; "
                         f"got {value!r}")
    if value not in names:
        import difflib
        close = difflib.get_close_matches(value, names, n=1, cutoff=0.5)
        hint = f"did you mean '{close[0]}'? " if close else ""
        raise KeyError(f"'{path}': unknown name '{value}'; {hint}known: {', '.join(names)}")
    return value


def _tokens(path):
    parts = path.split(".")
    out = []
    for part in parts:
        m = _TOKEN.fullmatch(part)
        if not m:
            raise KeyError(f"'{path}': cannot read '{part}' (expected name or name[index])")
        out.append((m.group(1), m.group(2)))
    return out


def _link_vector(spec, j):
    joints = spec["joints"]
    return (joints[j + 1]["xyz_m"] if j + 1 < len(joints) else spec["tool"]["xyz_m"])


def _set_link_vector(spec, j, value):
    joints = spec["joints"]
    if j + 1 < len(joints):
        joints[j + 1]["xyz_m"] = value
    else:
        spec["tool"]["xyz_m"] = value


def _link_length(spec, j):
    return float(np.linalg.norm(_link_vector(spec, j)))


def _scale_link(spec, j, new_length, path):
    d = np.array(_link_vector(spec, j), float)
    length = np.linalg.norm(d)
    if length == 0.0:
        raise KeyError(f"'{path}': link {j} has zero length, so it has no direction to scale along")
    if not np.isfinite(new_length) or new_length <= 0.0:
        raise ValueError(f"'{path}': link length must be > 0 [m]; got {new_length!r}")
    unit = d / length
    factor = new_length / length

    def stretch(point):
        p = np.array(point, float)
        return list(p + (factor - 1.0) * np.dot(p, unit) * unit)

    _set_link_vector(spec, j, list(unit * new_length))
    link = spec["joints"][j]["link"]
    if "tube" in link:
        link["tube"]["length_m"] = link["tube"]["length_m"] * factor
    elif link.get("com_m") is not None:
        link["com_m"] = stretch(link["com_m"])
    for pm in link["point_masses"]:
        pm["xyz_m"] = stretch(pm["xyz_m"])


def get_value(spec, path):
    """The current value of a parameter path in a normalised spec."""
    tokens = _tokens(path)
    if tokens[0][0] == "derived":
        a, b = _last_two(spec, path)
        la, lb = _link_length(spec, a), _link_length(spec, b)
        name = tokens[1][0] if len(tokens) == 2 else ""
        if name == "reach_m":
            return la + lb
        if name == "link_ratio":
            return lb / la
        raise KeyError(f"'{path}': unknown derived value; known: derived.reach_m, derived.link_ratio")
    if tokens[0][0] == "joints" and len(tokens) == 2 and tokens[1][0] == "link_length_m":
        return _link_length(spec, resolve_joint(spec, tokens[0][1] or "", path))
    if (tokens[-1][0] == "along" and len(tokens) == 4 and tokens[2][0] == "point_masses"):
        j = resolve_joint(spec, tokens[0][1] or "", path)
        pm = _container(spec, tokens[:-1], path)
        d = np.array(_link_vector(spec, j), float)
        return float(np.dot(pm["xyz_m"], d) / np.dot(d, d))
    parent, key, index = _locate(spec, tokens, path)
    value = parent[key]
    return value[index] if index is not None else value


def _last_two(spec, path):
    n = len(spec["joints"])
    if n < 2:
        raise KeyError(f"'{path}': derived reach and link ratio need at least two joints")
    return n - 2, n - 1


def _container(spec, tokens, path):
    node = spec
    trail = ""
    for name, index in tokens:
        trail = f"{trail}.{name}" if trail else name
        if not isinstance(node, dict) or name not in node:
            known = ", ".join(sorted(node)) if isinstance(node, dict) else ""
            raise KeyError(f"'{path}': '{trail}' does not exist in design '{spec['name']}'"
                           + (f" (known here: {known})" if known else ""))
        node = node[name]
        if index is not None:
            if name == "joints":
                node = node[resolve_joint(spec, index, path)]
            else:
                if not isinstance(node, list) or not re.fullmatch(r"\d+", index) \
                        or int(index) >= len(node):
                    raise KeyError(f"'{path}': '{trail}[{index}]' does not exist")
                node = node[int(index)]
    return node


def _locate(spec, tokens, path):
    """(parent mapping, key, index within a vector or None) of a direct value."""
    *head, (name, index) = tokens
    parent = _container(spec, head, path) if head else spec
    if not isinstance(parent, dict) or name not in parent:
        if _field(tokens) == ("tube", "material") and isinstance(parent, dict) \
                and "density_kgm3" in parent:
            raise KeyError(f"'{path}': this tube gives density_kgm3, not a material; vary "
                           "'density_kgm3' or name a material in the design file")
        raise KeyError(f"'{path}': '{name}' does not exist in design '{spec['name']}'")
    value = parent[name]
    if index is not None:
        if not isinstance(value, list) or not re.fullmatch(r"\d+", index) or int(index) >= len(value):
            raise KeyError(f"'{path}': '{name}[{index}]' is not an entry of a vector")
        if not all(isinstance(v, float) for v in value):
            raise KeyError(f"'{path}': '{name}' is not a vector of numbers")
        return parent, name, int(index)
    if isinstance(value, str) and _vocabulary(_field(tokens)) is not None:
        return parent, name, None
    if not isinstance(value, float):
        raise KeyError(f"'{path}': '{name}' is not a number (sweep a number or a vector entry)")
    return parent, name, None


def _number(path, value):
    if isinstance(value, str):
        raise ValueError(f"'{path}': holds a number; got the name {value!r}")
    return float(value)


def _set(spec, path, value):
    tokens = _tokens(path)
    names = path_choices(path)
    if names is not None:
        parent, key, _ = _locate(spec, tokens, path)
        parent[key] = _check_name(path, value, names)
        return
    value = _number(path, value)
    if tokens[0][0] == "derived":
        a, b = _last_two(spec, path)
        name = tokens[1][0] if len(tokens) == 2 else ""
        la, lb = _link_length(spec, a), _link_length(spec, b)
        if name == "reach_m":
            ratio = lb / la
        elif name == "link_ratio":
            ratio, value = value, la + lb
        else:
            raise KeyError(f"'{path}': unknown derived value; known: derived.reach_m, "
                           "derived.link_ratio")
        _scale_link(spec, a, value / (1.0 + ratio), path)
        _scale_link(spec, b, value * ratio / (1.0 + ratio), path)
        return
    if tokens[0][0] == "joints" and len(tokens) == 2 and tokens[1][0] == "link_length_m":
        _scale_link(spec, resolve_joint(spec, tokens[0][1] or "", path), value, path)
        return
    if tokens[-1][0] == "along" and len(tokens) == 4 and tokens[2][0] == "point_masses":
        j = resolve_joint(spec, tokens[0][1] or "", path)
        pm = _container(spec, tokens[:-1], path)
        d = np.array(_link_vector(spec, j), float)
        p = np.array(pm["xyz_m"], float)
        unit = d / np.linalg.norm(d)
        pm["xyz_m"] = list(p - np.dot(p, unit) * unit + value * d)
        return
    parent, key, index = _locate(spec, tokens, path)
    if index is None:
        parent[key] = value
    else:
        parent[key] = list(parent[key])
        parent[key][index] = value


_IMMUTABLE = (str, int, float, bool, type(None))


def _copy_tree(x):
    """A deep copy of a design mapping: dicts, lists and tuples rebuilt, plain scalars shared,
    anything else through ``copy.deepcopy`` (several times faster than deepcopy alone on the
    nested dicts and lists of a design)."""
    if type(x) in _IMMUTABLE:                  # the common case first
        return x
    if isinstance(x, dict):
        return {k: _copy_tree(v) for k, v in x.items()}
    if isinstance(x, list):
        return [_copy_tree(v) for v in x]
    if isinstance(x, tuple):
        return tuple(_copy_tree(v) for v in x)
    if isinstance(x, _IMMUTABLE):
        return x
    return copy.deepcopy(x)


def _derived_lengths(spec, values):
    """Lengths (la, lb) of the last two links when derived values are given, or None.

    A derived value alone keeps the other quantity of the pair (a new ratio keeps the
    reach, a new reach keeps the ratio); given with the length of one of the two links
    (``joints[j].link_length_m``), it keeps that length as given. More values than the two
    lengths can meet raise, naming the paths.
    """
    derived = [p for p in values if p.startswith("derived.")]
    if not derived:
        return None, set()
    for path in derived:
        try:
            get_value(spec, path)
        except KeyError as exc:                     # unknown name, too few joints
            raise DesignError(spec["name"], [(path, str(exc.args[0]).split(": ", 1)[-1])]) \
                from None
    a, b = _last_two(spec, derived[0])
    fixed = {}
    for path, value in values.items():
        tokens = _tokens(path)
        if tokens[0][0] == "joints" and len(tokens) == 2 and tokens[1][0] == "link_length_m":
            j = resolve_joint(spec, tokens[0][1] or "", path)
            if j in (a, b):
                fixed[j] = (path, _number(path, value))
    if len(derived) + len(fixed) > 2:
        raise DesignError(spec["name"], [(p, "over-determined: the lengths of the last two "
                                             "links cannot meet all of "
                                             f"{', '.join(sorted(derived) + [f[0] for f in fixed.values()])}")
                                         for p in derived])
    la, lb = _link_length(spec, a), _link_length(spec, b)
    try:
        reach = _number("derived.reach_m", values.get("derived.reach_m", la + lb))
        ratio = _number("derived.link_ratio",
                        values.get("derived.link_ratio", lb / la if la > 0 else np.nan))
    except ValueError as exc:
        path, reason = str(exc.args[0]).split(": ", 1)
        raise DesignError(spec["name"], [(path.strip("'"), reason)]) from None
    if a in fixed:
        la = fixed[a][1]
        lb = ratio * la if "derived.link_ratio" in values else reach - la
    elif b in fixed:
        lb = fixed[b][1]
        la = lb / ratio if "derived.link_ratio" in values else reach - lb
    else:
        la, lb = reach / (1.0 + ratio), reach * ratio / (1.0 + ratio)
    for length in (la, lb):
        if not (np.isfinite(length) and length > 0.0):
            raise DesignError(spec["name"], [(p, f"gives a link length of {length:g} m; the "
                                                 "last two links need positive lengths")
                                             for p in derived])
    return (a, la, b, lb), {f[0] for f in fixed.values()}


def apply_values(spec, values):
    """A deep copy of ``spec`` with every ``{path: value}`` applied (derived ones first).

    Derived values and a length of one of the last two links given together are met
    together (see ``_derived_lengths``): e.g. ``{"joints[1].link_length_m": 0.3,
    "derived.link_ratio": 0.8}`` gives links of 0.3 m and 0.24 m.
    """
    out = _copy_tree(spec)
    lengths, done = _derived_lengths(out, values)
    if lengths is not None:
        a, la, b, lb = lengths
        path = next(p for p in values if p.startswith("derived."))
        try:
            _scale_link(out, a, la, path)
            _scale_link(out, b, lb, path)
        except (KeyError, ValueError) as exc:
            raise DesignError(spec["name"], [(path, str(exc.args[0]).split(": ", 1)[-1])]) from None
    for path, value in values.items():
        if path.startswith("derived.") or path in done:
            continue
        try:
            _set(out, path, value)
        except (KeyError, ValueError) as exc:
            raise DesignError(spec["name"], [(path, str(exc.args[0]).split(": ", 1)[-1])]) from None
    if len(values) > 1:
        _check_read_back(spec["name"], out, values)
    return out


def _check_read_back(name, spec, values):
    """Refuse paths that overwrite each other (e.g. a link vector's entry and its length).

    Every path must read back the value it was given once all are applied; otherwise a
    result table would report a value the evaluated design does not have.
    """
    for path, value in values.items():
        got = get_value(spec, path)
        if isinstance(got, str):
            continue                     # a name: set as given (no derived path sets one)
        if not np.isclose(got, float(value), rtol=1e-9, atol=1e-12):
            others = ", ".join(f"'{p}'" for p in values if p != path)
            raise DesignError(name, [(path, (
                f"set to {float(value):.6g} but the design has {got:.6g} once the other paths "
                f"({others}) are applied: these paths change the same quantity, so a result "
                "would not describe its design; vary independent paths (e.g. a link's length "
                "and not also the entries of its link vector)"))])


def parameter_paths(arm):
    """The parameter paths of an arm, with their current values, as a dict.

    Numeric paths map to floats; the paths that hold a name from a closed vocabulary
    (a tube's ``material``, see :func:`path_choices`) map to that name (a str): a caller
    that needs numbers keeps the float values (``isinstance(v, float)``).
    """
    spec = arm.to_dict()
    out = {}

    def walk(node, prefix):
        if isinstance(node, dict):
            for key, value in node.items():
                walk(value, f"{prefix}.{key}" if prefix else key)
        elif isinstance(node, list) and node and all(isinstance(v, float) for v in node):
            for i, v in enumerate(node):
                out[f"{prefix}[{i}]"] = v
        elif isinstance(node, list):
            for i, v in enumerate(node):
                walk(v, f"{prefix}[{i}]")
        elif isinstance(node, float):
            out[prefix] = node
        elif isinstance(node, str) and path_choices(prefix) is not None:
            out[prefix] = node

    for j, joint in enumerate(spec["joints"]):
        walk(joint, f"joints[{joint['name']}]")
        out[f"joints[{joint['name']}].link_length_m"] = _link_length(spec, j)
        if _link_length(spec, j) > 0.0:
            for k in range(len(joint["link"]["point_masses"])):
                path = f"joints[{joint['name']}].link.point_masses[{k}].along"
                out[path] = get_value(spec, path)
    walk(spec["mount"], "mount")
    walk(spec["tool"], "tool")
    if len(spec["joints"]) >= 2:
        out["derived.reach_m"] = get_value(spec, "derived.reach_m")
        out["derived.link_ratio"] = get_value(spec, "derived.link_ratio")
    return out
