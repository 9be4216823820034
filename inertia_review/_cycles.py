"""Move cycles for actuator sizing: motion profiles, cycle definitions, cycle torques (private).

Three parts, each usable alone:

- motion profiles (pure numpy, vectorised over time samples): a trapezoidal velocity
  profile and a jerk-limited 7-segment ("S-curve") profile for a rest-to-rest move;
- cycles: plain, validated data (``Cycle`` of ``Move``) read from ``[[cycles]]`` tables of a
  design file or from a mapping (``cycle_from_dict``);
- ``cycle_torques``: every move sampled, configurations from the inverse kinematics, joint
  speeds and accelerations from the task Jacobian or the joint profile, and the joint torques
  of all samples in one batched inverse-dynamics call, reviewed against the actuator ratings.

Profiles follow the standard constructions of L. Biagiotti and C. Melchiorri, *Trajectory
Planning for Automatic Machines and Robots*, Springer 2008, ch. 3 (trapezoidal velocity,
sec. 3.2; double-S velocity, sec. 3.4). The formulas here are written from memory of that
chapter [M] and re-derived by integrating the piecewise-constant acceleration or jerk [D].
"""

import math
from dataclasses import dataclass, field

import numpy as np

from ._cautions import TORQUE_CAUTION
from ._errors import DesignError
from ._ik import STATUS, solve_positions
from ._validate import Problems, check_keys, get_list, get_number, get_string, get_vector, join

__all__ = ["MotionProfile", "trapezoidal_profile", "s_curve_profile", "Move", "Cycle",
           "MOVE_KINDS", "cycle_from_dict", "design_cycles", "normalise_cycles",
           "cycle_torques", "CycleTorques"]

MOVE_KINDS = ("line", "joint")
CYCLE_KEYS = ("name", "points_m", "moves")
MOVE_KEYS = ("from", "to", "kind", "speed_mps", "accel_mps2", "jerk_mps3", "joint_speed_dps",
             "joint_accel_dps2", "joint_jerk_dps3", "dwell_s")
_NUMBER_KEYS = ("speed_mps", "accel_mps2", "jerk_mps3", "joint_speed_dps", "joint_accel_dps2",
                "joint_jerk_dps3")
_LINE_ONLY = ("jerk_mps3",)
_JOINT_ONLY = ("joint_speed_dps", "joint_accel_dps2", "joint_jerk_dps3")

#: Knot spacing [m] of the sequential warm start along a line move (see ``cycle_torques``).
_KNOT_SPACING_M = 0.025
#: IK tolerance of line-move samples [m] (the tool must stay on the segment within 1e-9 m).
_IK_TOLERANCE_M = 1e-11
#: Largest allowed gap [rad] between a line-move sample's angles and the trapezoid-rule
#: prediction from its neighbour (a jump means the solution changed branch along the path).
_JUMP_RAD = 1e-3
#: Points along a joint move at which tool-speed bounds are taken (tool-limited joint moves).
_BOUND_POINTS = 257


# =============================================================================== profiles
@dataclass(frozen=True)
class MotionProfile:
    """A rest-to-rest motion profile over a distance, as pieces of constant jerk.

    Build with :func:`trapezoidal_profile` or :func:`s_curve_profile`; evaluate with
    :meth:`sample`. Piece k starts at ``starts[k]`` with position, speed and acceleration
    ``s0[k]``, ``v0[k]``, ``a0[k]`` and keeps jerk ``jerk[k]``; an acceleration may jump
    between pieces (trapezoidal profiles).

    Attributes
    ----------
    distance, duration : float
        Distance D (units of the profile: m, rad or a unitless path parameter) and
        duration T [s].
    peak_speed, peak_accel, peak_jerk : float
        Largest speed, |acceleration| and |jerk| reached (0 jerk for a trapezoid).
    kind : {'trapezoidal', 's_curve'}
    reached : str
        Which limits the profile reaches: 'speed and accel', 'accel only' (triangular or no
        cruise), 'jerk only' (S-curve whose acceleration limit is not reached), ...
    """

    distance: float
    duration: float
    starts: np.ndarray
    s0: np.ndarray
    v0: np.ndarray
    a0: np.ndarray
    jerk: np.ndarray
    peak_speed: float
    peak_accel: float
    peak_jerk: float
    kind: str
    reached: str

    def sample(self, t):
        """Position, speed and acceleration at times ``t`` (any shape) [s].

        Before 0 the profile rests at 0, after the duration at the distance (exactly).

        Returns
        -------
        s, sd, sdd : ndarray, each the shape of ``t``
        """
        t = np.asarray(t, dtype=float)
        idx = np.clip(np.searchsorted(self.starts, t, side="right") - 1, 0, self.jerk.size - 1)
        tau = t - self.starts[idx]
        j, a, v, s = self.jerk[idx], self.a0[idx], self.v0[idx], self.s0[idx]
        pos = s + tau * (v + tau * (a / 2.0 + tau * j / 6.0))
        vel = v + tau * (a + tau * j / 2.0)
        acc = a + tau * j
        before, after = t <= 0.0, t >= self.duration
        pos = np.where(before, 0.0, np.where(after, self.distance, pos))
        vel = np.where(before | after, 0.0, vel)
        acc = np.where(before | after, 0.0, acc)
        return pos, vel, acc


def _pieces(durations, jerks, accels, distance, kind, reached, peaks):
    """Integrate pieces of constant jerk (and given start accelerations where not None)."""
    starts, s0, v0, a0 = [], [], [], []
    t = s = v = a = 0.0
    for d, j, a_start in zip(durations, jerks, accels):
        if a_start is not None:
            a = a_start
        starts.append(t), s0.append(s), v0.append(v), a0.append(a)
        s += d * (v + d * (a / 2.0 + d * j / 6.0))
        v += d * (a + d * j / 2.0)
        a += d * j
        t += d
    arr = [np.array(x, float) for x in (starts, s0, v0, a0, jerks)]
    return MotionProfile(float(distance), float(t), *arr, *peaks, kind=kind, reached=reached)


def _positive(value, name):
    value = float(value)
    if not (math.isfinite(value) and value > 0.0):
        raise ValueError(f"`{name}` must be a finite number > 0; got {value!r}")
    return value


def trapezoidal_profile(distance, speed, accel):
    """Trapezoidal velocity profile of a rest-to-rest move.

    Accelerate at ``accel`` to ``speed``, cruise, decelerate at ``accel`` ([1]_, sec. 3.2):
    T_a = v / a, T = D / v + v / a, and s(T_a) = a T_a^2 / 2 = v^2 / (2 a). When
    D < v^2 / a the speed is not reached and the profile is triangular: T_a = sqrt(D / a),
    peak speed sqrt(D a), T = 2 sqrt(D / a).

    Parameters
    ----------
    distance, speed, accel : float
        D > 0, v > 0 and a > 0 in consistent units (m, m/s, m/s^2; rad, rad/s, rad/s^2; ...).

    Returns
    -------
    MotionProfile

    References
    ----------
    .. [1] L. Biagiotti, C. Melchiorri, *Trajectory Planning for Automatic Machines and
       Robots*, Springer 2008, ch. 3 (formulas from memory [M], re-derived [D]).
    """
    d, v, a = (_positive(x, n) for x, n in ((distance, "distance"), (speed, "speed"),
                                           (accel, "accel")))
    if d >= v * v / a:
        ta, tv, reached = v / a, d / v - v / a, "speed and accel"
    else:
        ta, tv, reached = math.sqrt(d / a), 0.0, "accel only"
    return _pieces([ta, tv, ta], [0.0, 0.0, 0.0], [a, 0.0, -a], d, "trapezoidal", reached,
                   (a * ta, a, 0.0))


def s_curve_profile(distance, speed, accel, jerk):
    """Jerk-limited (double-S, 7-segment) profile of a rest-to-rest move.

    Segments: jerk +j, 0, -j (acceleration phase of length T_a, jerk phases T_j), a cruise
    T_v, and the mirror image for the deceleration ([1]_, sec. 3.4). With all limits
    reached: T_j = a / j, T_a = T_j + v / a, T_v = D / v - T_a and T = D / v + v / a + a / j.

    Degrading rule (when the limits cannot all be reached) -- the jerk limit always holds
    and the profile stays symmetric:

    1. if v j < a^2 the acceleration limit cannot be reached even at full speed:
       T_j = sqrt(v / j), T_a = 2 T_j (peak acceleration sqrt(v j));
    2. if the move is too short to reach the speed (T_v < 0) there is no cruise and the peak
       speed is lowered: with D >= 2 a^3 / j^2 the acceleration limit is still reached,
       T_j = a / j, T_a = (T_j + sqrt(T_j^2 + 4 D / a)) / 2; otherwise neither is,
       T_j = (D / (2 j))^(1/3), T_a = 2 T_j.

    Parameters
    ----------
    distance, speed, accel, jerk : float
        D, v, a, j > 0 in consistent units.

    Returns
    -------
    MotionProfile

    References
    ----------
    .. [1] L. Biagiotti, C. Melchiorri, *Trajectory Planning for Automatic Machines and
       Robots*, Springer 2008, ch. 3 (formulas from memory [M], re-derived [D]).
    """
    d, v, a, j = (_positive(x, n) for x, n in ((distance, "distance"), (speed, "speed"),
                                              (accel, "accel"), (jerk, "jerk")))
    if v * j >= a * a:
        tj, ta, reached = a / j, a / j + v / a, "speed, accel and jerk"
    else:
        tj, reached = math.sqrt(v / j), "speed and jerk"
        ta = 2.0 * tj
    tv = d / v - ta
    if tv < 0.0:
        tv = 0.0
        if d >= 2.0 * a ** 3 / (j * j):
            tj = a / j
            ta, reached = 0.5 * (tj + math.sqrt(tj * tj + 4.0 * d / a)), "accel and jerk"
        else:
            tj = (d / (2.0 * j)) ** (1.0 / 3.0)
            ta, reached = 2.0 * tj, "jerk only"
    a_peak = j * tj
    v_peak = a_peak * (ta - tj)
    mid = ta - 2.0 * tj
    return _pieces([tj, mid, tj, tv, tj, mid, tj], [j, 0.0, -j, 0.0, -j, 0.0, j],
                   [0.0] + [None] * 6, d, "s_curve", reached, (v_peak, a_peak, j))


# =============================================================================== cycles
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
    vec = get_vector(problems, move, key, path, 3)
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
            vec = get_vector(problems, raw_points, pname, join(path, "points_m"), 3)
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


# =============================================================================== torques
@dataclass(frozen=True, eq=False)
class CycleTorques:
    """Joint torques and speeds over a sampled cycle, reviewed against the actuator ratings.

    Samples sit at the midpoints of equal sub-intervals of every move and dwell (at most
    ``1 / sample_rate_hz`` long); ``weight_s`` is each sample's sub-interval, so RMS values
    are midpoint-rule integrals over the whole cycle, dwells included.

    Attributes (per sample, N samples, n joints)
    ----------------------------------------------
    t : (N,) [s];  q, qd, qdd : (N, n) [rad, rad/s, rad/s^2];  tau : (N, n) [N m]
    weight_s : (N,) [s];  move_index : (N,) int;  dwelling : (N,) bool
    tool_position : (N, 3) [m];  tool_velocity : (N, 3) [m/s];  tool_speed : (N,) [m/s]
    move_start_q, move_end_q : (moves, n) [rad]: the configurations at each move's ends
    move_duration_s : (moves,) [s] (without dwell)

    Attributes (per joint)
    ----------------------
    peak_torque_Nm, rms_torque_Nm, peak_motor_speed_rpm : (n,)
    peak_rating_Nm, continuous_rating_Nm, rated_speed_rpm : (n,), NaN where not given
    peak_utilisation = peak |tau| / peak rating; rms_utilisation = RMS tau / continuous
    rating; speed_utilisation = peak motor speed / rated speed (motor speed = gear_ratio
    |qd|); NaN where the rating is not given. utilisation: the largest of the three.
    limiting_joint : int (-1 when no joint is rated), limiting_criterion : str
    """

    cycle: Cycle
    design_name: str
    joint_names: tuple
    sample_rate_hz: float
    t: np.ndarray
    weight_s: np.ndarray
    move_index: np.ndarray
    dwelling: np.ndarray
    q: np.ndarray
    qd: np.ndarray
    qdd: np.ndarray
    tau: np.ndarray
    tool_position: np.ndarray
    tool_velocity: np.ndarray
    tool_speed: np.ndarray
    move_start_q: np.ndarray
    move_end_q: np.ndarray
    move_duration_s: np.ndarray
    duration_s: float
    peak_torque_Nm: np.ndarray
    rms_torque_Nm: np.ndarray
    peak_motor_speed_rpm: np.ndarray
    peak_rating_Nm: np.ndarray
    continuous_rating_Nm: np.ndarray
    rated_speed_rpm: np.ndarray
    peak_utilisation: np.ndarray
    rms_utilisation: np.ndarray
    speed_utilisation: np.ndarray
    utilisation: np.ndarray
    limiting_joint: int
    limiting_criterion: str
    caution: str = TORQUE_CAUTION

    def table(self):
        """Per-joint review as a pandas DataFrame (index: joint names)."""
        import pandas as pd
        return pd.DataFrame({
            "peak_torque_Nm": self.peak_torque_Nm, "peak_rating_Nm": self.peak_rating_Nm,
            "peak_utilisation": self.peak_utilisation, "rms_torque_Nm": self.rms_torque_Nm,
            "continuous_rating_Nm": self.continuous_rating_Nm,
            "rms_utilisation": self.rms_utilisation,
            "peak_motor_speed_rpm": self.peak_motor_speed_rpm,
            "rated_speed_rpm": self.rated_speed_rpm, "speed_utilisation": self.speed_utilisation,
            "utilisation": self.utilisation,
        }, index=pd.Index(self.joint_names, name="joint"))

    def text(self, digits=3):
        """Fixed-precision text of the review (for baselines), with the caution."""
        def f(x):
            return "n/a" if not np.isfinite(x) else f"{x:.{digits}f}"

        head = ["joint", "peak_Nm", "peak_rated", "peak_use", "rms_Nm", "cont_rated", "rms_use",
                "motor_rpm", "rated_rpm", "speed_use"]
        rows = [head]
        for j, name in enumerate(self.joint_names):
            rows.append([name] + [f(v[j]) for v in (
                self.peak_torque_Nm, self.peak_rating_Nm, self.peak_utilisation,
                self.rms_torque_Nm, self.continuous_rating_Nm, self.rms_utilisation,
                self.peak_motor_speed_rpm, self.rated_speed_rpm, self.speed_utilisation)])
        widths = [max(len(r[c]) for r in rows) for c in range(len(head))]
        lines = [f"cycle '{self.cycle.name}' on design '{self.design_name}': "
                 f"{len(self.cycle.moves)} moves, {self.duration_s:.{digits}f} s, "
                 f"{self.t.size} samples (<= {1.0 / self.sample_rate_hz:.{digits + 1}g} s each)"]
        lines += ["  ".join(r[c].ljust(widths[c]) if c == 0 else r[c].rjust(widths[c])
                            for c in range(len(head))) for r in rows]
        if self.limiting_joint >= 0:
            j = self.limiting_joint
            lines.append(f"limiting joint: {self.joint_names[j]} ({self.limiting_criterion}, "
                         f"{f(self.utilisation[j])} of rating)")
        else:
            lines.append("limiting joint: none (no joint has a rating)")
        lines.append(self.caution)
        return "\n".join(lines)


def _resolve_cycle(arm, cycle):
    if isinstance(cycle, Cycle):
        return cycle
    if isinstance(cycle, dict):
        return cycle_from_dict(cycle)
    if isinstance(cycle, str):
        found = {c.name: c for c in design_cycles(arm)}
        if cycle not in found:
            known = ", ".join(found) if found else "(the design has no [[cycles]])"
            raise KeyError(f"no cycle named '{cycle}' in design '{arm.name}'; cycles: {known}")
        return found[cycle]
    raise TypeError(f"`cycle` must be a Cycle, a mapping or a cycle name; got "
                    f"{type(cycle).__name__}")


def _at(t):
    return f"at t = {t:.6g} s into the move"


def _fail(cycle, index, move, point, where, reason):
    xyz = ", ".join(f"{x:.6g}" for x in np.asarray(point, float))
    raise ValueError(f"cycle '{cycle.name}', move {index} ({move.label}): tool point "
                     f"[{xyz}] m {where} {reason}")


def _solve_point(arm, point, posture, initial_q, cycle, index, move, where):
    sol = solve_positions(arm, np.asarray(point, float), posture=posture,
                          tolerance_m=_IK_TOLERANCE_M, initial_q=initial_q)
    if int(sol.status) != 0:
        _fail(cycle, index, move, point, where, f"cannot be reached ({STATUS[int(sol.status)]})")
    return np.asarray(sol.q, float)


def _jdot_times(arm, q, v, step=1e-5):
    """J_v-dot v = d/de [J_v(q + e v) v] at e = 0, (N, 3): a central difference along v.

    Step ``step`` [rad] along the unit direction of v; the error is O(step^2) relative.
    """
    speed = np.linalg.norm(v, axis=-1, keepdims=True)
    u = np.where(speed > 0.0, v / np.where(speed > 0.0, speed, 1.0), 0.0)
    jp = arm.jacobian(q + step * u)[..., :3, :]
    jm = arm.jacobian(q - step * u)[..., :3, :]
    return np.einsum("...ij,...j->...i", (jp - jm) / (2.0 * step), u) * speed * speed


def _grid(duration, rate):
    """Sub-interval count, length and midpoints of [0, duration] at no more than 1 / rate."""
    count = max(1, int(math.ceil(duration * rate - 1e-9)))
    h = duration / count
    return count, h, (np.arange(count) + 0.5) * h


def _line_move(arm, cycle, index, move, q_start, posture, rate):
    p0, p1 = np.array(move.start_m), np.array(move.end_m)
    length = float(np.linalg.norm(p1 - p0))
    u = (p1 - p0) / length
    if move.jerk_mps3 is None:
        prof = trapezoidal_profile(length, move.speed_mps, move.accel_mps2)
    else:
        prof = s_curve_profile(length, move.speed_mps, move.accel_mps2, move.jerk_mps3)
    count, h, t = _grid(prof.duration, rate)
    s, sd, sdd = prof.sample(t)
    # sequential warm start along the path: knots every ~25 mm, each solved from the last
    knots = max(2, int(math.ceil(length / _KNOT_SPACING_M)))
    knot_s = np.linspace(0.0, length, knots + 1)
    knot_q = [q_start]
    for ks in knot_s[1:]:
        t_knot = float(np.interp(ks, np.concatenate([[0.0], s, [length]]),
                                 np.concatenate([[0.0], t, [prof.duration]])))
        knot_q.append(_solve_point(arm, p0 + u * ks, posture, knot_q[-1], cycle, index, move,
                                   _at(t_knot)))
    knot_q = np.array(knot_q)
    s_all = np.concatenate([s, [length]])
    warm = np.stack([np.interp(s_all, knot_s, knot_q[:, j]) for j in range(arm.dof)], axis=-1)
    points = p0 + s_all[:, None] * u
    sol = solve_positions(arm, points, posture=posture, tolerance_m=_IK_TOLERANCE_M,
                          initial_q=warm)
    bad = np.flatnonzero(sol.status != 0)
    if bad.size:
        b = int(bad[0])
        _fail(cycle, index, move, points[b], _at(float(np.append(t, prof.duration)[b])),
              f"cannot be reached ({STATUS[int(sol.status[b])]})")
    q_all = np.asarray(sol.q)
    q, q_end = q_all[:-1], q_all[-1]
    a = arm.task_axes
    jt = np.einsum("ki,...in->...kn", a, arm.jacobian(q)[..., :3, :])
    sv = np.linalg.svd(jt, compute_uv=False)
    singular = sv[..., -1] <= 1e-9 * sv[..., 0]
    if np.any(singular):
        b = int(np.flatnonzero(singular)[0])
        _fail(cycle, index, move, points[b], _at(float(t[b])),
              "is at a singular configuration (the task Jacobian loses rank)")
    xd = sd[:, None] * u
    xdd = sdd[:, None] * u
    qd = np.linalg.solve(jt, (xd @ a.T)[..., None])[..., 0]
    jdq = _jdot_times(arm, q, qd)
    qdd = np.linalg.solve(jt, ((xdd - jdq) @ a.T)[..., None])[..., 0]
    # continuity: every sample must follow from its neighbour by the trapezoid rule on qd
    # (a solution that changes branch along the path fails this by about a radian)
    q_seq = np.concatenate([q_start[None], q, q_end[None]])
    qd_seq = np.concatenate([np.zeros((1, arm.dof)), qd, np.zeros((1, arm.dof))])
    t_seq = np.concatenate([[0.0], t, [prof.duration]])
    gap = np.abs(np.diff(q_seq, axis=0)
                 - 0.5 * np.diff(t_seq)[:, None] * (qd_seq[1:] + qd_seq[:-1])).max(axis=1)
    if np.any(gap > _JUMP_RAD):
        b = int(np.flatnonzero(gap > _JUMP_RAD)[0])
        b = min(b, t.size - 1)
        _fail(cycle, index, move, points[b], _at(float(t[b])),
              "makes the joint angles jump (the inverse kinematics changed branch or passed "
              f"near a singularity; largest jump {gap.max():.3g} rad); split the move or use "
              "kind = 'joint'")
    return prof, t, h, q, qd, qdd, q_end


def _joint_bounds(arm, move, q0, dq):
    """Largest path-parameter speed, acceleration and jerk for a joint move (s in [0, 1])."""
    sd_max, sdd_max, sddd_max = math.inf, math.inf, None
    span = float(np.max(np.abs(dq)))
    if move.joint_speed_dps is not None:
        sd_max = math.radians(move.joint_speed_dps) / span
        sdd_max = math.radians(move.joint_accel_dps2) / span
    if move.joint_jerk_dps3 is not None:
        sddd_max = math.radians(move.joint_jerk_dps3) / span
    if move.speed_mps is not None:
        s = np.linspace(0.0, 1.0, _BOUND_POINTS)
        q = q0 + s[:, None] * dq
        xs = np.einsum("...ij,j->...i", arm.jacobian(q)[..., :3, :], dq)        # dx/ds
        xss = _jdot_times(arm, q, np.broadcast_to(dq, q.shape))                  # d2x/ds2
        g1 = float(np.max(np.linalg.norm(xs, axis=-1)))
        g2 = float(np.max(np.linalg.norm(xss, axis=-1)))
        if not g1 > 0.0:
            raise ValueError("the joint move does not move the tool point (singular path)")
        v, a = move.speed_mps, move.accel_mps2
        tool_sd = v / g1 if g2 == 0.0 else min(v / g1, math.sqrt(a / (2.0 * g2)))
        tool_sdd = (a - g2 * tool_sd ** 2) / g1
        sd_max, sdd_max = min(sd_max, tool_sd), min(sdd_max, tool_sdd)
    return sd_max, sdd_max, sddd_max


def _joint_move(arm, cycle, index, move, q_start, posture, rate):
    q_end = _solve_point(arm, move.end_m, posture, None, cycle, index, move, "(the end point)")
    dq = q_end - q_start
    if not np.max(np.abs(dq)) > 0.0:
        _fail(cycle, index, move, move.end_m, "(the end point)",
              "needs no joint motion from the start configuration")
    sd_max, sdd_max, sddd_max = _joint_bounds(arm, move, q_start, dq)
    if sddd_max is None:
        prof = trapezoidal_profile(1.0, sd_max, sdd_max)
    else:
        prof = s_curve_profile(1.0, sd_max, sdd_max, sddd_max)
    count, h, t = _grid(prof.duration, rate)
    s, sd, sdd = prof.sample(t)
    q = q_start + s[:, None] * dq
    return prof, t, h, q, sd[:, None] * dq, sdd[:, None] * dq, q_end


def cycle_torques(arm, cycle, *, sample_rate_hz=1000.0, posture="elbow_up"):
    """Joint torques, speeds and actuator utilisation over a move cycle.

    Every move is sampled at the midpoints of equal sub-intervals no longer than
    ``1 / sample_rate_hz``, and so is every dwell.

    - Line moves: the tool point follows the segment with the move's profile; the
      configurations come from :func:`solve_positions`, warm-started along the path (knots
      every 25 mm, each solved from the previous one; then all samples at once from the
      knots interpolated). Joint speeds qd = J_t^-1 x_dot with the task Jacobian
      J_t = A J_v (square: the arm must not be redundant for its task); accelerations
      qdd = J_t^-1 (A x_ddot - A J_v_dot qd), where J_v_dot qd is a central difference of
      J_v along qd (step 1e-5 rad, O(step^2) error). A sample that cannot be reached, a
      singular configuration, or a jump of the solution between neighbouring samples fails
      the cycle with an error naming the move and the point.
    - Joint moves: q = q0 + s(t) (q1 - q0) with q0 where the previous move ended and q1 the
      inverse-kinematics solution of the end point (``posture``); s runs from 0 to 1 on a
      trapezoidal profile (an S-curve with ``joint_jerk_dps3``). Rule for the bounds: with
      joint limits, the joint with the largest travel runs at the joint speed, acceleration
      (and jerk) limits and the others scale with it; with tool limits, s_dot <=
      min(v / G1, sqrt(a / (2 G2))) and s_ddot <= (a - G2 s_dot_max^2) / G1, where G1 and G2
      are the largest |dx/ds| and |d2x/ds2| over 257 points of the joint path, which keeps
      the tool speed under v and its acceleration |x' s_ddot + x'' s_dot^2| under a; with
      both, the smaller bounds.
    - Dwells: at rest at the end point, holding the arm against gravity.

    Torques tau = ``arm.inverse_dynamics(q, qd, qdd)`` in one batched call over all samples.

    Parameters
    ----------
    arm : Arm
    cycle : Cycle, mapping or str
        A cycle, a mapping of the ``[[cycles]]`` schema, or the name of one of the
        design's cycles.
    sample_rate_hz : float, default 1000
    posture : {'elbow_up', 'elbow_down', 'nearest'}
        Branch rule of the inverse kinematics (see :func:`solve_positions`).

    Returns
    -------
    CycleTorques
    """
    cycle = _resolve_cycle(arm, cycle)
    rate = _positive(sample_rate_hz, "sample_rate_hz")
    n, k = arm.dof, arm.task_axes.shape[0]
    for i, move in enumerate(cycle.moves):
        if move.kind == "line" and n != k:
            raise ValueError(f"cycle '{cycle.name}', move {i} ({move.label}): line moves need an "
                             f"arm that is not redundant for its task ({n} joints, {k} task "
                             "axes); use kind = 'joint'")
    first = cycle.moves[0]
    q_now = _solve_point(arm, first.start_m, posture, None, cycle, 0, first, "(the start point)")
    parts, starts, ends, durations = [], [], [], []
    offset = 0.0
    for i, move in enumerate(cycle.moves):
        run = _line_move if move.kind == "line" else _joint_move
        prof, t, h, q, qd, qdd, q_end = run(arm, cycle, i, move, q_now, posture, rate)
        starts.append(q_now), ends.append(q_end), durations.append(prof.duration)
        parts.append((offset + t, np.full(t.size, h), np.full(t.size, i), np.zeros(t.size, bool),
                      q, qd, qdd))
        offset += prof.duration
        if move.dwell_s > 0.0:
            count, hd, td = _grid(move.dwell_s, rate)
            rest = np.broadcast_to(q_end, (count, n))
            zero = np.zeros((count, n))
            parts.append((offset + td, np.full(count, hd), np.full(count, i),
                          np.ones(count, bool), rest, zero, zero))
            offset += move.dwell_s
        q_now = q_end
    t, w, idx, dwelling, q, qd, qdd = (np.concatenate(x) for x in zip(*parts))
    tau = arm.inverse_dynamics(q, qd, qdd)
    if not np.all(np.isfinite(tau)):                 # not expected: samples are all checked
        b = int(np.flatnonzero(~np.all(np.isfinite(tau), axis=1))[0])
        raise ValueError(f"cycle '{cycle.name}', move {int(idx[b])}: non-finite torque at "
                         f"t = {t[b]:.6g} s")
    tool = arm.tool_position(q)
    tool_v = np.einsum("...ij,...j->...i", arm.jacobian(q)[..., :3, :], qd)
    params = arm._params
    to_rpm = 60.0 / (2.0 * np.pi)
    peak = np.max(np.abs(tau), axis=0)
    rms = np.sqrt(np.sum(w[:, None] * tau * tau, axis=0) / np.sum(w))
    motor = params.gear_ratio * np.max(np.abs(qd), axis=0)                      # rad/s
    peak_rating, cont_rating = arm.peak_torque, arm.continuous_torque
    rated = np.asarray(params.rated_speed, float)
    use = np.stack([peak / peak_rating, rms / cont_rating, motor / rated])      # (3, n)
    criteria = ("peak torque", "RMS torque", "motor speed")
    rated_any = np.any(np.isfinite(use), axis=0)
    overall = np.full(n, np.nan)
    overall[rated_any] = np.nanmax(use[:, rated_any], axis=0)
    if np.any(rated_any):
        limiting = int(np.nanargmax(overall))
        criterion = criteria[int(np.nanargmax(use[:, limiting]))]
    else:
        limiting, criterion = -1, "none"
    return CycleTorques(
        cycle=cycle, design_name=arm.name, joint_names=arm.joint_names, sample_rate_hz=rate,
        t=t, weight_s=w, move_index=idx, dwelling=dwelling, q=q, qd=qd, qdd=qdd, tau=tau,
        tool_position=tool, tool_velocity=tool_v, tool_speed=np.linalg.norm(tool_v, axis=-1),
        move_start_q=np.array(starts), move_end_q=np.array(ends),
        move_duration_s=np.array(durations), duration_s=float(offset),
        peak_torque_Nm=peak, rms_torque_Nm=rms, peak_motor_speed_rpm=motor * to_rpm,
        peak_rating_Nm=peak_rating, continuous_rating_Nm=cont_rating,
        rated_speed_rpm=rated * to_rpm, peak_utilisation=use[0], rms_utilisation=use[1],
        speed_utilisation=use[2], utilisation=overall, limiting_joint=limiting,
        limiting_criterion=criterion)
