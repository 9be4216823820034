"""Plots of move-cycle torques against the actuator ratings, with the caution (private)."""

from dataclasses import dataclass

import numpy as np

from . import _style
from ._style import COLORS

__all__ = ["plot_cycle_torques", "plot_cycle_utilisation", "CycleTorqueArtists",
           "CycleUtilisationArtists"]


@dataclass
class CycleTorqueArtists:
    """Artists of :func:`plot_cycle_torques`: one torque line per joint, its rating lines."""

    lines: list
    peak_lines: list
    continuous_lines: list
    rms_lines: list
    axes: list
    figure: object
    caution: object = None


@dataclass
class CycleUtilisationArtists:
    """Artists of :func:`plot_cycle_utilisation`: bar containers per criterion."""

    bars: dict
    limit_line: object
    caution: object
    ax: object


def plot_cycle_torques(result, *, axes=None, caution=True):
    """Joint torque over the cycle time, one panel per joint, with the ratings and the caution.

    Each panel shows tau_j(t) [N·m], the peak rating (±, solid), the continuous rating (±,
    dashed) and the cycle's RMS torque (dotted); dwells are shaded. The torque caution
    (``result.caution``) is placed under the panels (in the notes strip of a new figure,
    or under the last given Axes).

    Parameters
    ----------
    result : CycleTorques
        From :func:`inertia_review.cycle_torques`.
    axes : sequence of n Axes, optional
        One per joint; a new figure (through pyplot, so a notebook shows it) when None.
    caution : bool, default True
        ``False`` leaves the caution to the caller (a panel that shows it beside the image).

    Returns
    -------
    CycleTorqueArtists
        ``caution`` holds the caution Text (None with ``caution=False``).
    """
    from matplotlib.lines import Line2D
    from matplotlib.patches import Patch

    n = len(result.joint_names)
    with _style.plot_style():
        layout = _style.Layout(axes, nrows=n, sharex=True, width_in=7.0,
                               height_in=1.9 * n + 0.8)
        axes = layout.axes
        fig = layout.figure
        lines, peaks, conts, rmss = [], [], [], []
        dwell = result.dwelling
        for j, ax in enumerate(axes):
            (line,) = ax.plot(result.t, result.tau[:, j], color=COLORS["arm"], linewidth=1.4,
                              label="torque")
            lines.append(line)
            pk, ct = result.peak_rating_Nm[j], result.continuous_rating_Nm[j]
            peaks.append([ax.axhline(s * pk, color=COLORS["peak"], linewidth=1.2,
                                     label="peak rating" if s > 0 else None)
                          for s in (1, -1)] if np.isfinite(pk) else [])
            conts.append([ax.axhline(s * ct, color=COLORS["continuous"], linewidth=1.2,
                                     linestyle="--",
                                     label="continuous rating" if s > 0 else None)
                          for s in (1, -1)] if np.isfinite(ct) else [])
            rmss.append(ax.axhline(result.rms_torque_Nm[j], color=COLORS["light"], linewidth=1.2,
                                   linestyle=":", label="RMS over the cycle"))
            if np.any(dwell):
                ax.fill_between(result.t, 0, 1, where=dwell, transform=ax.get_xaxis_transform(),
                                color=COLORS["grid"], alpha=0.5, linewidth=0, label="dwell")
            ax.set_ylabel(f"{result.joint_names[j]}\ntorque [N·m]")
            ax.grid(True, color=COLORS["grid"], linewidth=0.6)
        axes[-1].set_xlabel("time [s]")
        _style.set_title(axes[0], f"{result.design_name}: cycle '{result.cycle.name}'")
        handles = [Line2D([], [], color=COLORS["arm"], linewidth=1.4, label="torque"),
                   Line2D([], [], color=COLORS["peak"], linewidth=1.2, label="peak rating"),
                   Line2D([], [], color=COLORS["continuous"], linewidth=1.2, linestyle="--",
                          label="continuous rating"),
                   Line2D([], [], color=COLORS["light"], linewidth=1.2, linestyle=":",
                          label="RMS over the cycle")]
        if np.any(dwell):
            handles.append(Patch(color=COLORS["grid"], alpha=0.5, label="dwell"))
        if layout.notes is not None:
            layout.legend(handles)
        else:
            axes[0].legend(handles=handles, loc="upper right", fontsize=8, ncols=3)
        text = layout.caution(result.caution) if caution else None
        layout.finish()
    return CycleTorqueArtists(lines, peaks, conts, rmss, axes, fig, text)


def plot_cycle_utilisation(result, *, ax=None, title=None, caution=True, legend=True):
    """Per-joint peak, RMS and speed utilisation of the cycle as bars [%], with the caution.

    100 % is the rating (peak torque, continuous torque, rated motor speed); joints without
    a rating show no bar for it. ``caution=False`` leaves the caution to the caller (a
    figure of several designs places it once).

    Returns
    -------
    CycleUtilisationArtists
    """
    criteria = (("peak_utilisation", "peak torque / peak rating"),
                ("rms_utilisation", "RMS torque / continuous rating"),
                ("speed_utilisation", "peak motor speed / rated speed"))
    colors = (COLORS["peak"], COLORS["continuous"], COLORS["static"])
    n = len(result.joint_names)
    with _style.plot_style():
        layout = _style.Layout(ax, width_in=6.4, height_in=4.2)
        ax = layout.ax
        x = np.arange(n)
        width = 0.26
        bars = {}
        for i, ((name, label), color) in enumerate(zip(criteria, colors)):
            values = 100.0 * np.nan_to_num(getattr(result, name), nan=0.0)
            bars[name] = ax.bar(x + (i - 1) * width, values, width, color=color, label=label)
        limit = ax.axhline(100.0, color=COLORS["ink"], linewidth=1.4, linestyle="--",
                           label="rating (100 %)")
        ax.set_xticks(x, result.joint_names)
        ax.set_ylabel("utilisation [%]")
        _style.set_title(ax, title if title is not None else
                     f"{result.design_name}: cycle '{result.cycle.name}' against the ratings")
        ax.grid(True, axis="y", color=COLORS["grid"], linewidth=0.6)
        if legend:
            layout.legend(list(bars.values()) + [limit])
        text = layout.caution(result.caution) if caution else None
        layout.finish()
    return CycleUtilisationArtists(bars, limit, text, ax)
