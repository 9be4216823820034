"""Stable text tables of accepted design scores, for nbval-guarded baselines (private)."""

import math

from ..studies._scores import BETTER, SCORE_COLUMNS, design_scores, scores_table

__all__ = ["baseline_table", "scores_view"]

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


#: SI units attribute of a score -> its unit on screen
_SCREEN_UNITS = {"1": "-", "": "-", "m s^-2": "m/s²", "kg": "kg"}

#: CSS of the compact table: small type, header words wrap, so 11 scores fit a page
_TABLE_STYLES = [
    {"selector": "", "props": "font-size: 85%; border-collapse: collapse; width: auto;"},
    {"selector": "th.col_heading", "props": "white-space: normal; max-width: 6.5em; "
                                            "vertical-align: bottom; text-align: right;"},
    {"selector": "td", "props": "padding: 2px 6px; text-align: right; white-space: nowrap;"},
    {"selector": "th.row_heading", "props": "text-align: left; white-space: nowrap;"},
    {"selector": "caption", "props": "caption-side: bottom; text-align: left; font-size: 90%; "
                                     "color: #555; max-width: 60em;"},
]


def scores_view(maps, *, decimals=4, columns=None):
    """One compact table of the scores for reviewers: a row per design, a column per score.

    Headers carry the screen unit (``gci [-]``, ``accel capability min [m/s²]``) and wrap, so
    every score fits the page; the best value of each score (higher or lower is better,
    ``inertia_review.studies._scores.BETTER``) is bold on a tinted cell with a ★. The
    numbers are :func:`inertia_review.scores_table`'s, shown with the decimals of
    :func:`baseline_table` (which stays the nbval-checked record).

    Parameters
    ----------
    maps : sequence of xarray.Dataset, or a DataFrame from ``scores_table``
    decimals : int, default 4
    columns : sequence of str, optional

    Returns
    -------
    pandas.io.formats.style.Styler
        ``.data`` holds the numbers (SI, unrounded); ``best_`` maps each score to the
        designs marked best (all of them on a tie; no mark when every design ties).
    """
    import numpy as np
    import pandas as pd

    table = maps if isinstance(maps, pd.DataFrame) else scores_table(list(maps))
    columns = list(columns or [c for c in SCORE_COLUMNS if c in table.columns])
    unknown = [c for c in columns if c not in SCORE_COLUMNS]
    if unknown:
        raise KeyError(f"No score named {unknown[0]!r}. Scores: {', '.join(SCORE_COLUMNS)}")
    table = table[columns]
    best = {}
    for c in columns:
        values = table[c]
        if BETTER.get(c) is None or not np.issubdtype(values.dtype, np.number):
            continue
        if values.notna().any() and values.nunique(dropna=True) > 1:
            top = values.max() if BETTER[c] else values.min()
            best[c] = [name for name, v in values.items() if v == top]     # ties: all

    def fmt(column):
        digits = _DECIMALS.get(column, decimals)
        return lambda value: _cell(value, digits)

    headers = {c: f"{c.replace('_kg', '').replace('_', ' ')} "
                  f"[{_SCREEN_UNITS.get(SCORE_COLUMNS[c][0], SCORE_COLUMNS[c][0])}]"
               for c in columns}

    def mark(frame):
        css = pd.DataFrame("", index=frame.index, columns=frame.columns)
        for c, names in best.items():
            css.loc[names, c] = "font-weight: bold; background-color: #dcecf7;"
        return css

    styler = (table.style
              .format({c: fmt(c) for c in columns})
              .apply(mark, axis=None)
              .format_index(lambda c: headers.get(c, c), axis=1)
              .set_table_styles(_TABLE_STYLES)
              .set_caption("Bold on blue, ★: best value of the score among these designs "
                           "(higher is better; moving mass: lower). Torque and acceleration "
                           "numbers are design-stage estimates, not a validation; standards, "
                           "local regulations and licensed practice decide."))
    for c, names in best.items():
        digits = _DECIMALS.get(c, decimals)
        styler = styler.format(lambda v, d=digits: f"★ {_cell(v, d)}",
                               subset=pd.IndexSlice[names, [c]])
    styler.set_uuid("ir-scores")            # the same HTML on every run (clean notebook diffs)
    styler.best_ = best
    return styler
