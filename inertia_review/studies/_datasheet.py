"""A datasheet summary of one design over a task region (private).

Every number is a reduction of a ``metric_map`` over the region's solved points, so each can be
redone by hand from the map's own variables.
"""

from dataclasses import dataclass

import numpy as np

from ._cautions import STIFFNESS_CAUTION
from ._ik_status import SOLVED

__all__ = ["datasheet", "Datasheet"]


@dataclass(frozen=True)
class Datasheet:
    """Design-stage ratings of one design over a region (SI units; NaN where not defined).

    Attributes
    ----------
    design : str
    payload_rated_kg : float
        Payload capacity [kg] at the worst solved point (the smallest over the region).
    reach_m : float
        Largest distance [m] from the first joint's origin to any solved region point.
    reach_limit_m : float
        Upper bound [m] on the tool point's distance from the first joint's origin: the sum of
        the fixed distances between consecutive joint origins and of the tool offset (met only
        where the chain can lie straight).
    tool_speed_max_mps : float
        Largest tool speed [m/s] over the region with every joint within its rated speed.
    f1_lowest_hz : float
        Lowest first natural frequency [Hz] over the region.
    sag_largest_m : float
        Largest static tool sag [m] under gravity over the region.
    solved_fraction : float
        Share of the region's points solved; the other numbers hold for these only.
    caution : str
        :data:`STIFFNESS_CAUTION`, to be shown with every number of the sheet.
    """

    design: str
    payload_rated_kg: float
    reach_m: float
    reach_limit_m: float
    tool_speed_max_mps: float
    f1_lowest_hz: float
    sag_largest_m: float
    solved_fraction: float
    caution: str = STIFFNESS_CAUTION

    def lines(self):
        """On-screen lines (mm, Hz, kg, m/s, each with its unit), the caution last."""
        def fmt(value, scale, spec, unit, missing):
            return missing if not np.isfinite(value) else f"{value * scale:{spec}} {unit}"

        return [
            f"design: {self.design} (solved {100.0 * self.solved_fraction:.1f} % of the region)",
            "rated payload (worst point): "
            + fmt(self.payload_rated_kg, 1.0, ".3f", "kg", "n/a (no peak torque ratings)"),
            f"reach in the region: {fmt(self.reach_m, 1e3, '.1f', 'mm', 'n/a')}"
            f" (bound from the link lengths {fmt(self.reach_limit_m, 1e3, '.1f', 'mm', 'n/a')})",
            "largest tool speed: "
            + fmt(self.tool_speed_max_mps, 1.0, ".3f", "m/s", "n/a (no rated motor speeds)"),
            "lowest first natural frequency: "
            + fmt(self.f1_lowest_hz, 1.0, ".1f", "Hz", "n/a (no elastic joint or link)"),
            "largest tool sag: "
            + fmt(self.sag_largest_m, 1e3, ".4f", "mm", "n/a (no elastic joint or link)"),
            self.caution,
        ]

    def __str__(self):
        return "\n".join(self.lines())


def _reduce(ds, name, pick, ok):
    if name not in ds.data_vars or not ok.any():
        return float("nan")
    return float(pick(ds[name].values[ok]))


def datasheet(arm, region=None, **map_options):
    """Datasheet summary of ``arm`` over a task region.

    Parameters
    ----------
    arm : Arm
    region : Rectangle, Box, PointSet or Task, optional
        Default: the design's own ``[task]``. A map (``metric_map`` Dataset of ``arm``) may be
        given instead, so that the sheet reuses it.
    **map_options
        Passed to :func:`inertia_review.metric_map` (``accel_mps2``, ``payload_kg``, ...).

    Returns
    -------
    Datasheet
        Worst-point payload capacity, reach, largest tool speed from the rated motor speeds,
        lowest first natural frequency and largest sag, with :data:`STIFFNESS_CAUTION`.
    """
    from ._maps import metric_map

    if region is None:
        if arm.task is None:
            raise ValueError(f"design '{arm.name}' has no [task]: give a region")
        region = arm.task
    ds = region if hasattr(region, "data_vars") else metric_map(arm, region, **map_options)
    ok = np.isin(ds["status"].values, SOLVED)        # ok or solved at a branch seam
    params = arm._params
    first = params.mount_position + params.mount_rotation @ params.joint_position[0]
    points = np.stack([ds[c].values for c in ("x_m", "y_m", "z_m")], axis=-1)
    distance = np.linalg.norm(points[ok] - first, axis=-1)
    limit = float(np.sum(np.linalg.norm(params.joint_position[1:], axis=-1))
                  + np.linalg.norm(params.tool_position))
    return Datasheet(
        design=arm.name,
        payload_rated_kg=_reduce(ds, "payload_capacity", np.min, ok),
        reach_m=float(distance.max()) if distance.size else float("nan"),
        reach_limit_m=limit,
        tool_speed_max_mps=_reduce(ds, "max_tool_speed", np.max, ok),
        f1_lowest_hz=_reduce(ds, "first_frequency", np.min, ok),
        sag_largest_m=_reduce(ds, "sag", np.max, ok),
        solved_fraction=float(ok.mean()) if ok.size else 0.0,
    )
