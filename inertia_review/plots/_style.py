"""The look of inertia_review figures: colours, font sizes, grid (private).

Nothing here changes matplotlib's global state: the settings are applied only
inside :func:`plot_style` (an ``rc_context``) while our functions draw.
"""

import textwrap

__all__ = ["COLORS", "RC", "CMAP_SEQUENTIAL", "CMAP_DIVERGING", "HATCHES", "plot_style",
           "prepare_axes", "add_caution", "principal_colors"]

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
    "axes.titleweight": "semibold",
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


def plot_style():
    """Context manager applying the inertia_review look while drawing.

    Examples
    --------
    >>> import inertia_review.plots as irp
    >>> with irp.plot_style():
    ...     pass  # draw with plain matplotlib in our look
    """
    import matplotlib as mpl

    return mpl.rc_context(RC)


def prepare_axes(ax, *, figsize=(6.4, 5.0), equal=False, grid=False):
    """The Axes to draw into: ``ax`` itself, or a new figure's only Axes when ``ax`` is None.

    A new figure uses the constrained layout so labels, colour bars and the caution
    text do not overlap. Never calls ``plt.figure()`` or ``plt.show()`` when ``ax`` is given.
    """
    if ax is None:
        import matplotlib.pyplot as plt

        _, ax = plt.subplots(figsize=figsize, layout="constrained")
    if equal:
        ax.set_aspect("equal", adjustable="datalim")
    if grid:
        ax.grid(True, color=COLORS["grid"], linewidth=0.6, zorder=0)
        ax.set_axisbelow(True)
    return ax


def principal_colors(k):
    """Colours for principal directions, lightest first."""
    return [COLORS["light"], COLORS["heavy"]] if k == 2 else [COLORS["light"], COLORS["middle"],
                                                              COLORS["heavy"]][:k]


def add_caution(ax, text, *, fontsize=CAUTION_FONTSIZE):
    """Place a caution text under the Axes (below its x label), wrapped to the Axes width.

    The annotation takes part in the constrained layout, so the Axes make room for it.
    Returns the Text artist.
    """
    fig = ax.figure
    width_in = fig.get_figwidth() * ax.get_position().width
    chars = max(40, int(width_in * 72.0 / (0.52 * fontsize)))
    wrapped = textwrap.fill(" ".join(str(text).split()), width=chars)
    return ax.annotate(wrapped, xy=(0.0, 0.0), xycoords=("axes fraction", ax.xaxis.label),
                       xytext=(0.0, -4.0), textcoords="offset points", ha="left", va="top",
                       fontsize=fontsize, color=COLORS["ink"], annotation_clip=False,
                       gid="caution")
