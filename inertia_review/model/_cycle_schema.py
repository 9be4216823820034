"""Move cycles as validated data: the ``[[cycles]]`` tables of a design file (private).

``Cycle`` of ``Move`` (world coordinates [m]) read from a design or from a mapping
(``cycle_from_dict``); every problem is reported with its field path.
"""

from dataclasses import dataclass, field

import numpy as np

from ._errors import DesignError
from ._validate import (
    Problems,
    check_keys,
    get_list,
    get_number,
    get_string,
    get_vector,
    join,
)

__all__ = ["Move", "Cycle", "MOVE_KINDS", "cycle_from_dict", "design_cycles", "normalise_cycles"]

MOVE_KINDS = ("line", "joint")
CYCLE_KEYS = ("name", "points_m", "moves")
MOVE_KEYS = ("from", "to", "kind", "speed_mps", "accel_mps2", "jerk_mps3", "joint_speed_dps",
             "joint_accel_dps2", "joint_jerk_dps3", "dwell_s")
_NUMBER_KEYS = ("speed_mps", "accel_mps2", "jerk_mps3", "joint_speed_dps", "joint_accel_dps2",
                "joint_jerk_dps3")
_LINE_ONLY = ("jerk_mps3",)
_JOINT_ONLY = ("joint_speed_dps", "joint_accel_dps2", "joint_jerk_dps3")


@dataclass(frozen=True)
class Move:
    """One point-to-point move of a cycle (validated; world coordinates [m]).

    ``kind`` 'line': the tool point moves on the straight segment, its path profile bounded
    by ``speed_mps`` and ``accel_mps2`` (and ``jerk_mps3`` for an S-curve). ``kind``
    'joint': every joint moves on the straight line in joint space between the inverse
    kinematics solutions of the two points, synchronised (all start and stop together),
    bounded by ``joint_speed_dps`` / ``joint_accel_dps2`` (every joint) and/or by the tool
    limits ``speed_mps`` / ``accel_mps2`` (see ``cycle_torques`` for the rule).
    ``dwell_s``: rest at the end point before the next move (holding torque).
    """

    start_m: tuple
    end_m: tuple
    kind: str
    start_label: str
    end_label: str
    speed_mps: float = None
    accel_mps2: float = None
    jerk_mps3: float = None
    joint_speed_dps: float = None
    joint_accel_dps2: float = None
    joint_jerk_dps3: float = None
    dwell_s: float = 0.0

    @property
    def label(self):
        return f"{self.start_label} -> {self.end_label} ({self.kind})"


@dataclass(frozen=True)
class Cycle:
    """A named cycle: moves in order, each starting where the previous one ends.

    Build with :func:`cycle_from_dict` or read from a design (:func:`design_cycles`).
    """

    name: str
    moves: tuple
    points_m: dict = field(default_factory=dict)
    _spec: dict = field(default=None, repr=False, compare=False)

    @property
    def closed(self):
        """True when the last move ends where the first one starts (a repeating cycle)."""
        return bool(np.allclose(self.moves[0].start_m, self.moves[-1].end_m, rtol=0, atol=1e-12))

    def to_dict(self):
        """The normalised mapping of the design-file schema (``[[cycles]]`` table)."""
        import copy
        if self._spec is not None:
            return copy.deepcopy(self._spec)
        names = {tuple(v): k for k, v in self.points_m.items()}
        moves = []
        for m in self.moves:
            d = {"from": names.get(tuple(m.start_m), list(m.start_m)),
                 "to": names.get(tuple(m.end_m), list(m.end_m)), "kind": m.kind}
            d.update({key: getattr(m, key) for key in _NUMBER_KEYS
                      if getattr(m, key) is not None})
            d["dwell_s"] = m.dwell_s
            moves.append(d)
        return {"name": self.name, "points_m": {k: list(v) for k, v in self.points_m.items()},
                "moves": moves}


def _label(ref):
    if isinstance(ref, str):
        return ref
    return "[" + ", ".join(f"{x:g}" for x in ref) + "]"


def _point_ref(problems, move, key, path, points, required):
    """A point reference: a name of ``points_m`` or an inline [x, y, z] [m]; (ref, xyz)."""
    field_path = join(path, key)
    if key not in move:
        if required:
            problems.add(field_path, "required key is missing (a name of points_m or [x, y, z])")
        return None, None
    value = move[key]
    if isinstance(value, str):
        if points is None:
            return value, None                       # points_m itself is broken; said there
        if value not in points:
            import difflib
            close = difflib.get_close_matches(value, list(points), n=1, cutoff=0.5)
            hint = (f"did you mean '{close[0]}'?" if close else
                    f"known points: {', '.join(points) if points else '(none; add points_m)'}")
            problems.add(field_path, f"unknown point '{value}'; {hint}")
            return value, None
        return value, points[value]
    vec = get_vector(problems, move, key, path, 3, name="points_m")
    return (None if vec is None else list(vec)), vec


def _normalise_cycle(problems, cycle, path):
    check_keys(problems, cycle, CYCLE_KEYS, path)
    out = {"name": get_string(problems, cycle, "name", path)}
    points = {}
    raw_points = cycle.get("points_m", {})
    if not isinstance(raw_points, dict):
        problems.add(join(path, "points_m"), "must be a table of name = [x, y, z] [m]")
        points = None
    else:
        for pname in raw_points:
            vec = get_vector(problems, raw_points, pname, join(path, "points_m"), 3, name="points_m")
            if vec is not None:
                points[pname] = vec
        out["points_m"] = {k: list(v) for k, v in points.items()}
    moves = get_list(problems, cycle, "moves", path, required=True)
    if moves is not None and not moves:
        problems.add(join(path, "moves"), "must have at least one move")
    out["moves"] = []
    previous = None                                   # (ref, xyz) where the last move ended
    for i, move in enumerate(moves or []):
        mpath = join(join(path, "moves"), i)
        check_keys(problems, move, MOVE_KEYS, mpath)
        m = {}
        start_ref, start = _point_ref(problems, move, "from", mpath, points, previous is None
                                      and i == 0)
        if start_ref is None and previous is not None:
            start_ref, start = previous
        elif previous is not None and start is not None and previous[1] is not None \
                and not np.array_equal(start, previous[1]):
            problems.add(join(mpath, "from"),
                         f"must be where the previous move ends ({_label(previous[0])}); got "
                         f"{_label(start_ref)} (a cycle is continuous; add a move between them)")
        end_ref, end = _point_ref(problems, move, "to", mpath, points, True)
        m["from"], m["to"] = start_ref, end_ref
        if start is not None and end is not None and np.array_equal(start, end):
            problems.add(join(mpath, "to"), f"the move goes from {_label(start_ref)} to the same "
                                            "point; use dwell_s of the previous move to wait")
        kind = get_string(problems, move, "kind", mpath)
        if kind is not None and kind not in MOVE_KINDS:
            problems.add(join(mpath, "kind"), f"'{kind}' is not a valid move kind; supported "
                                              f"kinds are {', '.join(MOVE_KINDS)}")
            kind = None
        m["kind"] = kind
        for key in _NUMBER_KEYS:
            if key in move:
                m[key] = get_number(problems, move, key, mpath, low=0.0, low_open=True)
        if kind == "line":
            for key in ("speed_mps", "accel_mps2"):
                if key not in move:
                    problems.add(join(mpath, key), "required key is missing (line moves are "
                                                   "bounded by the tool speed and acceleration)")
            for key in _JOINT_ONLY:
                if key in move:
                    problems.add(join(mpath, key), "only for kind = 'joint' (line moves take "
                                                   "speed_mps, accel_mps2 and jerk_mps3)")
        elif kind == "joint":
            for key in _LINE_ONLY:
                if key in move:
                    problems.add(join(mpath, key), "only for kind = 'line' (joint moves take "
                                                   "joint_jerk_dps3)")
            pairs = [("joint_speed_dps", "joint_accel_dps2"), ("speed_mps", "accel_mps2")]
            given = [p for p in pairs if p[0] in move or p[1] in move]
            if not given:
                problems.add(mpath, "a joint move needs joint_speed_dps and joint_accel_dps2, or "
                                    "the tool limits speed_mps and accel_mps2, or both")
            for pair in given:
                for key in pair:
                    if key not in move:
                        other = pair[1] if key == pair[0] else pair[0]
                        problems.add(join(mpath, key), f"required key is missing (given with "
                                                       f"{other})")
        m["dwell_s"] = get_number(problems, move, "dwell_s", mpath, default=0.0, low=0.0)
        out["moves"].append(m)
        previous = (end_ref, end) if end_ref is not None else None
    return out


def normalise_cycles(problems, data):
    """Validate the ``cycles`` list of a design mapping into ``problems``; normalised list.

    Called by the design reader (``_design.normalise_design``); paths read
    ``cycles[0].moves[1].speed_mps``.
    """
    cycles = get_list(problems, data, "cycles", "")
    out = [_normalise_cycle(problems, c, join("cycles", i)) for i, c in enumerate(cycles or [])]
    names = [c["name"] for c in out]
    for i, cname in enumerate(names):
        if cname is not None and names.index(cname) != i:
            problems.add(join(join("cycles", i), "name"), f"duplicate cycle name '{cname}'")
    return out


def _build_cycle(spec):
    """A Cycle from its normalised mapping (already valid)."""
    points = {k: tuple(v) for k, v in spec["points_m"].items()}

    def resolve(ref):
        return points[ref] if isinstance(ref, str) else tuple(float(x) for x in ref)

    moves = []
    for m in spec["moves"]:
        numbers = {k: m[k] for k in _NUMBER_KEYS if k in m}
        moves.append(Move(resolve(m["from"]), resolve(m["to"]), m["kind"], _label(m["from"]),
                          _label(m["to"]), dwell_s=m["dwell_s"], **numbers))
    return Cycle(spec["name"], tuple(moves), points, spec)


def cycle_from_dict(data):
    """Validate a cycle mapping (the ``[[cycles]]`` table schema) and build the Cycle.

    Schema (all positions in the world frame [m])::

        name = "tray_to_fixture"
        points_m = { tray = [0.25, 0.05, 0.05], fixture = [0.5, 0.05, 0.1] }
        [[moves]]
        from = "tray"          # first move only; later moves start where the last ended
        to = "fixture"         # a name of points_m or an inline [x, y, z]
        kind = "line"          # or "joint"
        speed_mps = 0.5        # line: tool limits (jerk_mps3 optional: S-curve)
        accel_mps2 = 2.0       # joint: joint_speed_dps, joint_accel_dps2 (joint_jerk_dps3)
        dwell_s = 0.2          #        and/or the tool limits speed_mps, accel_mps2

    Raises
    ------
    DesignError
        Listing every problem with its field path (``moves[1].speed_mps``).
    """
    problems = Problems()
    if not isinstance(data, dict):
        raise DesignError("cycle", [("(cycle)", f"must be a table; got {type(data).__name__}")])
    spec = _normalise_cycle(problems, data, "")
    if problems:
        raise DesignError(spec.get("name") or "cycle", problems.items)
    return _build_cycle(spec)


def design_cycles(arm):
    """The cycles of a design's ``[[cycles]]`` tables, as a tuple of Cycle (may be empty)."""
    return tuple(_build_cycle(c) for c in arm.to_dict().get("cycles", []))


