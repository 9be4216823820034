"""Design scores: one row per map (private).

Every score is computed from a map Dataset (``metric_map``), so a score can be
redone by hand from the map's own variables.
"""

import numpy as np

from ._ik_status import SOLVED

__all__ = ["design_scores", "scores_from_arrays", "scores_table", "SCORE_COLUMNS", "BETTER"]

#: score name -> (units, definition); the order is the table's column order
SCORE_COLUMNS = {
    "reachable_fraction": ("1", "share of the region's grid points solved (status ok or branch_seam)"),
    "gci": ("1", "global conditioning index (Gosselin & Angeles 1991): mean of the isotropy "
                 "index 1/kappa (2-norm condition number of J_t) over the reachable part of "
                 "the region, each grid point weighted by its cell area (or volume)"),
    "isotropy_worst": ("1", "lowest isotropy index over the reachable points"),
    "isotropy_p5": ("1", "5th percentile of the isotropy index over the reachable points"),
    "mass_ratio_worst": ("1", "lowest min/max apparent-mass ratio over the reachable points"),
    "mass_ratio_p5": ("1", "5th percentile of the min/max apparent-mass ratio"),
    "headroom_worst": ("1", "lowest torque headroom (1 - utilisation) over the reachable points"),
    "headroom_worst_joint": ("", "joint that limits at the worst headroom point"),
    "headroom_positive_fraction": ("1", "share of the reachable points with headroom > 0"),
    "accel_capability_min": ("m s^-2", "lowest acceleration capability over the reachable points"),
    "moving_mass_kg": ("kg", "total moving mass: links, point masses and payload"),
    # linear-elastic estimates (STIFFNESS_CAUTION); NaN where the design has no elastic part
    # or no peak rating
    "f1_lowest_hz": ("Hz", "lowest first natural frequency over the reachable points"),
    "sag_largest_m": ("m", "largest static tool sag under gravity over the reachable points"),
    "payload_rated_kg": ("kg", "payload capacity at the worst reachable point (every rated "
                               "joint within its peak torque at the task acceleration)"),
}


#: for each score, whether higher is better (True), lower is better (False) or neither (None)
BETTER = {"reachable_fraction": True, "gci": True, "isotropy_worst": True, "isotropy_p5": True,
          "mass_ratio_worst": True, "mass_ratio_p5": True, "headroom_worst": True,
          "headroom_worst_joint": None, "headroom_positive_fraction": True,
          "accel_capability_min": True, "moving_mass_kg": False}

def _percentile(values, q):
    return float(np.percentile(values, q)) if values.size else np.nan


def design_scores(ds):
    """Scores of one map (a ``metric_map`` Dataset) as a dict (``SCORE_COLUMNS`` keys + design).

    Region means use the region's own measure: every grid point carries the same cell area
    (rectangle) or volume (box), so the mean over reachable points is the area- (volume-)
    weighted mean; it is not a joint-space mean. Both choices change the number
    (Gosselin & Angeles 1991 integrate over the workspace).
    """
    arrays = {name: ds[name].values for name in ds.data_vars}
    return scores_from_arrays(arrays, ds.attrs, list(ds["joint"].values))


def scores_from_arrays(arrays, attrs, joint_names):
    """:func:`design_scores` from the map's arrays and attributes (no Dataset needed)."""
    ok = np.isin(arrays["status"], SOLVED)           # ok or solved at a branch seam
    iso = arrays["isotropy"][ok]
    ratio = arrays["mass_ratio"][ok]
    weight = np.full(iso.shape, float(attrs.get("cell_measure", 1.0)))
    row = {
        "design": attrs.get("design", ""),
        "reachable_fraction": float(ok.mean()) if ok.size else 0.0,
        "gci": float(np.sum(iso * weight) / np.sum(weight)) if iso.size else np.nan,
        "isotropy_worst": float(iso.min()) if iso.size else np.nan,
        "isotropy_p5": _percentile(iso, 5),
        "mass_ratio_worst": float(ratio.min()) if ratio.size else np.nan,
        "mass_ratio_p5": _percentile(ratio, 5),
        "headroom_worst": np.nan, "headroom_worst_joint": "not rated",
        "headroom_positive_fraction": np.nan, "accel_capability_min": np.nan,
        "moving_mass_kg": float(attrs.get("moving_mass_kg", np.nan)),
    }
    if "min_margin" in arrays and iso.size:
        margin = arrays["min_margin"][ok]
        worst = int(np.argmin(margin))
        joint_index = int(arrays["limiting_joint"][ok][worst])
        row["headroom_worst"] = float(margin[worst])
        row["headroom_worst_joint"] = str(joint_names[joint_index])
        row["headroom_positive_fraction"] = float(np.mean(margin > 0.0))
        row["accel_capability_min"] = float(arrays["accel_capability"][ok].min())
    for score, name, pick in (("f1_lowest_hz", "first_frequency", np.min),
                              ("sag_largest_m", "sag", np.max),
                              ("payload_rated_kg", "payload_capacity", np.min)):
        row[score] = float(pick(arrays[name][ok])) if name in arrays and iso.size else np.nan
    return row


def scores_table(maps):
    """A pandas DataFrame of scores, one row per map, indexed by design name."""
    import pandas as pd

    rows = [design_scores(ds) for ds in maps]
    frame = pd.DataFrame(rows).set_index("design")
    frame.attrs["units"] = {k: v[0] for k, v in SCORE_COLUMNS.items()}
    frame.attrs["definitions"] = {k: v[1] for k, v in SCORE_COLUMNS.items()}
    return frame[list(SCORE_COLUMNS)]
