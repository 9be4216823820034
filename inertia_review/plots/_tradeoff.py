"""Trade-off plots of sweep results (private)."""

from dataclasses import dataclass

import numpy as np

from . import _style
from ._labels import parameter_label, score_label
from ._style import COLORS

__all__ = ["plot_tradeoff", "TradeoffArtists"]


@dataclass
class TradeoffArtists:
    """Artists of :func:`plot_tradeoff`.

    Attributes
    ----------
    kind : {"lines", "heatmap"}
    lines : list of Line2D
        One per value of ``hue`` (or a single line); empty for a heat map.
    mesh : QuadMesh or None
        The heat map (rows: second parameter, columns: first), score in its units.
    colorbar : Colorbar or None
    best : Line2D
        Marker at the best variant.
    best_values : dict
        Parameter values of the best variant, and ``score`` its score.
    """

    kind: str
    lines: list
    mesh: object
    colorbar: object
    best: object
    best_values: dict
    ax: object


def _best(results, score, maximize):
    values = np.asarray(results[score].values, float)
    finite = np.isfinite(values)
    if not finite.any():
        raise ValueError(f"score '{score}' has no finite value in the sweep results")
    flat = np.where(finite, values if maximize else -values, -np.inf)
    index = np.unravel_index(int(np.argmax(flat)), values.shape)
    return dict(zip(results[score].dims, (int(i) for i in index))), float(values[index])


def _value_text(path, value):
    label, factor = parameter_label(path)
    name, unit = label.rsplit(" [", 1)
    unit = unit[:-1]
    return f"{name} = {value * factor:.4g}" + ("" if unit == "-" else f" {unit}")


def plot_tradeoff(results, score="gci", *, ax=None, x=None, hue=None, maximize=True,
                  cmap=None, title=None):
    """A score against the swept parameters, with the best variant marked.

    One swept parameter (or ``x`` given): the score against ``x``, one line per value
    of the other parameter (``hue``). Two parameters and no ``x``: a heat map (first
    parameter across, second up). Parameter paths are shown in screen units (mm,
    deg, kg) from their names.

    Parameters
    ----------
    results : xarray.Dataset or Sweep
        ``Sweep(...).run().results_`` (a full grid over the swept parameters) or the
        run ``Sweep`` itself.
    score : str, default "gci"
        A score variable (``inertia_review.SCORE_COLUMNS``).
    x, hue : str, optional
        Parameter paths for the x axis and the line colours.
    maximize : bool, default True
        Whether larger scores are better (False, e.g., for ``moving_mass_kg``).

    Returns
    -------
    TradeoffArtists
    """
    import matplotlib as mpl
    import matplotlib.colors as mcolors

    results = getattr(results, "results_", results)
    if score not in results.data_vars:
        numeric = [k for k, v in results.data_vars.items() if v.dtype.kind == "f"]
        raise KeyError(f"No score named '{score}'. Scores: {', '.join(numeric)}")
    da = results[score]
    params = list(da.dims)
    if "variant" in params:
        raise ValueError("plot_tradeoff needs a full grid sweep (Sweep(vary=...)); results over "
                         "a 'variant' list have no grid to draw")
    if not 1 <= len(params) <= 2:
        raise ValueError(f"plot_tradeoff draws one or two swept parameters; these results have "
                         f"{len(params)} ({params}): select the others first, e.g. "
                         f"results.sel({{'{params[-1]}': ...}})")
    for name, value in (("x", x), ("hue", hue)):
        if value is not None and value not in params:
            raise ValueError(f"`{name}` = '{value}' is not a swept parameter; parameters: "
                             f"{', '.join(params)}")
    best_pos, best_score = _best(results, score, maximize)
    best_values = {p: float(results[p].values[best_pos[p]]) for p in params}
    best_values["score"] = best_score
    label = score_label(da, score)
    with _style.plot_style():
        layout = _style.Layout(ax, height_in=5.4)
        ax = layout.ax
        ax.grid(True, color=COLORS["grid"], linewidth=0.6, zorder=0)
        ax.set_axisbelow(True)
        lines, mesh, cbar = [], None, None
        if len(params) == 2 and x is None and hue is None:
            kind = "heatmap"
            px, py = params
            fx = parameter_label(px)[1]
            fy = parameter_label(py)[1]
            xs = np.asarray(results[px].values, float) * fx
            ys = np.asarray(results[py].values, float) * fy
            z = np.ma.masked_invalid(np.asarray(da.transpose(py, px).values, float))
            ax.grid(False)
            mesh = ax.pcolormesh(xs, ys, z, shading="nearest", cmap=cmap or
                                 _style.CMAP_SEQUENTIAL, norm=mcolors.Normalize(), zorder=1)
            cbar = ax.figure.colorbar(mesh, ax=ax, label=label, shrink=0.9)
            ax.set_xlabel(parameter_label(px)[0])
            ax.set_ylabel(parameter_label(py)[0])
            bx, by = best_values[px] * fx, best_values[py] * fy
        else:
            kind = "lines"
            px = x or next(p for p in params if p != hue)
            others = [p for p in params if p != px]
            ph = hue or (others[0] if others else None)
            fx = parameter_label(px)[1]
            xs = np.asarray(results[px].values, float) * fx
            if ph is None:
                (line,) = ax.plot(xs, np.asarray(da.values, float), marker="o",
                                  color=COLORS["worst"], zorder=3)
                lines.append(line)
            else:
                hl, fh = parameter_label(ph)
                hv = np.asarray(results[ph].values, float)
                colors = mpl.colormaps[_style.CMAP_SEQUENTIAL](np.linspace(0.0, 0.85, len(hv)))
                for i, value in enumerate(hv):
                    ys = np.asarray(da.isel({ph: i}).transpose(px).values, float)
                    (line,) = ax.plot(xs, ys, marker="o", markersize=4, color=colors[i],
                                      label=f"{value * fh:g}", zorder=3)
                    lines.append(line)
                ax.legend(title=hl, loc="best")
            ax.set_xlabel(parameter_label(px)[0])
            ax.set_ylabel(label)
            bx, by = best_values[px] * fx, best_score
        text = "\n".join(_value_text(p, best_values[p]) for p in params)
        (best,) = ax.plot([bx], [by], linestyle="none", marker="*", markersize=16,
                          markerfacecolor=COLORS["probe"], markeredgecolor="white", zorder=6,
                          label=f"best ({score} = {best_score:.4g}):\n{text}")
        hue_legend = ax.get_legend()
        if hue_legend is not None and layout.notes is None:
            ax.add_artist(hue_legend)          # keep it when the best legend goes in the Axes
        layout.legend([best], loc="lower right" if kind == "heatmap" else "best")
        design = results.attrs.get("design", "")
        _style.set_title(ax, f"{design}: {label.rsplit(' [', 1)[0]}" if title is None else title)
        layout.finish()
    return TradeoffArtists(kind, lines, mesh, cbar, best, best_values, ax)
