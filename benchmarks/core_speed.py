"""Speed of the batched core: configurations per second, with ratios measured in the same run.

For 2-, 3- and 6-joint arms and batches of 10,000 configurations it times the mass matrix,
the Jacobian and the full metric set (``evaluate_metrics``: tool position, Jacobian, mass
matrix, apparent mass with its principal masses and directions, mass ratio, isotropy,
manipulability, gravity torque, torque headroom and acceleration capability), against

(a) a per-configuration Python loop over the same core (the full metric set, one q at a time), and
(b) closed forms of M(q) and J(q) derived with sympy and turned into numpy functions with
    ``lambdify`` over common subexpressions (tests/sympy_reference.py), what a practitioner
    would hand-roll.

Targets (issue 2): 3-joint full metric set >= 300,000 configurations/s on one core; >= 30x the
per-configuration loop; mass matrix within 1.5x of the closed form for 3 joints and faster than
it for 6. Run: ``python benchmarks/core_speed.py`` (single-threaded BLAS is forced here).
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

sys.path.insert(0, str(Path(__file__).resolve().parents[1] / "tests"))
from sympy_reference import closed_form_functions  # noqa: E402

BATCH = 10_000
LOOP_SAMPLES = 500


def six_joint_arm():
    """An invented 6-joint arm: yaw-pitch-pitch positioning joints and a roll-pitch-roll wrist."""
    base = ir.yaw_pitch_pitch_arm(0.25, 0.40, 0.35, link_masses_kg=[3.0, 2.0, 1.2],
                                  motor_masses_kg=[1.2, 1.0, 0.6], peak_torque_Nm=[60, 80, 40],
                                  continuous_torque_Nm=[25, 30, 15]).to_dict()
    wrist = [
        ("wrist_roll", [0.35, 0.0, 0.0], [1.0, 0.0, 0.0], [0.05, 0.0, 0.0], 0.5),
        ("wrist_pitch", [0.08, 0.0, 0.0], [0.0, -1.0, 0.0], [0.03, 0.0, 0.0], 0.35),
        ("tool_roll", [0.06, 0.0, 0.0], [1.0, 0.0, 0.0], [0.02, 0.0, 0.0], 0.2),
    ]
    for name, xyz, axis, com, mass in wrist:
        base["joints"].append({
            "name": name, "xyz_m": xyz, "axis": axis,
            "link": {"mass_kg": mass, "com_m": com,
                     "inertia_kgm2": [4e-4, 6e-4, 6e-4, 1e-5, 0.0, 0.0]},
            "actuator": {"peak_torque_Nm": 12.0, "continuous_torque_Nm": 5.0,
                         "gear_ratio": 50.0, "rotor_inertia_kgm2": 1e-6}})
    base["tool"] = {"xyz_m": [0.05, 0.0, 0.0], "payload_kg": 0.5}
    base["name"] = "bench_six"
    return ir.Arm.from_dict(base)


def arms():
    two = ir.planar_chain([0.4, 0.3], [1.2, 0.8], motor_masses_kg=[0.0, 0.6], payload_kg=0.3,
                          peak_torque_Nm=[20, 8], continuous_torque_Nm=[8, 3],
                          gear_ratio=[100, 80], rotor_inertia_kgm2=[3e-6, 2e-6], name="bench_two")
    three = ir.yaw_pitch_pitch_arm(0.22, 0.35, 0.30, link_masses_kg=[1.8, 0.5, 0.3],
                                   motor_masses_kg=[0.9, 0.9, 0.7], payload_kg=0.3,
                                   peak_torque_Nm=[28, 40, 18], continuous_torque_Nm=[11, 16, 7],
                                   gear_ratio=[100, 100, 80], rotor_inertia_kgm2=[3e-6, 3e-6, 2e-6],
                                   name="bench_three")
    return [two, three, six_joint_arm()]


def best_time(fn, repeat=7):
    """Best wall time of ``fn()`` over ``repeat`` runs [s] (after one warm-up run)."""
    fn()
    times = []
    for _ in range(repeat):
        start = time.perf_counter()
        fn()
        times.append(time.perf_counter() - start)
    return min(times)


def main():
    rng = np.random.default_rng(0)
    rows = []
    for arm in arms():
        q = rng.uniform(-np.pi, np.pi, size=(BATCH, arm.dof))
        closed = closed_form_functions(arm.to_dict())
        for got, want in ((arm.mass_matrix(q[:50]), closed.mass_matrix(q[:50])),
                          (arm.jacobian(q[:50]), closed.jacobian(q[:50]))):
            np.testing.assert_allclose(got, want, rtol=1e-9, atol=1e-12)  # same numbers first
        t_mass = best_time(lambda: arm.mass_matrix(q))
        t_jac = best_time(lambda: arm.jacobian(q))
        t_full = best_time(lambda: ir.evaluate_metrics(arm, q, accel_mps2=2.0))
        t_closed_mass = best_time(lambda: closed.mass_matrix(q))
        t_closed_jac = best_time(lambda: closed.jacobian(q))
        q_loop = q[:LOOP_SAMPLES]
        t_loop = best_time(lambda: [ir.evaluate_metrics(arm, qi, accel_mps2=2.0) for qi in q_loop],
                           repeat=2) * (BATCH / LOOP_SAMPLES)
        rows.append({
            "arm": f"{arm.dof}-joint", "mass": BATCH / t_mass, "jac": BATCH / t_jac,
            "full": BATCH / t_full, "loop_ratio": t_loop / t_full,
            "mass_vs_closed": t_mass / t_closed_mass, "jac_vs_closed": t_jac / t_closed_jac,
            "derive_s": closed.mass_matrix.derivation_seconds,
        })

    head = (f"{'arm':8s} {'M [cfg/s]':>12s} {'J [cfg/s]':>12s} {'all metrics [cfg/s]':>20s} "
            f"{'x loop':>8s} {'M time / closed':>16s} {'J time / closed':>16s} {'sympy derive [s]':>17s}")
    print(f"batch {BATCH} configurations, single thread, best of 7 runs")
    print(head)
    print("-" * len(head))
    for r in rows:
        print(f"{r['arm']:8s} {r['mass']:12,.0f} {r['jac']:12,.0f} {r['full']:20,.0f} "
              f"{r['loop_ratio']:8.0f} {r['mass_vs_closed']:16.2f} {r['jac_vs_closed']:16.2f} "
              f"{r['derive_s']:17.1f}")
    three, six = rows[1], rows[2]
    checks = [
        ("3-joint all metrics >= 300,000 cfg/s", three["full"] >= 300_000),
        (">= 30x per-configuration loop (3-joint)", three["loop_ratio"] >= 30),
        ("3-joint M within 1.5x closed form", three["mass_vs_closed"] <= 1.5),
        ("6-joint M faster than closed form", six["mass_vs_closed"] < 1.0),
    ]
    print()
    for text, ok in checks:
        print(f"  [{'met' if ok else 'MISSED'}] {text}")
    print(f"\nsummary: 3-joint all-metrics {three['full']:,.0f} cfg/s; x{three['loop_ratio']:.0f} vs "
          f"loop; M time / closed form {rows[0]['mass_vs_closed']:.2f} (2j), "
          f"{three['mass_vs_closed']:.2f} (3j), {six['mass_vs_closed']:.2f} (6j); "
          f"targets met {sum(ok for _, ok in checks)}/{len(checks)}")


if __name__ == "__main__":
    main()
