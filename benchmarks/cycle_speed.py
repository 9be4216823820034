"""Speed of cycle torques: a 10-move cycle at 1 kHz on the 3-joint demo arm.

The cycle (invented for this benchmark) runs inside the task region of
designs/kestrel_a.toml: 10 moves (line and joint moves, S-curve and trapezoidal profiles,
dwells), about 10,000 samples. ``ir.cycle_torques`` is timed against a per-sample Python
loop that does the same work one sample at a time:

- line-move samples: ``solve_positions`` on one point, warm-started from the previous
  sample's solution; the task-Jacobian solve for qd; J_dot qd by the same central difference
  (two Jacobian calls); the solve for qdd;
- joint-move and dwell samples: q, qd, qdd from the profile (already per-sample cheap);
- every sample: ``arm.inverse_dynamics`` on that one sample.

The profiles themselves are sampled once, vectorised, for the loop too (not part of the
loop's time). By default the loop runs on every 10th sample and its time is scaled by the
sample count (stated in the output); ``--full`` loops over every sample. A second ratio
times only the torques: one batched ``arm.inverse_dynamics`` call against a loop over all
samples. Target (issue 5): cycle torques >= 50x the per-sample loop.

Run: ``python benchmarks/cycle_speed.py [--full]`` (single-threaded BLAS is forced here).
"""

import os

os.environ.setdefault("OMP_NUM_THREADS", "1")
os.environ.setdefault("OPENBLAS_NUM_THREADS", "1")
os.environ.setdefault("MKL_NUM_THREADS", "1")

import sys  # noqa: E402
import time  # noqa: E402
from pathlib import Path  # noqa: E402

import numpy as np  # noqa: E402

import inertia_review as ir  # noqa: E402

ROOT = Path(__file__).resolve().parents[1]

# INVENTED DEMO DATA: ten moves between five points of kestrel_a's task region (y = 0.05 m)
CYCLE = {
    "name": "benchmark_ten_moves",
    "points_m": {"p1": [0.40, 0.05, 0.30], "p2": [0.55, 0.05, 0.20], "p3": [0.50, 0.05, 0.06],
                 "p4": [0.36, 0.05, 0.12], "p5": [0.30, 0.05, 0.32]},
    "moves": [
        {"from": "p1", "to": "p2", "kind": "line", "speed_mps": 0.4, "accel_mps2": 2.0},
        {"to": "p3", "kind": "line", "speed_mps": 0.3, "accel_mps2": 1.5, "jerk_mps3": 30.0,
         "dwell_s": 0.2},
        {"to": "p4", "kind": "joint", "joint_speed_dps": 90.0, "joint_accel_dps2": 400.0},
        {"to": "p5", "kind": "line", "speed_mps": 0.4, "accel_mps2": 2.0, "dwell_s": 0.1},
        {"to": "p1", "kind": "joint", "speed_mps": 0.5, "accel_mps2": 2.0},
        {"to": "p3", "kind": "joint", "joint_speed_dps": 90.0, "joint_accel_dps2": 400.0,
         "joint_jerk_dps3": 4000.0, "dwell_s": 0.3},
        {"to": "p2", "kind": "line", "speed_mps": 0.25, "accel_mps2": 1.0},
        {"to": "p4", "kind": "line", "speed_mps": 0.4, "accel_mps2": 2.0, "jerk_mps3": 40.0},
        {"to": "p5", "kind": "joint", "joint_speed_dps": 120.0, "joint_accel_dps2": 500.0},
        {"to": "p1", "kind": "line", "speed_mps": 0.3, "accel_mps2": 1.5, "dwell_s": 0.2},
    ],
}


def timed(fn, repeat=1):
    best, out = np.inf, None
    for _ in range(repeat):
        start = time.perf_counter()
        out = fn()
        best = min(best, time.perf_counter() - start)
    return best, out


def loop_cycle(arm, res, stride):
    """Per-sample loop over every ``stride``-th sample (see the module docstring)."""
    cycle = res.cycle
    a = arm.task_axes
    q_prev = None
    count = 0
    tau_out = []
    for k in range(0, res.t.size, stride):
        i = int(res.move_index[k])
        move = cycle.moves[i]
        if move.kind == "line" and not res.dwelling[k]:
            p0, p1 = np.array(move.start_m), np.array(move.end_m)
            length = np.linalg.norm(p1 - p0)
            u = (p1 - p0) / length
            prof = (ir.trapezoidal_profile(length, move.speed_mps, move.accel_mps2)
                    if move.jerk_mps3 is None else
                    ir.s_curve_profile(length, move.speed_mps, move.accel_mps2, move.jerk_mps3))
            t_local = res.t[k] - res.t[res.move_index == i][0] + 0.5 * res.weight_s[k]
            s, sd, sdd = prof.sample(t_local)
            warm = res.q[k] if q_prev is None else q_prev
            q = ir.solve_positions(arm, p0 + u * s, tolerance_m=1e-11, initial_q=warm).q
            jt = a @ arm.jacobian(q)[:3]
            qd = np.linalg.solve(jt, a @ (u * sd))
            speed = np.linalg.norm(qd)
            d = qd / speed if speed > 0 else qd
            jdq = ((arm.jacobian(q + 1e-5 * d)[:3] - arm.jacobian(q - 1e-5 * d)[:3])
                   @ d / 2e-5) * speed ** 2
            qdd = np.linalg.solve(jt, a @ (u * sdd - jdq))
            q_prev = q
        else:
            q, qd, qdd = res.q[k], res.qd[k], res.qdd[k]
        tau_out.append(arm.inverse_dynamics(q, qd, qdd))
        count += 1
    return count, np.array(tau_out)


def main(full=False):
    arm = ir.load_design(ROOT / "designs" / "kestrel_a.toml")
    cycle = ir.cycle_from_dict(CYCLE)
    ir.cycle_torques(arm, cycle)                                 # imports and caches warm
    t_batch, res = timed(lambda: ir.cycle_torques(arm, cycle, sample_rate_hz=1000.0), repeat=3)
    n = res.t.size
    print(f"cycle: {len(cycle.moves)} moves, {res.duration_s:.3f} s, {n} samples at 1 kHz; "
          f"cycle_torques {t_batch:.3f} s (best of 3)")

    stride = 1 if full else 10
    t_loop, (count, tau_loop) = timed(lambda: loop_cycle(arm, res, stride))
    t_loop_all = t_loop * n / count
    agree = float(np.max(np.abs(tau_loop - res.tau[::stride])))
    print(f"per-sample loop (IK for line samples, Jacobian solves, inverse dynamics): "
          f"{t_loop:.2f} s over {count} samples"
          + ("" if full else f" (every {stride}th), scaled to {n}: {t_loop_all:.1f} s")
          + f"; largest torque difference {agree:.2e} N m")

    q, qd, qdd = res.q, res.qd, res.qdd
    t_id, _ = timed(lambda: arm.inverse_dynamics(q, qd, qdd), repeat=5)
    t_id_loop, _ = timed(lambda: [arm.inverse_dynamics(q[k], qd[k], qdd[k]) for k in range(n)])
    ratio = t_loop_all / t_batch
    print(f"torques only: one batched inverse_dynamics call {1e3 * t_id:.1f} ms, per-sample loop "
          f"{t_id_loop:.2f} s, ratio x{t_id_loop / t_id:.0f}")
    print(f"summary: cycle_torques x{ratio:.0f} faster than the per-sample loop "
          f"(target >= 50x: {'met' if ratio >= 50 else 'NOT met'}); limiting joint "
          f"{res.joint_names[res.limiting_joint]} ({res.limiting_criterion}, "
          f"{res.utilisation[res.limiting_joint]:.3f} of rating)")
    return ratio


if __name__ == "__main__":
    main(full="--full" in sys.argv[1:])
