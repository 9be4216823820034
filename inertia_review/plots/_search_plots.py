"""Plots of design-search and sensitivity results (private)."""

from dataclasses import dataclass
from types import SimpleNamespace

import numpy as np

from ..studies._cautions import TORQUE_CAUTION
from ..studies._sensitivity import TORQUE_SCORES
from . import _style
from ._labels import parameter_label, score_label
from ._style import COLORS

__all__ = ["ParetoArtists", "TornadoArtists", "plot_pareto", "plot_tornado"]

_TABLE_COLUMNS = ("low", "high", "score_low", "score_high", "score_baseline", "swing")


@dataclass
class TornadoArtists:
    """Artists of :func:`plot_tornado`.

    Attributes
    ----------
    low_bars, high_bars : BarContainer
        One bar per path (largest swing on top), from the baseline score to the score at
        the low (high) end of the path's range; bar widths in the score's screen units.
    baseline : Line2D
        The baseline score (vertical line).
    paths : list of str
        The paths from top to bottom.
    caution : Text or None
        The torque caution, for a headroom or acceleration score.
    """

    low_bars: object
    high_bars: object
    baseline: object
    paths: list
    caution: object
    ax: object


def _range_text(path, low, high):
    label, factor = parameter_label(path)
    unit = label.rsplit(" [", 1)[1][:-1]
    unit = "" if unit == "-" else f" {unit}"
    return f"{label}\n{low * factor:.4g} to {high * factor:.4g}{unit}"


def plot_tornado(table, *, ax=None, title=None, top=None):
    """A tornado chart of a one-at-a-time sensitivity table.

    Parameters
    ----------
    table : pandas.DataFrame
        :func:`inertia_review.one_at_a_time` output (indexed by path, sorted by |swing|).
    ax : matplotlib Axes, optional
        Draw into it (no new figure).
    title : str, optional
    top : int, optional
        Only the ``top`` largest swings.

    Returns
    -------
    TornadoArtists
    """
    missing = [c for c in _TABLE_COLUMNS if c not in getattr(table, "columns", ())]
    if missing:
        raise ValueError(f"plot_tornado needs a one_at_a_time table; missing columns: "
                         f"{', '.join(missing)}")
    if len(table) == 0:
        raise ValueError("the sensitivity table is empty")
    if top is not None:
        table = table.iloc[: int(top)]
    score = table.attrs.get("score", "score")
    label = score_label(SimpleNamespace(attrs={"units": table.attrs.get("units", "")}), score)
    paths = list(table.index)
    base = float(table["score_baseline"].iloc[0])
    y = np.arange(len(paths))[::-1]                 # largest swing at the top
    low = table["score_low"].to_numpy(float) - base
    high = table["score_high"].to_numpy(float) - base
    with _style.plot_style():
        layout = _style.Layout(ax, width_in=7.2, height_in=1.4 + 0.55 * len(paths))
        ax = layout.ax
        ax.grid(True, axis="x", color=COLORS["grid"], linewidth=0.6, zorder=0)
        ax.set_axisbelow(True)
        low_bars = ax.barh(y, low, left=base, height=0.6, color=COLORS["light"], zorder=3,
                           label="path at the low end of its range")
        high_bars = ax.barh(y, high, left=base, height=0.6, color=COLORS["heavy"], zorder=3,
                            label="path at the high end of its range")
        baseline = ax.axvline(base, color=COLORS["ink"], linewidth=1.2, zorder=4,
                              label=f"baseline design ({base:.4g})")
        ax.set_yticks(y, [_range_text(p, table.loc[p, "low"], table.loc[p, "high"])
                          for p in paths])
        ax.set_xlabel(label)
        design = table.attrs.get("design", "")
        _style.set_title(ax, f"{design}: one-at-a-time sensitivity" if title is None else title)
        layout.legend([low_bars, high_bars, baseline])
        caution = None
        if score in TORQUE_SCORES or "caution" in table.attrs:
            margin = 0.0
            if layout.own:                     # the notes strip starts under the Axes
                renderer = ax.figure.canvas.get_renderer()
                margin = max(t.get_window_extent(renderer).width
                             for t in ax.get_yticklabels()) / ax.figure.dpi
            caution = layout.caution(table.attrs.get("caution", TORQUE_CAUTION), margin_in=margin)
        layout.finish()
    return TornadoArtists(low_bars, high_bars, baseline, paths, caution, ax)


@dataclass
class ParetoArtists:
    """Artists of :func:`plot_pareto`.

    Attributes
    ----------
    feasible, infeasible, pareto : PathCollection
        Evaluated designs that meet every constraint, those that do not (or are invalid
        designs: not drawn), and the Pareto set; offsets in screen units (mm, deg, kg).
    front : Line2D
        The Pareto set joined in order of ``x``.
    indices : numpy.ndarray
        ``evaluation`` numbers of the Pareto points, in the order of the front.
    """

    feasible: object
    infeasible: object
    pareto: object
    front: object
    indices: object
    ax: object


def _quantity(results, name):
    """(values in screen units, label, names or None) of a score variable or a parameter
    path; ``names`` label the positions of a path that holds a name."""
    if name in results.data_vars:
        da = results[name]
        if da.dtype.kind != "f":
            raise ValueError(f"'{name}' is not a numeric score")
        label = score_label(da, name)
        return np.asarray(da.values, float), label, None
    if name in results.coords and name != "evaluation":
        label, factor = parameter_label(name)
        if results[name].dtype.kind in "UO":          # names (e.g. a tube's material)
            positions, names = _name_positions(results[name])
            return positions, label, names
        return np.asarray(results[name].values, float) * factor, label, None
    numeric = [k for k, v in results.data_vars.items() if v.dtype.kind == "f"]
    raise KeyError(f"'{name}' is neither a score ({', '.join(numeric)}) nor a searched "
                   f"parameter ({', '.join(results.attrs.get('parameters', []))})")


def _name_positions(da):
    """(positions (S,), names): positions 0, 1, ... of the names of a choice parameter, in
    the order of its ``choices`` attribute (else sorted)."""
    values = np.asarray(da.values).astype(str)
    names = [n for n in str(da.attrs.get("choices", "")).split(", ") if n] \
        or sorted(set(values))
    names += sorted(set(values) - set(names))
    return np.array([names.index(v) for v in values], float), names


def plot_pareto(results, x, y, *, ax=None, title=None):
    """Evaluated designs of a search on two quantities, the Pareto set marked.

    Parameters
    ----------
    results : xarray.Dataset or DesignSearch
        ``DesignSearch(...).run().results_`` (over ``evaluation``, with ``feasible`` and
        ``pareto``), or the run search itself.
    x, y : str
        Score variables (e.g. ``"moving_mass_kg"``, ``"gci"``) or searched parameter paths
        (shown in mm / deg / kg; a path holding a name, e.g. a tube's material, is drawn at
        one position per name, ticks labelled with the names).
    ax : matplotlib Axes, optional

    Returns
    -------
    ParetoArtists
    """
    results = getattr(results, "results_", results)
    for needed in ("feasible", "pareto"):
        if needed not in getattr(results, "data_vars", {}):
            raise ValueError(f"plot_pareto needs DesignSearch results (no '{needed}' variable)")
    xs, xlabel, xnames = _quantity(results, x)
    ys, ylabel, ynames = _quantity(results, y)
    finite = np.isfinite(xs) & np.isfinite(ys)
    feasible = np.asarray(results["feasible"].values, bool) & finite
    pareto = np.asarray(results["pareto"].values, bool) & finite
    infeasible = ~feasible & finite
    order = np.flatnonzero(pareto)[np.argsort(xs[pareto], kind="stable")]
    with _style.plot_style():
        layout = _style.Layout(ax, height_in=5.0)
        ax = layout.ax
        ax.grid(True, color=COLORS["grid"], linewidth=0.6, zorder=0)
        ax.set_axisbelow(True)
        bad = ax.scatter(xs[infeasible], ys[infeasible], s=14, marker="x", linewidths=0.8,
                         color=COLORS["muted"], zorder=2,
                         label=f"misses a constraint ({int(infeasible.sum())})")
        good = ax.scatter(xs[feasible], ys[feasible], s=18, color=COLORS["light"], alpha=0.6,
                          zorder=3, label=f"meets the constraints ({int(feasible.sum())})")
        (front,) = ax.plot(xs[order], ys[order], color=COLORS["probe"], linewidth=1.2,
                           zorder=4)
        best = ax.scatter(xs[order], ys[order], s=46, color=COLORS["probe"],
                          edgecolors="white", linewidths=0.8, zorder=5,
                          label=f"Pareto set ({order.size})")
        ax.set_xlabel(xlabel)
        ax.set_ylabel(ylabel)
        for axis, names in ((ax.xaxis, xnames), (ax.yaxis, ynames)):
            if names is not None:
                axis.set_ticks(range(len(names)), names)
        design = results.attrs.get("design", "")
        _style.set_title(ax, f"{design}: evaluated designs" if title is None else title)
        layout.legend([bad, good, best])
        layout.finish()
    return ParetoArtists(good, bad, best, front, np.asarray(results["evaluation"].values)[order],
                         ax)
