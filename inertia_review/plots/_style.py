"""The look of inertia_review figures: colours, font sizes, grid (private).

Nothing here changes matplotlib's global state: the settings are applied only
inside :func:`plot_style` (an ``rc_context``) while our functions draw.

The figure lifecycle under a notebook's inline backend: pyplot picks its backend lazily,
when the first figure is made, and IPython then switches interactive mode on; a figure
made in interactive mode is shown (once) when the cell ends. A plain ``rc_context``
restores *every* rc value on exit, ``interactive`` included, so when the first figure of
a session was made inside it, interactive mode went off again and no later figure was
ever shown (it stayed open in pyplot instead). :func:`plot_style` therefore restores
the look only and leaves the interactive mode as the body left it: it is session
state, not style.
"""

import contextlib
import textwrap

import matplotlib
import numpy as np

__all__ = ["COLORS", "RC", "CMAP_SEQUENTIAL", "CMAP_DIVERGING", "HATCHES", "plot_style",
           "Layout", "add_caution", "principal_colors", "set_title"]

#: Our colours. Chosen to stay distinguishable under the common colour-vision
#: deficiencies: dark ink, a blue and an orange from the Okabe & Ito palette
#: (Okabe & Ito, "Color universal design", 2008; hex values from memory).
COLORS = {
    "ink": "#222222",          # text, arm links, outlines
    "muted": "#6b6b6b",        # secondary text, grid
    "grid": "#d9d9d9",
    "reach": "#111111",        # reach / joint-limit boundary
    "arm": "#222222",
    "joint": "#ffffff",
    "probe": "#d55e00",        # Okabe-Ito vermillion
    "light": "#0072b2",        # Okabe-Ito blue: lightest principal direction
    "heavy": "#e69f00",        # Okabe-Ito orange: heaviest principal direction
    "middle": "#009e73",       # Okabe-Ito bluish green: middle principal direction (3-D task)
    "static": "#56b4e9",       # Okabe-Ito sky blue: static (gravity) torque bars
    "worst": "#0072b2",        # Okabe-Ito blue: worst-case torque bars
    "peak": "#d55e00",         # peak rating marks
    "continuous": "#cc79a7",   # Okabe-Ito reddish purple: continuous rating marks
    "ellipse": "#222222",
    "zone_hatch": "#8a8a8a",   # mid grey hatch: visible on dark and on light colours
}

#: Perceptually uniform, colour-blind-safe sequential map (Nunez, Anderton & Renslow,
#: "Optimizing colormaps with consideration for color vision deficiency", PLOS ONE 2018;
#: citation from memory).
CMAP_SEQUENTIAL = "cividis"
#: Diverging map for signed quantities, always used with limits symmetric about zero
#: (ColorBrewer "PuOr", Harrower & Brewer 2003, listed there as colour-blind safe; from memory).
CMAP_DIVERGING = "PuOr"

#: hatch patterns for categorical zones (limiting joints)
HATCHES = ("////", "\\\\\\\\", "....", "xxxx", "oo", "++", "--", "||")

#: rc settings applied while drawing (never at import, never globally)
RC = {
    "font.size": 10.0,
    "axes.titlesize": 11.0,
    "axes.titleweight": "bold",
    "axes.labelsize": 10.0,
    "xtick.labelsize": 9.0,
    "ytick.labelsize": 9.0,
    "legend.fontsize": 8.5,
    "legend.framealpha": 0.9,
    "axes.edgecolor": COLORS["muted"],
    "axes.labelcolor": COLORS["ink"],
    "text.color": COLORS["ink"],
    "xtick.color": COLORS["ink"],
    "ytick.color": COLORS["ink"],
    "axes.grid": False,
    "grid.color": COLORS["grid"],
    "grid.linewidth": 0.6,
    "hatch.color": COLORS["ink"],
    "hatch.linewidth": 0.6,
    "figure.dpi": 100.0,
    "savefig.dpi": 150.0,
}

CAUTION_FONTSIZE = 7.0


@contextlib.contextmanager
def plot_style():
    """Context manager applying the inertia_review look while drawing.

    On exit every rc setting is restored except ``interactive`` (the interactive
    mode is session state that the backend may switch on while a first figure is
    made; see the module notes), so figures made inside are shown by the inline
    backend like any other.

    Examples
    --------
    >>> import inertia_review.plots as irp
    >>> with irp.plot_style():
    ...     pass  # draw with plain matplotlib in our look
    """
    import matplotlib as mpl

    state = {}
    try:
        with mpl.rc_context(RC):
            try:
                yield
            finally:
                state["interactive"] = mpl.rcParams["interactive"]
    finally:
        if state:
            mpl.interactive(state["interactive"])


def _legend_columns(handles, width_in, fontsize=8.5):
    labels = [h.get_label() for h in handles]
    longest = max((len(t) for t in labels), default=10) + 6
    per_row = int(width_in * 72.0 / (0.55 * fontsize))
    return max(1, min(len(labels), per_row // longest))


class Layout:
    """The Axes to draw into, and where the legend and caution go.

    ``ax`` given: draw into it (no new figure); the legend goes inside the Axes and a
    caution under its x label. ``figure`` given (an empty Figure, e.g. an off-screen one
    of a widget): laid out as a new figure, inside it. Otherwise a new pyplot figure
    (constrained layout), so that a notebook shows it, with the
    main Axes on top and a notes strip below it (Axes off) that holds the legend and the
    caution, sized in :meth:`finish` so nothing overlaps; :meth:`finish` also sizes the
    figure to the data's aspect ratio for equal-aspect plots.
    """

    def __init__(self, ax=None, *, width_in=6.4, height_in=5.0, notes=True, equal=False,
                 nrows=1, sharex=False, figure=None):
        self.equal = equal
        self.legend_ = None
        self.caution_ = None
        self._caution_lines = 0
        if ax is not None:
            axes = list(np.ravel(np.asarray(ax, dtype=object))) if nrows > 1 else [ax]
            if len(axes) != nrows:
                raise ValueError(f"expected {nrows} Axes (one per panel), got {len(axes)}")
            self.axes, self.ax, self.notes, self.own, self.grid = axes, axes[0], None, False, None
            self.figure = axes[0].figure
            return
        engine = "compressed" if equal else "constrained"
        if figure is not None:                    # an empty figure of the caller (off-screen)
            if figure.axes:
                raise ValueError("`figure` must be empty (the plot lays it out); pass `ax` "
                                 "to draw into an existing Axes")
            fig = figure
            fig.set_layout_engine(engine)
        else:
            import matplotlib.pyplot as plt

            fig = plt.figure(figsize=(width_in, height_in), layout=engine)
        self.own, self.figure = True, fig
        self.grid = fig.add_gridspec(nrows + 1 if notes else nrows, 1,
                                     height_ratios=[1.0] * nrows + ([0.05] if notes else []))
        self.axes = []
        for i in range(nrows):
            share = self.axes[0] if (sharex and self.axes) else None
            self.axes.append(fig.add_subplot(self.grid[i], sharex=share))
        if sharex:
            for a in self.axes[:-1]:
                a.tick_params(labelbottom=False)
        self.ax = self.axes[0]
        self.notes = None
        if notes:
            self.notes = fig.add_subplot(self.grid[nrows])
            self.notes.set_axis_off()

    def legend(self, handles, *, ncols=None, loc="best"):
        """A legend of ``handles`` in the notes strip (own figure) or inside the Axes."""
        handles = [h for h in handles if h is not None]
        if not handles:
            return None
        if self.notes is not None:
            ncols = ncols or _legend_columns(handles, self.figure.get_figwidth())
            self.legend_ = self.notes.legend(handles=handles, loc="upper left",
                                             bbox_to_anchor=(0.0, 1.0), ncols=ncols,
                                             frameon=False, borderaxespad=0.0,
                                             handlelength=1.8, columnspacing=1.4)
            lines = max(str(h.get_label()).count("\n") + 1 for h in handles)
            self._legend_rows = -(-len(handles) // ncols) * (1.0 + 0.75 * (lines - 1))
        else:
            self.legend_ = self.ax.legend(handles=handles, loc=loc, framealpha=0.9,
                                          ncols=ncols or 1)
        return self.legend_

    def caution(self, text, *, fontsize=CAUTION_FONTSIZE, margin_in=0.0):
        """Place ``text`` (a caution) under the legend in the notes strip, or under the Axes.

        ``margin_in``: width [in] left of the Axes that the notes strip also loses (e.g.
        long tick labels), so the wrapped text still fits the figure.
        """
        text = " ".join(str(text).split())
        if self.notes is None:
            self.caution_ = add_caution(self.axes[-1], text, fontsize=fontsize)
            return self.caution_
        width = self.figure.get_figwidth() - 0.4 - float(margin_in)
        chars = max(40, int(width * 72.0 / (0.6 * fontsize)))
        wrapped = textwrap.fill(text, width=chars)
        self._caution_lines = wrapped.count("\n") + 1
        anchor = ("axes fraction", self.legend_) if self.legend_ is not None else "axes fraction"
        xy = (0.0, 0.0) if self.legend_ is not None else (0.0, 1.0)
        self.caution_ = self.notes.annotate(wrapped, xy=xy, xycoords=anchor, xytext=(0.0, -6.0),
                                            textcoords="offset points", ha="left", va="top",
                                            fontsize=fontsize, color=COLORS["ink"],
                                            annotation_clip=False, gid="caution")
        return self.caution_

    def finish(self):
        """Size an own figure: the main Axes to the data aspect (equal), the notes strip to fit."""
        if not self.own:
            return
        width = self.figure.get_figwidth()
        if self.equal:
            x0, x1 = self.ax.get_xlim()
            y0, y1 = self.ax.get_ylim()
            aspect = abs(y1 - y0) / abs(x1 - x0) if x1 != x0 else 1.0
            main = (width - 2.0) * min(max(aspect, 0.3), 2.0) + 1.0
        else:
            main = self.figure.get_figheight() - 0.3
        nrows = len(self.axes)
        notes = 0.0
        if self.notes is not None:
            rows = getattr(self, "_legend_rows", 0) if self.legend_ is not None else 0
            notes = 0.24 * rows + 0.115 * self._caution_lines + 0.12
            if rows == 0 and self._caution_lines == 0:
                self.notes.set_visible(False)
                notes = 0.01
            self.grid.set_height_ratios([main / nrows] * nrows + [notes])
        self.figure.set_size_inches(width, main + notes)


def principal_colors(k):
    """Colours for principal directions, lightest first."""
    return [COLORS["light"], COLORS["heavy"]] if k == 2 else [COLORS["light"], COLORS["middle"],
                                                              COLORS["heavy"]][:k]


def set_title(ax, text):
    """Set the Axes title, each line wrapped to the figure's width (long design names stay
    inside the image instead of being cut at its edge). Returns the title Text."""
    if not text:
        return ax.set_title("")
    size = matplotlib.rcParams["axes.titlesize"]
    size = RC.get("axes.titlesize", 11.0) if isinstance(size, str) else float(size)
    chars = max(24, int(ax.figure.get_figwidth() * 72.0 / (0.62 * size)))
    lines = [textwrap.fill(line, width=chars) for line in str(text).split("\n")]
    return ax.set_title("\n".join(lines))


def add_caution(ax, text, *, below=None, fontsize=CAUTION_FONTSIZE):
    """Place a caution text under the Axes, wrapped to the Axes width.

    It sits below ``below`` (an artist) or, by default, below the x label. The
    annotation takes part in the constrained layout, so the
    Axes make room for it. Returns the Text artist (``gid`` "caution").
    """
    fig = ax.figure
    width_in = fig.get_figwidth() * ax.get_position().width
    chars = max(40, int(width_in * 72.0 / (0.6 * fontsize)))
    wrapped = textwrap.fill(" ".join(str(text).split()), width=chars)
    anchor = ax.xaxis.label if below is None else below
    return ax.annotate(wrapped, xy=(0.0, 0.0), xycoords=("axes fraction", anchor),
                       xytext=(0.0, -6.0), textcoords="offset points", ha="left", va="top",
                       fontsize=fontsize, color=COLORS["ink"], annotation_clip=False,
                       gid="caution")
