"""Task regions: where the tool point must work, sampled on a grid (private).

Regions are plain, validated data: a rectangle in a plane, a box, or a list of
points, each in the world frame [m]. ``sample()`` returns the grid points and the
labelled grid axes that maps use as coordinates.
"""

from dataclasses import dataclass, field

import numpy as np

from ._errors import DesignError
from ._validate import (
    Problems,
    check_keys,
    get_number,
    get_string,
    get_vector,
    get_vector_item,
    join,
)

__all__ = ["Rectangle", "Box", "PointSet", "Task", "region_from_dict", "task_from_dict",
           "REGION_KINDS"]

REGION_KINDS = ("rectangle", "box", "points")

#: ``default_axes`` value meaning "the arm's task axes, filled in later" (design files)
DEFER = object()
_MAX_POINTS = 2_000_000


#: Finest grid spacing [m] accepted (1 micrometre; common practice, no source).
MIN_SPACING_M = 1.0e-6


def _orthonormal(rows, field_name, problems):
    a = np.array(rows, float)
    if np.max(np.abs(a @ a.T - np.eye(len(rows)))) > 1e-9:
        problems.add(field_name, "rows must be orthonormal (within 1e-9)")
        return None
    return a


def _grid_axis(size, spacing):
    """Centred grid coordinates of a side of length ``size`` at ``spacing`` [m]."""
    count = int(np.floor(size / spacing + 1e-9)) + 1
    half = 0.5 * (count - 1) * spacing
    return np.linspace(-half, half, count)


@dataclass(frozen=True)
class Rectangle:
    """A rectangle in a plane: centre [m], two orthonormal in-plane axes (world), side lengths [m].

    Sampled on a grid of ``spacing_m`` centred on ``center_m`` (the sides are rounded down
    to whole cells). Grid axes are named ``u_m`` and ``v_m`` (along ``axes[0]``, ``axes[1]``).
    """

    center_m: tuple
    axes: tuple
    size_m: tuple
    spacing_m: float
    kind: str = field(default="rectangle", init=False)

    def grid_axes(self):
        return {"v_m": _grid_axis(self.size_m[1], self.spacing_m),
                "u_m": _grid_axis(self.size_m[0], self.spacing_m)}

    def sample(self):
        """World points (*grid_shape, 3) [m] and the grid axes {name: coords} in order."""
        grid = self.grid_axes()
        v, u = np.meshgrid(grid["v_m"], grid["u_m"], indexing="ij")
        a = np.array(self.axes)
        points = np.array(self.center_m) + u[..., None] * a[0] + v[..., None] * a[1]
        return points, grid

    @property
    def cell_measure(self):
        """Area of one grid cell [m^2] (the measure of region means)."""
        return self.spacing_m ** 2

    def to_dict(self):
        out = {"kind": "rectangle", "center_m": list(self.center_m), "size_m": list(self.size_m),
               "spacing_m": self.spacing_m}
        if self.axes is not None:
            out["axes"] = [list(r) for r in self.axes]
        return out


@dataclass(frozen=True)
class Box:
    """An axis-aligned (or rotated, with ``axes``) box: centre, three side lengths [m]."""

    center_m: tuple
    size_m: tuple
    spacing_m: float
    axes: tuple = ((1.0, 0.0, 0.0), (0.0, 1.0, 0.0), (0.0, 0.0, 1.0))
    kind: str = field(default="box", init=False)

    def grid_axes(self):
        return {"w_m": _grid_axis(self.size_m[2], self.spacing_m),
                "v_m": _grid_axis(self.size_m[1], self.spacing_m),
                "u_m": _grid_axis(self.size_m[0], self.spacing_m)}

    def sample(self):
        grid = self.grid_axes()
        w, v, u = np.meshgrid(grid["w_m"], grid["v_m"], grid["u_m"], indexing="ij")
        a = np.array(self.axes)
        points = (np.array(self.center_m) + u[..., None] * a[0] + v[..., None] * a[1]
                  + w[..., None] * a[2])
        return points, grid

    @property
    def cell_measure(self):
        """Volume of one grid cell [m^3]."""
        return self.spacing_m ** 3

    def to_dict(self):
        return {"kind": "box", "center_m": list(self.center_m), "size_m": list(self.size_m),
                "spacing_m": self.spacing_m, "axes": [list(r) for r in self.axes]}


@dataclass(frozen=True)
class PointSet:
    """An explicit list of world points [m] (each weighs the same in region means)."""

    points_m: tuple
    kind: str = field(default="points", init=False)

    def grid_axes(self):
        return {"point": np.arange(len(self.points_m))}

    def sample(self):
        return np.array(self.points_m, float).reshape(-1, 3), self.grid_axes()

    @property
    def cell_measure(self):
        return 1.0

    def to_dict(self):
        return {"kind": "points", "points_m": [list(p) for p in self.points_m]}


@dataclass(frozen=True)
class Task:
    """What the tool must do in the region: required acceleration, payload, approach direction."""

    region: object
    accel_mps2: float = 0.0
    payload_kg: float | None = None
    approach: tuple | None = None

    def to_dict(self):
        out = {"region": self.region.to_dict(), "accel_mps2": self.accel_mps2}
        if self.payload_kg is not None:
            out["payload_kg"] = self.payload_kg
        if self.approach is not None:
            out["approach"] = list(self.approach)
        return out


_RECT_KEYS = ("kind", "center_m", "axes", "size_m", "spacing_m")
_BOX_KEYS = ("kind", "center_m", "axes", "size_m", "spacing_m")
_POINT_KEYS = ("kind", "points_m")


def _parse_region(problems, data, path, default_axes):
    if not isinstance(data, dict):
        problems.add(path, "must be a table")
        return None
    kind = get_string(problems, data, "kind", path)
    if kind is None:
        return None
    if kind not in REGION_KINDS:
        problems.add(join(path, "kind"), f"'{kind}' is not a valid region kind; supported kinds are "
                                         f"{', '.join(REGION_KINDS)}")
        return None
    if kind == "points":
        check_keys(problems, data, _POINT_KEYS, path)
        rows = data.get("points_m")
        if not isinstance(rows, (list, tuple)) or not rows:
            problems.add(join(path, "points_m"), "must be a non-empty list of [x, y, z] points [m]")
            return None
        points = [get_vector_item(problems, rows, i, join(path, "points_m"), 3)
                  for i in range(len(rows))]
        if any(p is None for p in points):
            return None
        return PointSet(tuple(points))
    check_keys(problems, data, _RECT_KEYS if kind == "rectangle" else _BOX_KEYS, path)
    dim = 2 if kind == "rectangle" else 3
    center = get_vector(problems, data, "center_m", path, 3)
    size = get_vector(problems, data, "size_m", path, dim)
    if size is not None and min(size) < 0.0:
        problems.add(join(path, "size_m"), f"side lengths must be >= 0; got {list(size)}")
        size = None
    spacing = get_number(problems, data, "spacing_m", path, low=MIN_SPACING_M)
    axes = None
    if "axes" in data:
        rows = data["axes"]
        if not isinstance(rows, (list, tuple)) or len(rows) != dim:
            problems.add(join(path, "axes"), f"must be {dim} vectors of 3 numbers")
        else:
            vecs = [get_vector_item(problems, rows, i, join(path, "axes"), 3)
                    for i in range(len(rows))]
            if all(v is not None for v in vecs):
                axes = _orthonormal(vecs, join(path, "axes"), problems)
    elif kind == "rectangle" and default_axes is DEFER:
        axes = None
        if None in (center, size, spacing):
            return None
        return Rectangle(center, None, size, spacing)
    elif kind == "rectangle":
        if default_axes is None or len(default_axes) != 2:
            problems.add(join(path, "axes"), "required for a rectangle when the arm's task is not "
                                             "planar (give two orthonormal in-plane axes)")
        else:
            axes = np.array(default_axes, float)
    else:
        axes = np.eye(3)
    if None in (center, size, spacing) or axes is None:
        return None
    count = np.prod([np.floor(s / spacing + 1e-9) + 1 for s in size])
    if count > _MAX_POINTS:
        problems.add(join(path, "spacing_m"), f"gives {count:,.0f} grid points, more than the "
                                              f"{_MAX_POINTS:,} allowed; use a coarser spacing")
        return None
    axes = tuple(tuple(float(x) for x in row) for row in axes)
    if kind == "rectangle":
        return Rectangle(center, axes, size, spacing)
    return Box(center, size, spacing, axes)


def region_from_dict(data, *, default_axes=None, name="region"):
    """A task region from its mapping (schema of ``[task.region]``); DesignError on bad input."""
    problems = Problems()
    region = _parse_region(problems, data, "task.region", default_axes)
    if problems:
        raise DesignError(name, problems.items)
    return region


_TASK_KEYS = ("axes", "region", "accel_mps2", "payload_kg", "approach")


def task_from_dict(data, *, default_axes=None, name="task"):
    """A :class:`Task` from a ``[task]`` mapping; DesignError listing every problem."""
    problems = Problems()
    task = parse_task(problems, data, default_axes)
    if problems:
        raise DesignError(name, problems.items)
    return task


def parse_task(problems, data, default_axes):
    """A :class:`Task` (or None), recording problems with their ``task.`` paths."""
    check_keys(problems, data, _TASK_KEYS, "task")
    region = None
    if "region" not in data:
        problems.add("task.region", "required table is missing")
    else:
        region = _parse_region(problems, data["region"], "task.region", default_axes)
    accel = get_number(problems, data, "accel_mps2", "task", default=0.0, low=0.0)
    payload = get_number(problems, data, "payload_kg", "task", default=None, low=0.0)
    approach = get_vector(problems, data, "approach", "task", 3, default=None)
    if approach is not None:
        norm = float(np.linalg.norm(approach))
        if norm == 0.0:
            problems.add("task.approach", "must be a non-zero direction")
        else:
            approach = tuple(a / norm for a in approach)
    if region is None:
        return None
    return Task(region, accel, payload, approach)
