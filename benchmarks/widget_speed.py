"""Kernel-side time from a design-slider change to the finished in-place map update.

A MapPanel of the 3-joint demo arm (designs/kestrel_a.toml) over a 60 x 60 grid of its task
rectangle; 20 changes of the shoulder link length through DesignControls (as a slider release
does); the median time until the panel's image holds the new PNG. Printed beside the time of
the same recomputation drawn the naive way: a new figure with ``plot_metric_map`` each time.
Target (issue 4): 100 ms or less. Run: ``python benchmarks/widget_speed.py``.
"""

import os

os.environ.setdefault("OMP_NUM_THREADS", "1")
os.environ.setdefault("OPENBLAS_NUM_THREADS", "1")
os.environ.setdefault("MPLBACKEND", "Agg")

import statistics  # noqa: E402
import time  # noqa: E402
from pathlib import Path  # noqa: E402

import numpy as np  # noqa: E402

import inertia_review as ir  # noqa: E402
from inertia_review.plots import plot_metric_map  # noqa: E402
from inertia_review.widgets import DesignControls, MapPanel  # noqa: E402
from inertia_review.widgets._render import new_figure, png_bytes  # noqa: E402

ROOT = Path(__file__).resolve().parents[1]
CHANGES = 20


def main():
    arm = ir.load_design(ROOT / "designs" / "kestrel_a.toml")
    r = arm.task.region
    side = min(r.size_m)
    region = ir.Rectangle(r.center_m, r.axes, (side, side), side / 59.0)
    grid = region.grid_axes()
    controls = DesignControls(arm)
    panel = MapPanel(arm, region, map_options={"accel_mps2": 2.0})
    controls.observe(lambda change: setattr(panel, "arm", change["new"]), names="arm")
    path = "joints[shoulder].link_length_m"
    lengths = np.linspace(0.30, 0.40, CHANGES)
    in_place = []
    for value in lengths:
        start = time.perf_counter()
        controls.set_value(path, float(value))
        in_place.append(time.perf_counter() - start)
        assert panel.error == "" and panel.arm is controls.arm
    naive = []
    for value in lengths:
        start = time.perf_counter()
        variant = arm.with_values({path: float(value)})
        ds = ir.metric_map(variant, region, accel_mps2=2.0)
        fig = new_figure(6.4, 4.8)
        plot_metric_map(ds, "mass_ratio", ax=fig.add_subplot())
        png_bytes(fig)
        naive.append(time.perf_counter() - start)
    t_in, t_naive = statistics.median(in_place), statistics.median(naive)
    print(f"60 x 60 map ({grid['v_m'].size} x {grid['u_m'].size} points), {CHANGES} slider changes")
    print(f"  in-place update (recompute + update artists + render): median {1000 * t_in:.1f} ms")
    print(f"  new figure each time (recompute + full draw + render):  median {1000 * t_naive:.1f} ms")
    ok = t_in <= 0.1
    print(f"\n  [{'met' if ok else 'MISSED'}] median in-place update <= 100 ms")
    print(f"\nsummary: in-place {1000 * t_in:.1f} ms, naive {1000 * t_naive:.1f} ms, "
          f"ratio x{t_naive / t_in:.2f}; target {'met' if ok else 'missed'}")


if __name__ == "__main__":
    main()
