"""Stable text tables of accepted design scores, for nbval-guarded baselines (private)."""

import math

from ..studies._scores import SCORE_COLUMNS, design_scores

__all__ = ["baseline_table"]

#: decimals printed per score (fixed, so that the text changes only when a value does)
_DECIMALS = {"accel_capability_min": 3, "moving_mass_kg": 4, "f1_lowest_hz": 2,
             "sag_largest_m": 7, "payload_rated_kg": 3}


def _cell(value, decimals):
    if isinstance(value, str):
        return value
    if value is None or (isinstance(value, float) and math.isnan(value)):
        return "n/a"
    text = f"{value:.{decimals}f}"
    return "0." + "0" * decimals if text == "-0." + "0" * decimals else text


def baseline_table(maps, *, decimals=4, columns=None):
    """A fixed-precision text table of the scores of each map (one row per design).

    Parameters
    ----------
    maps : sequence of xarray.Dataset
        Maps from :func:`inertia_review.metric_map`.
    decimals : int, default 4
        Decimals of every dimensionless score (accelerations 3, masses 4, frequencies 2,
        sag 7 (0.1 um), payloads 3).
    columns : sequence of str, optional
        Score names (default: every score of ``SCORE_COLUMNS``).

    Returns
    -------
    str
        The same text for the same numbers on every run: print it in a notebook cell
        marked ``# NBVAL_CHECK_OUTPUT`` so that nbval fails when an accepted design's
        metrics change.
    """
    columns = list(columns or SCORE_COLUMNS)
    unknown = [c for c in columns if c not in SCORE_COLUMNS]
    if unknown:
        raise KeyError(f"No score named {unknown[0]!r}. Scores: {', '.join(SCORE_COLUMNS)}")
    rows = [design_scores(ds) for ds in maps]
    header = ["design"] + [f"{c} [{SCORE_COLUMNS[c][0] or '-'}]" for c in columns]
    body = [[row["design"]] + [_cell(row[c], _DECIMALS.get(c, decimals)) for c in columns]
            for row in rows]
    # one line per (design, score): stable, diff-friendly, no wide lines
    label_width = max(len(h) for h in header)
    name_width = max(len(r[0]) for r in body)
    lines = []
    for r in body:
        for label, cell in zip(header[1:], r[1:]):
            lines.append(f"{r[0]:<{name_width}}  {label:<{label_width}}  {cell:>12}")
    return "\n".join(lines)
