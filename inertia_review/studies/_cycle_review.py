"""Cycle torques for actuator sizing: every move sampled and reviewed against the ratings (private).

Configurations come from the inverse kinematics, joint speeds and accelerations from the task
Jacobian or the joint profile, and the joint torques of all samples from one batched
inverse-dynamics call. Profiles: ``_profiles``; cycle definitions: ``model._cycle_schema``.
"""

import math
from dataclasses import dataclass

import numpy as np

from ..model._cycle_schema import Cycle, cycle_from_dict, design_cycles
from ._cautions import TORQUE_CAUTION
from ._ik import STATUS, solve_positions
from ._ik_path import follow_positions
from ._profiles import _positive, s_curve_profile, trapezoidal_profile

__all__ = ["CycleTorques", "cycle_torques"]

#: Knot spacing [m] of the sequential warm start along a line move (see ``cycle_torques``).
_KNOT_SPACING_M = 0.025
#: IK tolerance of line-move samples [m] (the tool must stay on the segment within 1e-9 m).
_IK_TOLERANCE_M = 1e-11
#: Largest allowed gap [rad] between a line-move sample's angles and the trapezoid-rule
#: prediction from its neighbour (a jump means the solution changed branch along the path).
_JUMP_RAD = 1e-3
#: Points along a joint move at which tool-speed bounds are taken (tool-limited joint moves).
_BOUND_POINTS = 257



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
    # the branch the move starts in, continued along the path: knots every ~25 mm, each
    # solved from the last; then all samples at once from the knots interpolated
    knots = max(2, int(math.ceil(length / _KNOT_SPACING_M)))
    knot_s = np.linspace(0.0, length, knots + 1)
    walk = follow_positions(arm, p0 + knot_s[1:, None] * u, q_start, tolerance_m=_IK_TOLERANCE_M)
    if walk.stop >= 0:
        ks = knot_s[walk.stop + 1]
        t_knot = float(np.interp(ks, np.concatenate([[0.0], s, [length]]),
                                 np.concatenate([[0.0], t, [prof.duration]])))
        _fail(cycle, index, move, p0 + u * ks, _at(t_knot), walk.reason)
    knot_q = np.concatenate([q_start[None], walk.q])
    s_all = np.concatenate([s, [length]])
    warm = np.stack([np.interp(s_all, knot_s, knot_q[:, j]) for j in range(arm.dof)], axis=-1)
    points = p0 + s_all[:, None] * u
    sol = solve_positions(arm, points, posture="nearest", seeds=0, method="numeric",
                          tolerance_m=_IK_TOLERANCE_M, initial_q=warm)
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
      configurations keep the branch the move starts in: knots every 25 mm, each solved
      from the previous one (:func:`follow_positions`; a knot that the arm can reach only
      by changing branch, past a joint limit or through the elbow's stretched or folded
      pose, fails the cycle naming the move, the point and the reason), then all samples
      at once warm-started from the knots interpolated. Joint speeds qd = J_t^-1 x_dot with the task Jacobian
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
