"""Sensitivity of one score to parameter paths of a design (private).

``one_at_a_time`` moves each path alone to the ends of its range, the others at the
baseline (a tornado table). ``global_sensitivity`` samples the whole box with SALib:
Morris elementary effects (Morris 1991; mu_star of Campolongo, Cariboni & Saltelli 2007)
or Sobol indices (Saltelli 2002; Saltelli et al. 2010 estimators, as implemented by SALib).
Both evaluate all their variants through ``score_variants`` (one batched call), and
validate the paths and ranges as ``DesignSearch`` does (``check_space``).
"""

import numpy as np
import pandas as pd

from ..model._paths import get_value, path_choices
from ._cautions import TORQUE_CAUTION
from ._scores import SCORE_COLUMNS
from ._search import check_independent, check_space
from ._variants import score_variants

__all__ = ["global_sensitivity", "one_at_a_time"]

#: scores from torque ratings and accelerations: their tables carry ``attrs["caution"]``
TORQUE_SCORES = ("headroom_worst", "headroom_positive_fraction", "accel_capability_min")


def _check_score(score):
    if score not in SCORE_COLUMNS or score == "headroom_worst_joint":
        numeric = [c for c in SCORE_COLUMNS if c != "headroom_worst_joint"]
        raise ValueError(f"`score` = {score!r} is not a numeric score column; scores: "
                         f"{', '.join(numeric)}")


def _check_vary(arm, vary):
    if not isinstance(vary, dict) or not vary:
        raise ValueError("`vary` must be a non-empty dict of {parameter path: (low, high)}")
    space = {}
    for path, entry in vary.items():
        if path_choices(path) is not None:
            raise ValueError(f"`vary['{path}']`: this path holds a name (one of "
                             f"{', '.join(path_choices(path))}), not a number; a sensitivity "
                             "needs a numeric (low, high) range: compare the names with "
                             "ir.Sweep or ir.DesignSearch instead")
        if not (isinstance(entry, (tuple, list)) and len(entry) == 2):
            raise ValueError(f"`vary['{path}']` must be a (low, high) pair; got {entry!r}")
        try:
            space[path] = (float(entry[0]), float(entry[1]))
        except (TypeError, ValueError):
            raise ValueError(f"`vary['{path}']` must be a (low, high) pair of numbers; got "
                             f"{entry!r}") from None
    spec = arm.to_dict()
    paths, bounds, _ = check_space(spec, space)
    return spec, paths, np.asarray(bounds, float)


def _attrs(table, arm, score, **extra):
    table.attrs.update(score=score, units=SCORE_COLUMNS[score][0], design=arm.name, **extra)
    if score in TORQUE_SCORES:
        table.attrs["caution"] = TORQUE_CAUTION
    return table


def _region(arm, region):
    region = region if region is not None else arm.task
    if region is None:
        raise ValueError(f"design '{arm.name}' has no [task] region: pass `region`")
    return region


def _scores(arm, variants, region, score, options):
    """Score values (S,) of the variants; raises naming the variant when one has no value."""
    out = score_variants(arm, variants, region, **options)
    values = np.empty(len(variants))
    for i, ((row, error), variant) in enumerate(zip(out, variants)):
        if row is None:
            raise ValueError(f"variant {variant!r} is not a valid design: {error}")
        v = float(row[score])
        if not np.isfinite(v):
            raise ValueError(f"score '{score}' has no finite value for the variant {variant!r} "
                             "(e.g. no reachable point, or no actuator ratings for a headroom "
                             "score): narrow the ranges or choose another score")
        values[i] = v
    return values


def one_at_a_time(arm, vary, score="gci", region=None, *, accel_mps2=None, posture="elbow_up",
                  payload_kg=None):
    """One-at-a-time sensitivity of a score (a tornado table).

    Each path moves alone to the low and the high end of its range, the others stay at
    the design's values. All 2 d + 1 variants are scored in one batched call.

    Parameters
    ----------
    arm : Arm
        The baseline design.
    vary : dict of {path: (low, high)}
        Parameter paths (:func:`inertia_review.parameter_paths`) and their ranges, in the
        path's own units (SI, or degrees for ``*_deg`` paths).
    score : str, default "gci"
        A numeric score column (``inertia_review.SCORE_COLUMNS``).
    region : Task or region, optional
        Where to score (default: the design's own ``[task]``).
    accel_mps2, posture, payload_kg
        As for :func:`inertia_review.metric_map`.

    Returns
    -------
    pandas.DataFrame
        Indexed by ``path``, sorted by ``|swing|`` (largest first); columns ``baseline_value``,
        ``low``, ``high`` (parameter values), ``score_low``, ``score_high``, ``score_baseline``,
        ``swing`` (= score_high - score_low). ``attrs``: ``score``, ``units``, ``design``, and
        ``caution`` (the torque caution) for a headroom or acceleration score: a
        design-stage estimate, not a validation.

    Raises
    ------
    DesignError
        An unknown path, or a range end that design validation refuses (names the path).
    """
    _check_score(score)
    spec, paths, bounds = _check_vary(arm, vary)
    region = _region(arm, region)
    variants = [{}]
    for path, (low, high) in zip(paths, bounds):
        variants += [{path: float(low)}, {path: float(high)}]
    y = _scores(arm, variants, region, score, {"accel_mps2": accel_mps2, "posture": posture,
                                                   "payload_kg": payload_kg})
    base = y[0]
    table = pd.DataFrame({
        "path": paths,
        "baseline_value": [float(get_value(spec, p)) for p in paths],
        "low": bounds[:, 0], "high": bounds[:, 1],
        "score_low": y[1::2], "score_high": y[2::2],
        "score_baseline": np.full(len(paths), base),
    })
    table["swing"] = table["score_high"] - table["score_low"]
    order = np.argsort(-np.abs(table["swing"].to_numpy()), kind="stable")
    table = table.iloc[order].set_index("path")
    return _attrs(table, arm, score, method="one_at_a_time")


def global_sensitivity(arm, vary, score="gci", region=None, *, method="morris",
                       n_trajectories=10, num_levels=4, n_samples=64, seed=0,
                       accel_mps2=None, posture="elbow_up", payload_kg=None):
    """Global sensitivity of a score over the box of parameter ranges (SALib).

    Parameters
    ----------
    arm, vary, score, region, accel_mps2, posture, payload_kg
        As for :func:`one_at_a_time`.
    method : {"morris", "sobol"}
        ``"morris"``: elementary effects on ``n_trajectories`` trajectories of a
        ``num_levels`` grid ((d + 1) * n_trajectories variants). ``"sobol"``: first-order
        and total indices from Saltelli's sampling of ``n_samples`` base points
        ((d + 2) * n_samples variants; ``n_samples`` a power of two).
    seed : int
        Seeds SALib's sampling and bootstrap: the same seed gives the same table.

    Returns
    -------
    pandas.DataFrame
        Indexed by ``path``. Morris: ``mu``, ``mu_star``, ``sigma``, ``mu_star_conf``, sorted
        by ``mu_star`` (largest first). SALib takes the elementary effects on the unit
        hypercube, so ``mu``/``mu_star``/``sigma`` are in score units per full range of the
        path (for a score ``a * x``, mu_star = |a| (high - low)). Sobol: ``S1``, ``S1_conf``,
        ``ST``, ``ST_conf`` (shares of the score's variance, 1), sorted by ``ST``.
        ``attrs``: ``score``, ``units``, ``design``, ``method``, ``evaluations``, ``seed``.
    """
    _check_score(score)
    spec, paths, bounds = _check_vary(arm, vary)
    check_independent(spec, paths, bounds)       # all paths move together here
    region = _region(arm, region)
    problem = {"num_vars": len(paths), "names": list(paths), "bounds": bounds.tolist()}
    options = {"accel_mps2": accel_mps2, "posture": posture, "payload_kg": payload_kg}
    if method == "morris":
        from SALib.analyze import morris as analyze
        from SALib.sample import morris as sample

        if int(n_trajectories) < 2:
            raise ValueError(f"`n_trajectories` must be >= 2; got {n_trajectories!r}")
        X = sample.sample(problem, int(n_trajectories), num_levels=int(num_levels), seed=seed)
        y = _scores(arm, [dict(zip(paths, map(float, x))) for x in X], region, score, options)
        res = analyze.analyze(problem, X, y, num_levels=int(num_levels), seed=seed)
        table = pd.DataFrame({"path": paths, "mu": res["mu"], "mu_star": res["mu_star"],
                              "sigma": res["sigma"], "mu_star_conf": res["mu_star_conf"]})
        key = "mu_star"
    elif method == "sobol":
        from SALib.analyze import sobol as analyze
        from SALib.sample import sobol as sample

        n = int(n_samples)
        if n < 2 or n & (n - 1):
            raise ValueError(f"`n_samples` must be a power of two >= 2; got {n_samples!r}")
        X = sample.sample(problem, n, calc_second_order=False, seed=seed)
        y = _scores(arm, [dict(zip(paths, map(float, x))) for x in X], region, score, options)
        if np.ptp(y) == 0.0:
            raise ValueError(f"score '{score}' does not vary over these ranges: Sobol indices "
                             "(shares of its variance) are undefined")
        res = analyze.analyze(problem, y, calc_second_order=False, seed=seed)
        table = pd.DataFrame({"path": paths, "S1": res["S1"], "S1_conf": res["S1_conf"],
                              "ST": res["ST"], "ST_conf": res["ST_conf"]})
        key = "ST"
    else:
        raise ValueError(f"`method` must be 'morris' or 'sobol'; got {method!r}")
    order = np.argsort(-table[key].to_numpy(), kind="stable")
    table = table.iloc[order].set_index("path")
    return _attrs(table, arm, score, method=method, evaluations=len(X), seed=seed)
