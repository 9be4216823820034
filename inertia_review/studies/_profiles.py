"""Rest-to-rest motion profiles for move cycles: trapezoidal and jerk-limited (private).

Pure numpy, vectorised over time samples. The constructions follow L. Biagiotti and
C. Melchiorri, *Trajectory Planning for Automatic Machines and Robots*, Springer 2008, ch. 3
(trapezoidal velocity, sec. 3.2; double-S velocity, sec. 3.4), written from memory of that
chapter [M] and re-derived by integrating the piecewise-constant acceleration or jerk [D].
"""

import math
from dataclasses import dataclass

import numpy as np

__all__ = ["MotionProfile", "trapezoidal_profile", "s_curve_profile"]


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


