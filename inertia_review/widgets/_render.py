"""Figures for widgets: matplotlib Figures outside pyplot, rendered to PNG for Image widgets."""

import io

__all__ = ["new_figure", "png_bytes", "rgba_png"]


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


def rgba_png(canvas):
    """PNG bytes of an Agg canvas's current buffer (fast compression; for blitted updates)."""
    from PIL import Image

    width, height = canvas.get_width_height(physical=True)
    image = Image.frombuffer("RGBA", (width, height), canvas.buffer_rgba(), "raw", "RGBA", 0, 1)
    buf = io.BytesIO()
    image.save(buf, format="PNG", compress_level=1)
    return buf.getvalue()
