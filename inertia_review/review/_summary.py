"""Joint-range review summary of a design (private).

Samples the joint range uniformly (seeded) and condenses every metric into one
row; the region layer gives the same over a task region instead.
"""

import numpy as np

from ..core import _metrics
from ..studies._cautions import TORQUE_CAUTION

__all__ = ["joint_range_summary", "format_summary_table", "SUMMARY_COLUMNS"]

#: (key, screen label with unit, format) of the summary table, in order.
SUMMARY_COLUMNS = (
    ("reach_mm", "reach from joint 1 [mm]", "{:.0f}"),
    ("moving_mass_kg", "moving mass [kg]", "{:.3f}"),
    ("near_singular_pct", "near-singular samples [%]", "{:.1f}"),
    ("isotropy_worst", "isotropy worst* [-]", "{:.3f}"),
    ("isotropy_mean", "isotropy mean [-]", "{:.3f}"),
    ("mass_ratio_worst", "mass ratio worst* [-]", "{:.3f}"),
    ("mass_ratio_mean", "mass ratio mean [-]", "{:.3f}"),
    ("static_margin", "static torque margin worst [-]", "{:+.3f}"),
    ("static_limiting_joint", "  limiting joint", "{}"),
    ("min_margin", "torque margin worst* [-]", "{:+.3f}"),
    ("limiting_joint", "  limiting joint", "{}"),
    ("accel_capability_worst_mps2", "accel. capability worst* [m/s^2]", "{:.2f}"),
    ("accel_capability_median_mps2", "accel. capability median [m/s^2]", "{:.2f}"),
)

#: Samples with isotropy below this are near-singular; "worst*" rows leave them out.
NEAR_SINGULAR = 0.01


def joint_range_summary(arm, *, samples=20000, accel_mps2=0.0, random_state=0):
    """Summary of ``arm`` over ``samples`` joint configurations drawn uniformly in its limits.

    Means are joint-space means (uniform in q), not workspace means. The torque margin is
    1 - worst torque / peak rating (gravity plus ``accel_mps2`` [m/s^2] in any task
    direction); the static margin is 1 - |gravity torque| / peak rating. Worst values
    marked "worst*" leave out the near-singular samples (isotropy < 0.01), whose share is
    reported, since the apparent mass there grows without bound. A design-stage
    estimate, not a validation.

    Returns
    -------
    dict
        Keys of :data:`SUMMARY_COLUMNS` plus ``name``, ``samples`` and ``singular_fraction``.
    """
    params = arm._params
    rng = np.random.default_rng(random_state)
    low, high = params.limits[:, 0], params.limits[:, 1]
    q = (low + (high - low) * rng.random((int(samples), params.n))).T.copy()
    terms = _metrics.task_terms(params, q)
    iso = _metrics.isotropy_index(params, terms)
    ratio = _metrics.mass_ratio(params, terms)
    shoulder = terms.frames.origin[0]
    reach = float(np.max(np.linalg.norm(terms.frames.tool - shoulder, axis=0)))
    ok = iso >= NEAR_SINGULAR
    row = {
        "name": arm.name, "samples": int(samples),
        "reach_mm": 1000.0 * reach, "moving_mass_kg": arm.moving_mass,
        "near_singular_pct": 100.0 * float(np.mean(~ok)),
        "isotropy_worst": _worst(iso, ok), "isotropy_mean": float(iso.mean()),
        "mass_ratio_worst": _worst(ratio, ok), "mass_ratio_mean": float(ratio.mean()),
        "static_margin": np.nan, "static_limiting_joint": "not rated",
        "min_margin": np.nan, "limiting_joint": "not rated",
        "accel_capability_worst_mps2": np.nan, "accel_capability_median_mps2": np.nan,
    }
    if np.any(np.isfinite(params.peak_torque)):
        static = _metrics.torque_headroom(params, terms, 0.0)
        worst = int(np.argmin(static.min_margin))
        row["static_margin"] = float(static.min_margin[worst])
        row["static_limiting_joint"] = arm.joint_names[int(static.limiting_joint[worst])]
        head = _metrics.torque_headroom(params, terms, float(accel_mps2))
        if np.any(ok):
            worst = int(np.argmin(np.where(ok, head.min_margin, np.inf)))
            row["min_margin"] = float(head.min_margin[worst])
            row["limiting_joint"] = arm.joint_names[int(head.limiting_joint[worst])]
        cap = _metrics.acceleration_capability(params, terms)
        row["accel_capability_worst_mps2"] = _worst(cap, ok)
        row["accel_capability_median_mps2"] = float(np.median(cap))
    return row


def _worst(values, keep):
    return float(values[keep].min()) if np.any(keep) else np.nan


def format_summary_table(rows):
    """Fixed-width text table: one column per design, one line per metric, then the caution."""
    columns = [[row["name"]] + [_cell(row[key], fmt) for key, _, fmt in SUMMARY_COLUMNS]
               for row in rows]
    labels = ["design"] + [label for _, label, _ in SUMMARY_COLUMNS]
    label_width = max(map(len, labels))
    widths = [max(map(len, col)) for col in columns]
    lines = []
    for i, label in enumerate(labels):
        cells = [col[i].rjust(w) for col, w in zip(columns, widths)]
        lines.append(label.ljust(label_width) + "  " + "  ".join(cells))
        if i == 0:
            lines.append("-" * len(lines[0]))
    note = (f"* worst over the samples that are not near-singular (isotropy >= {NEAR_SINGULAR:g}); "
            "means over all samples.")
    return "\n".join(lines) + "\n" + note + "\n\n" + TORQUE_CAUTION


def _cell(value, fmt):
    if isinstance(value, float) and np.isnan(value):
        return "n/a"
    return fmt.format(value)
