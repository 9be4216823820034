"""Sweep explorer: choose parameters and ranges, run, see the trade-off (private)."""

import html
from concurrent.futures import ThreadPoolExecutor

import ipywidgets as widgets
import numpy as np
import traitlets

from ..plots import plot_tradeoff
from ..studies._sweeps import Sweep
from ._controls import default_parameters, screen_unit
from ._render import new_figure, png_bytes

__all__ = ["SweepExplorer"]


class SweepExplorer(widgets.VBox):
    """Set up a sweep of one or two parameters, run it with a progress bar, see the trade-off,
    and send the best (or a chosen) variant to a :class:`ComparisonBoard`.

    Traits: ``results`` (the sweep's Dataset, None before a run), ``score``.
    """

    results = traitlets.Any(None, help="xarray.Dataset of the last sweep")
    score = traitlets.Unicode("gci", help="score plotted and used to pick the best variant")

    def __init__(self, base, region, *, board=None, parameters=None, map_options=None,
                 executor=None, **kwargs):
        self._base = base
        self._region = region
        self._board = board
        self._executor = executor
        self._map_options = dict(map_options or {})
        paths = list(parameters) if parameters else ["derived.link_ratio", "mount.rpy_deg[1]"] + \
            default_parameters(base)
        self.first = widgets.Dropdown(options=paths, value=paths[0], description="parameter 1")
        self.second = widgets.Dropdown(options=["(none)"] + paths,
                                       value=paths[1] if len(paths) > 1 else "(none)",
                                       description="parameter 2")
        self.range1 = widgets.Text(description="values 1", placeholder="start, stop, count")
        self.range2 = widgets.Text(description="values 2", placeholder="start, stop, count")
        self.score_choice = widgets.Dropdown(options=["gci", "mass_ratio_worst", "isotropy_worst",
                                                      "headroom_worst", "accel_capability_min",
                                                      "moving_mass_kg"], value="gci",
                                             description="score")
        self.run_button = widgets.Button(description="run sweep", icon="play")
        self.send_button = widgets.Button(description="send best to board", icon="share",
                                          disabled=board is None)
        self.progress = widgets.Output()
        self.image = widgets.Image(format="png", layout=widgets.Layout(width="5.5in"))
        self.message = widgets.HTML()
        super().__init__(children=[widgets.HBox([self.first, self.range1]),
                                   widgets.HBox([self.second, self.range2]),
                                   widgets.HBox([self.score_choice, self.run_button,
                                                 self.send_button]),
                                   self.progress, self.image, self.message], **kwargs)
        self.first.observe(self._fill_default, names="value")
        self.second.observe(self._fill_default, names="value")
        widgets.link((self.score_choice, "value"), (self, "score"))
        self.observe(self._plot, names=["score", "results"])
        self.run_button.on_click(lambda _: self.run())
        self.send_button.on_click(lambda _: self.send_best())
        self._fill_default(None)

    def _default_text(self, path):
        from ..model._paths import get_value
        value = get_value(self._base.to_dict(), path)
        unit, factor = screen_unit(path)
        if unit == "deg":
            return f"{value - 30:g}, {value + 30:g}, 4"
        return f"{0.7 * value * factor:.4g}, {1.3 * value * factor:.4g}, 4"

    def _fill_default(self, change):
        self.range1.value = self._default_text(self.first.value)
        self.range2.value = ("" if self.second.value == "(none)"
                             else self._default_text(self.second.value))

    def _values(self, path, text):
        parts = [p.strip() for p in text.split(",") if p.strip()]
        if len(parts) != 3:
            raise ValueError(f"values for {path}: give 'start, stop, count' (in screen units)")
        start, stop, count = float(parts[0]), float(parts[1]), int(float(parts[2]))
        if count < 1 or count > 50:
            raise ValueError(f"values for {path}: count must be 1 to 50; got {count}")
        _, factor = screen_unit(path)
        return np.linspace(start, stop, count) / factor

    def run(self):
        """Run the sweep set up in the controls; errors show in the panel."""
        try:
            vary = {self.first.value: self._values(self.first.value, self.range1.value)}
            if self.second.value != "(none)" and self.second.value != self.first.value:
                vary[self.second.value] = self._values(self.second.value, self.range2.value)
            sweep = Sweep(self._base, vary=vary, region=self._region, progress=True,
                          **self._map_options)
            self.progress.clear_output()
            with self.progress:
                executor = self._executor or ThreadPoolExecutor(1)
                sweep.run(executor)
        except (ValueError, KeyError) as exc:
            self.message.value = f"<div style='color:#b00020'>{html.escape(str(exc))}</div>"
            return None
        self.message.value = ""
        self.sweep = sweep
        self.results = sweep.results_
        self._plot(None)   # traitlets may not notify: Dataset == None is not a plain bool
        return sweep

    def _plot(self, change):
        if self.results is None:
            return
        fig = new_figure(5.6, 4.2)
        plot_tradeoff(self.results, self.score, ax=fig.add_subplot())
        self.image.value = png_bytes(fig)

    def best_arm(self):
        """The best variant (by ``score``, higher is better except for moving mass) as an Arm."""
        return self._base.with_values(self._best_values())

    def _best_values(self):
        values, _ = self.sweep.best(self.score, maximize=self.score != "moving_mass_kg")
        return values

    def send_best(self):
        """Add the best variant to the comparison board."""
        if self._board is None or self.results is None:
            return None
        arm = self.best_arm()
        label = ", ".join(f"{k}={v:.3g}" for k, v in self._best_values().items())
        spec = arm.to_dict()
        spec["name"] = f"{self._base.name} best ({label})"[:60]
        from ..model._arm import Arm
        arm = Arm.from_dict(spec)
        self._board.add(arm)
        return arm
