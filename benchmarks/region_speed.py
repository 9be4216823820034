"""Speed of whole-region work: a 100 x 100 map, a 1,000-variant sweep, and dask scaling.

1. A 100 x 100 map of every inertia and torque metric for the 3-joint demo arm
   (designs/kestrel_a.toml), inverse kinematics included (target: under 0.3 s on one core);
   beside it, in the same run, the map with the stiffness variables too (first natural
   frequency, sag, lowest tool stiffness, payload capacity; target: under 0.5 s), and the
   f1 and sag kernels alone on the map's solved configurations, each as a ratio to the map.
2. A sweep of 1,000 variants (link ratio x mount tilt x payload) scored on a 20 x 20
   region, on one core (target: under 20 s); beside it, in the same run, the same variants
   through the batched path ``ir.score_variants`` (target: at most 3 s with every score,
   exact; also continuation-only and without f1/sag/payload), and the largest difference of
   any score from the per-variant path.
3. The same kind of sweep (fewer variants) on a dask.distributed LocalCluster with one and
   with two single-threaded worker processes (target: two workers 1.6x faster or more).
   This needs two idle cores; the ratio is measured in the same run.

Run: ``python benchmarks/region_speed.py [--quick] [--variants]`` (single-threaded BLAS is
forced here; ``--variants``: only section 2, the per-variant sweep and the batched variants).
"""

import os

os.environ.setdefault("OMP_NUM_THREADS", "1")
os.environ.setdefault("OPENBLAS_NUM_THREADS", "1")
os.environ.setdefault("MKL_NUM_THREADS", "1")

import sys  # noqa: E402
import time  # noqa: E402
from concurrent.futures import ThreadPoolExecutor  # noqa: E402
from pathlib import Path  # noqa: E402

import numpy as np  # noqa: E402

import inertia_review as ir  # noqa: E402

ROOT = Path(__file__).resolve().parents[1]


def sweep(arm, region, n_ratio, n_tilt, n_payload):
    return ir.Sweep(arm, vary={"derived.link_ratio": np.linspace(0.6, 1.4, n_ratio),
                               "mount.rpy_deg[1]": np.linspace(0.0, 30.0, n_tilt),
                               "tool.payload_kg": np.linspace(0.1, 0.6, n_payload)},
                    region=region, accel_mps2=2.0, progress=False)


def timed(fn):
    start = time.perf_counter()
    out = fn()
    return time.perf_counter() - start, out


def _map_section(arm, big):
    """Section 1: the 100 x 100 map, with and without the stiffness variables."""
    times = [timed(lambda: ir.metric_map(arm, big, accel_mps2=2.0, approach=(0, 0, -1),
                                         stiffness=False))[0] for _ in range(5)]
    ds = ir.metric_map(arm, big)
    t_map = min(times)
    print(f"map: {ds.sizes['v_m']} x {ds.sizes['u_m']} points, every inertia and torque metric, "
          f"IK included: {t_map:.3f} s (best of 5; {int(ds.status.isin(ir.SOLVED).sum())} "
          f"points solved)")
    t_stiff_map = min(timed(lambda: ir.metric_map(arm, big, accel_mps2=2.0, approach=(0, 0, -1)))[0]
                      for _ in range(5))
    q = ds["q"].values.reshape(-1, ds.sizes["joint"])
    q = q[np.isfinite(q[:, 0])]
    t_f1 = min(timed(lambda: ir.natural_frequencies(arm, q))[0] for _ in range(5))
    t_sag = min(timed(lambda: ir.tool_deflection(arm, q))[0] for _ in range(5))
    t_payload = min(timed(lambda: ir.payload_capacity(arm, q, 2.0))[0] for _ in range(3))
    print(f"map with f1, sag, tool stiffness and payload capacity: {t_stiff_map:.3f} s "
          f"(x{t_stiff_map / t_map:.2f} the map above); kernels alone on the {q.shape[0]} solved "
          f"configurations: f1 {t_f1:.3f} s (x{t_f1 / t_map:.2f}), sag {t_sag:.3f} s "
          f"(x{t_sag / t_map:.2f}), payload capacity {t_payload:.3f} s (x{t_payload / t_map:.2f})")
    return t_map, t_stiff_map


def main(quick=False, variants_only=False):
    arm = ir.load_design(ROOT / "designs" / "kestrel_a.toml")
    big = ir.Rectangle((0.38, 0.05, 0.20), ((1.0, 0.0, 0.0), (0.0, 0.0, 1.0)), (0.495, 0.495), 0.005)
    small = ir.Rectangle((0.38, 0.05, 0.20), ((1.0, 0.0, 0.0), (0.0, 0.0, 1.0)), (0.38, 0.38), 0.02)
    ir.metric_map(arm, small)                               # imports and caches warm
    if not variants_only:
        t_map, t_stiff_map = _map_section(arm, big)
    n_ratio, n_tilt, n_payload = (5, 4, 2) if quick else (10, 10, 10)
    count = n_ratio * n_tilt * n_payload
    with ThreadPoolExecutor(1) as one_core:
        t_sweep, sw = timed(lambda: sweep(arm, small, n_ratio, n_tilt, n_payload).run(one_core))
    per = t_sweep / count
    print(f"sweep: {count} variants on {small.grid_axes()['u_m'].size} x "
          f"{small.grid_axes()['v_m'].size} points, one core: {t_sweep:.2f} s "
          f"({1000 * per:.1f} ms per variant; {sw.results_.attrs['n_failed']} failed)")

    # the same variants through the batched path (ir.score_variants), side by side
    values = [dict(zip(("derived.link_ratio", "mount.rpy_deg[1]", "tool.payload_kg"), map(float, c)))
              for c in np.array(np.meshgrid(np.linspace(0.6, 1.4, n_ratio), np.linspace(0.0, 30.0, n_tilt),
                                            np.linspace(0.1, 0.6, n_payload), indexing="ij"))
              .reshape(3, -1).T]
    # warm-up (imports, caches), then the same variants through the batched path
    ir.score_variants(arm, values[:4], small, accel_mps2=2.0)
    t_exact, exact = timed(lambda: ir.score_variants(arm, values, small, accel_mps2=2.0))
    t_fast, fast = timed(lambda: ir.score_variants(arm, values, small, accel_mps2=2.0, exact=False))
    t_rigid, _ = timed(lambda: ir.score_variants(arm, values, small, accel_mps2=2.0, exact=False,
                                                 stiffness=False))
    t_exact_rigid, _ = timed(lambda: ir.score_variants(arm, values, small, accel_mps2=2.0,
                                                       stiffness=False))
    columns = [c for c in ir.SCORE_COLUMNS if c != "headroom_worst_joint"]

    def worst_diff(rows):
        """Largest |batched - per-variant| over every numeric score, and joint mismatches."""
        diff, joints = 0.0, 0
        for v, (row, _) in enumerate(rows):
            for c in columns:
                a, b = row[c], float(ref_flat[c][v])
                if not (np.isnan(a) and np.isnan(b)):
                    diff = max(diff, abs(a - b) / max(1.0, abs(b)))
            joints += row["headroom_worst_joint"] != ref_flat["headroom_worst_joint"][v]
        return diff, joints

    ref_flat = {c: sw.results_[c].values.ravel() for c in ir.SCORE_COLUMNS}
    d_exact, j_exact = worst_diff(exact)
    d_fast, _ = worst_diff(fast)
    reach_ref = ref_flat["reachable_fraction"]
    reach_fast = np.array([r["reachable_fraction"] for r, _ in fast])
    print(f"batched variants, exact, every score (default): {t_exact:.2f} s "
          f"(x{t_sweep / t_exact:.2f} vs per-variant {t_sweep:.2f} s; largest score difference "
          f"{d_exact:.1e} (relative above 1), worst joint differs in {j_exact} of {count})")
    print(f"batched variants, exact, without f1/sag/payload: {t_exact_rigid:.2f} s "
          f"(x{t_sweep / t_exact_rigid:.2f})")
    print(f"batched variants, continuation only: {t_fast:.2f} s (x{t_sweep / t_fast:.2f}; largest "
          f"score difference {d_fast:.1e}; reachable fraction lower in "
          f"{int(np.sum(reach_fast < reach_ref - 1e-12))} of {count} variants)")
    print(f"batched variants, continuation only, without f1/sag/payload: {t_rigid:.2f} s "
          f"(f1, sag and payload cost x{t_fast / t_rigid:.2f} this)")
    # the benchmark's payload axis shares kinematics (one IK solve per ratio x tilt); the same
    # count of variants with every one's kinematics distinct (link ratio x tilt) for comparison
    distinct = [{"derived.link_ratio": float(r), "mount.rpy_deg[1]": float(t), "tool.payload_kg": 0.3}
                for r in np.linspace(0.6, 1.4, n_ratio * n_payload) for t in np.linspace(0.0, 30.0, n_tilt)]
    t_distinct, _ = timed(lambda: ir.score_variants(arm, distinct, small, accel_mps2=2.0))
    t_distinct_fast, _ = timed(lambda: ir.score_variants(arm, distinct, small, accel_mps2=2.0,
                                                         exact=False))
    print(f"batched variants, {len(distinct)} with distinct kinematics (no shared IK solve): exact "
          f"{t_distinct:.2f} s, continuation only {t_distinct_fast:.2f} s")
    per_batched = t_exact / count
    per_distinct = t_distinct / len(distinct)
    scale = "" if count == 1000 else " (extrapolated)"

    def verdict(per):
        return "met" if per * 1000 <= 3.0 else "MISSED"

    if variants_only:
        print(f"\nsummary: {count} variants on 20 x 20 points: per-variant {t_sweep:.2f} s, batched "
              f"exact {t_exact:.2f} s (x{t_sweep / t_exact:.2f}), continuation only {t_fast:.2f} s, "
              f"without f1/sag/payload {t_exact_rigid:.2f} s (exact) / {t_rigid:.2f} s; "
              f"largest score difference {d_exact:.1e}; distinct kinematics {t_distinct:.2f} s "
              f"(exact) / {t_distinct_fast:.2f} s")
        print("  target <= 3 s per 1,000 variants (exact, every score), one core:")
        print(f"  [{verdict(per_batched)}] benchmark sweep (payload axis shares the kinematics, "
              f"{count // n_payload} IK solves): {per_batched * 1000:.2f} s{scale}")
        print(f"  [{verdict(per_distinct)}] {len(distinct)} variants with distinct kinematics: "
              f"{per_distinct * 1000:.2f} s{scale}")
        return

    from dask.distributed import Client, LocalCluster
    dask_shape = (4, 5, 2) if quick else (5, 8, 5)
    results = {}
    for workers in (1, 2):
        with LocalCluster(n_workers=workers, threads_per_worker=1, processes=True,
                          dashboard_address=None) as cluster, Client(cluster) as client:
            sweep(arm, small, 2, 2, 1).run(client)            # warm the workers
            results[workers] = timed(lambda: sweep(arm, small, *dask_shape).run(client))
    t1, sw1 = results[1]
    t2, sw2 = results[2]
    same = bool(np.array_equal(sw1.results_["gci"].values, sw2.results_["gci"].values,
                               equal_nan=True))
    speedup = t1 / t2
    print(f"dask: {np.prod(dask_shape)} variants, 1 worker {t1:.2f} s, 2 workers {t2:.2f} s, "
          f"speed-up x{speedup:.2f} (results identical: {same})")

    checks = [("100 x 100 map < 0.3 s", t_map < 0.3),
              ("100 x 100 map with f1 and sag (and payload) < 0.5 s", t_stiff_map < 0.5),
              ("1,000-variant sweep < 20 s on one core"
               + (" (extrapolated from --quick)" if quick else ""), per * 1000 < 20),
              ("1,000 batched variants <= 3 s on one core (exact, every score; payload axis "
               "shares the kinematics)" + (" (extrapolated from --quick)" if quick else ""),
               per_batched * 1000 <= 3.0),
              ("1,000 batched variants with distinct kinematics <= 3 s on one core (exact)"
               + (" (extrapolated from --quick)" if quick else ""), per_distinct * 1000 <= 3.0),
              ("two dask workers >= 1.6x one", speedup >= 1.6)]
    print()
    for text, ok in checks:
        print(f"  [{'met' if ok else 'MISSED'}] {text}")
    print(f"\nsummary: map {t_map:.3f} s; with f1/sag/payload {t_stiff_map:.3f} s; "
          f"sweep {per * 1000:.1f} s per 1000 variants; batched {per_batched * 1000:.2f} s per "
          f"1000 (x{t_sweep / t_exact:.2f}, largest score difference {d_exact:.1e}); "
          f"distinct kinematics {per_distinct * 1000:.2f} s per 1000; "
          f"dask x{speedup:.2f}; "
          f"targets met {sum(ok for _, ok in checks)}/{len(checks)}")


if __name__ == "__main__":
    main(quick="--quick" in sys.argv, variants_only="--variants" in sys.argv)
