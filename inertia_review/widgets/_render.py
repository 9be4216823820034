"""Figures for widgets: matplotlib Figures outside pyplot, rendered to PNG for Image widgets."""

import io

__all__ = ["new_figure", "png_bytes"]


def new_figure(width_in, height_in, dpi=96, layout="constrained"):
    """A Figure with an Agg canvas, not registered with pyplot (no global state, no leak)."""
    from matplotlib.backends.backend_agg import FigureCanvasAgg
    from matplotlib.figure import Figure

    fig = Figure(figsize=(width_in, height_in), dpi=dpi, layout=layout)
    FigureCanvasAgg(fig)
    return fig


def png_bytes(fig):
    """The figure as PNG bytes (for ``ipywidgets.Image.value`` and snapshots)."""
    buf = io.BytesIO()
    fig.canvas.print_png(buf)
    return buf.getvalue()
