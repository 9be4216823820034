"""Task regions: validation messages, sampled grids and cell measures.

Outside checks used here:
- grid geometry (centre + u * axis0 + v * axis1, equal spacing, symmetric about the
  centre) is worked out by hand in each test from the region's own numbers;
- the count of points on a side of length s at spacing h, floor(s / h) + 1, and the cell
  area h^2 (volume h^3) are plain arithmetic (common practice, no source);
- the design-file rules (every problem names its field path, all problems of a file in
  one error, unknown keys get a suggestion) are those of arm-model.md, "Validation".
"""

import re
from pathlib import Path

import numpy as np
import pytest
import tomli_w
import tomllib

import inertia_review as ir

DESIGNS = Path(__file__).resolve().parent.parent / "designs"

RECT = {"kind": "rectangle", "center_m": [0.3, 0.0, 0.1], "axes": [[1.0, 0.0, 0.0], [0.0, 0.0, 1.0]],
        "size_m": [0.3, 0.2], "spacing_m": 0.05}
BOX = {"kind": "box", "center_m": [0.1, -0.2, 0.3], "size_m": [0.2, 0.1, 0.3], "spacing_m": 0.1}


def _edited(base, **changes):
    out = {k: v for k, v in base.items()}
    for key, value in changes.items():
        if value is None:
            del out[key]
        else:
            out[key] = value
    return out


def _problems(data, **kwargs):
    with pytest.raises(ir.DesignError) as info:
        ir.region_from_dict(data, **kwargs)
    return info.value


# ---------------------------------------------------------------------------
# bad regions: each error names the field and the rule
# ---------------------------------------------------------------------------
BAD_REGIONS = [
    # (changes to RECT, field path, pattern of the reason)
    (dict(spacing_m=0.0), "task.region.spacing_m", r">= 1e-06"),
    (dict(spacing_m=-0.01), "task.region.spacing_m", r">= 1e-06"),
    (dict(spacing_m=True), "task.region.spacing_m", r"number.*boolean"),
    (dict(spacing_m=float("nan")), "task.region.spacing_m", r"finite"),
    (dict(kind="circle"), "task.region.kind", r"rectangle, box, points"),
    (dict(center_m=[0.0, 0.0]), "task.region.center_m", r"3 entries"),
    (dict(size_m=[0.1, 0.2, 0.3]), "task.region.size_m", r"2 entries"),
    (dict(size_m=[-0.1, 0.2]), "task.region.size_m", r">= 0"),
    (dict(axes=[[1.0, 0.0, 0.0], [0.1, 0.0, 1.0]]), "task.region.axes", r"orthonormal"),
    (dict(axes=[[2.0, 0.0, 0.0], [0.0, 0.0, 1.0]]), "task.region.axes", r"orthonormal"),
    (dict(axes=[[1.0, 0.0, 0.0]]), "task.region.axes", r"2 vectors"),
    (dict(size_m=[1.0, 1.0], spacing_m=1e-4), "task.region.spacing_m",
     r"more than the 2,000,000 allowed"),
    (dict(spacing_m=None), "task.region.spacing_m", r"required key is missing"),
    (dict(center_m=None), "task.region.center_m", r"required key is missing"),
    (dict(kind=None), "task.region.kind", r"required key is missing"),
    (dict(spacng_m=0.1), "task.region.spacng_m", r"unknown key; did you mean 'spacing_m'\?"),
]


@pytest.mark.parametrize("changes, field, reason", BAD_REGIONS,
                         ids=[f"{p[1].split('.')[-1]}-{i}" for i, p in enumerate(BAD_REGIONS)])
def test_bad_rectangle_names_field(changes, field, reason):
    err = _problems(_edited(RECT, **changes))
    assert isinstance(err, ValueError)                      # DesignError is a ValueError
    paths = [p for p, _ in err.problems]
    assert field in paths, err.problems
    text = dict(err.problems)[field]
    assert re.search(reason, text), (field, text)
    assert field in str(err)                                  # the message names the path too


def test_too_many_points_counts_the_grid():
    # 1 m x 1 m at 0.1 mm: (10000 + 1)^2 = 100,020,001 points (counted by hand)
    err = _problems(_edited(RECT, size_m=[1.0, 1.0], spacing_m=1e-4))
    assert "100,020,001" in dict(err.problems)["task.region.spacing_m"]


def test_rectangle_without_axes_needs_a_planar_arm():
    no_axes = _edited(RECT, axes=None)
    err = _problems(no_axes)
    assert "task.region.axes" in dict(err.problems)
    assert "required for a rectangle" in dict(err.problems)["task.region.axes"]
    # with the arm's planar task axes the same table is accepted and takes them
    region = ir.region_from_dict(no_axes, default_axes=[[1.0, 0.0, 0.0], [0.0, 0.0, 1.0]])
    assert np.array_equal(np.array(region.axes), [[1.0, 0.0, 0.0], [0.0, 0.0, 1.0]])


def test_box_vector_lengths():
    err = _problems(_edited(BOX, size_m=[0.2, 0.1]))
    assert "must have 3 entries; got 2" in dict(err.problems)["task.region.size_m"]
    err = _problems(_edited(BOX, axes=[[1.0, 0.0, 0.0], [0.0, 1.0, 0.0]]))
    assert "3 vectors" in dict(err.problems)["task.region.axes"]


def test_all_problems_of_a_region_at_once():
    err = _problems(_edited(RECT, spacing_m=-1.0, center_m=[0.0], sise_m=[1.0, 1.0], size_m=None))
    paths = {p for p, _ in err.problems}
    assert {"task.region.spacing_m", "task.region.center_m", "task.region.sise_m",
            "task.region.size_m"} <= paths, err.problems
    assert "did you mean 'size_m'" in dict(err.problems)["task.region.sise_m"]


@pytest.mark.parametrize("points, field", [
    ([[0.0, 0.0, 0.0], [1.0, 2.0]], "task.region.points_m[1]"),
    ([[0.0, 0.0, float("nan")]], "task.region.points_m[0]"),
])
def test_bad_point_names_its_index(points, field):
    err = _problems({"kind": "points", "points_m": points})
    paths = [p for p, _ in err.problems]
    # the point is named by its index; a bad entry may be named more precisely
    # (``points_m[0][2]``: entry 2 of point 0)
    assert any(p == field or p.startswith(field + "[") for p in paths), err.problems
    # every problem is reported under the region's own field path (arm-model.md:
    # "whose message names the field path"), never under an internal helper key
    assert all(p.startswith("task.region.") for p in paths), err.problems


def test_bad_axis_row_names_its_index():
    err = _problems(_edited(RECT, axes=[[1.0, 0.0], [0.0, 0.0, 1.0]]))
    paths = [p for p, _ in err.problems]
    assert any(p.startswith("task.region.axes") for p in paths), err.problems
    # the row is named by its index, like every other list entry in the messages
    assert all(p in ("task.region.axes", "task.region.axes[0]") for p in paths), err.problems


def test_empty_point_list():
    err = _problems({"kind": "points", "points_m": []})
    assert "non-empty" in dict(err.problems)["task.region.points_m"]


def test_task_table_errors():
    with pytest.raises(ir.DesignError) as info:
        ir.task_from_dict({"region": RECT, "accel_mps2": -1.0, "aproach": [0.0, 0.0, 1.0]})
    problems = dict(info.value.problems)
    assert "did you mean 'approach'" in problems["task.aproach"]
    assert ">= 0" in problems["task.accel_mps2"]
    with pytest.raises(ir.DesignError, match=r"task\.region: required table is missing"):
        ir.task_from_dict({"accel_mps2": 1.0})
    with pytest.raises(ir.DesignError, match=r"task\.approach: must be a non-zero direction"):
        ir.task_from_dict({"region": RECT, "approach": [0.0, 0.0, 0.0]})


def test_task_normalises_approach():
    task = ir.task_from_dict({"region": RECT, "approach": [0.0, 3.0, -4.0], "payload_kg": 0.2})
    assert np.allclose(task.approach, [0.0, 0.6, -0.8], rtol=0, atol=1e-15)   # 3-4-5 by hand
    assert task.payload_kg == 0.2 and task.accel_mps2 == 0.0


# ---------------------------------------------------------------------------
# a design file with a bad [task]
# ---------------------------------------------------------------------------
def _sorter_dict():
    with open(DESIGNS / "sorter_planar.toml", "rb") as fh:
        return tomllib.load(fh)


def test_design_file_with_bad_task_region_names_field(tmp_path):
    d = _sorter_dict()
    d["task"]["region"]["spacing_m"] = -0.005
    path = tmp_path / "bad_task.toml"
    path.write_text(tomli_w.dumps(d))
    with pytest.raises(ir.DesignError, match=r"task\.region\.spacing_m: must be >= 1e-06") as info:
        ir.load_design(path)
    assert [p for p, _ in info.value.problems] == ["task.region.spacing_m"]


def test_design_file_with_bad_task_kind_lists_kinds(tmp_path):
    d = _sorter_dict()
    d["task"]["region"]["kind"] = "disc"
    path = tmp_path / "bad_kind.toml"
    path.write_text(tomli_w.dumps(d))
    with pytest.raises(ir.DesignError,
                       match=r"task\.region\.kind: 'disc' is not a valid region kind; "
                             r"supported kinds are rectangle, box, points"):
        ir.load_design(path)


def test_design_task_problems_reported_with_other_problems():
    # arm-model.md "Validation": report all problems of a file at once.  A bad link mass
    # and a bad task region in the same file must both appear in the one error.
    d = _sorter_dict()
    d["joints"][0]["link"]["point_masses"][0]["mass_kg"] = -1.0
    d["task"]["region"]["spacing_m"] = 0.0
    with pytest.raises(ir.DesignError) as info:
        ir.Arm.from_dict(d)
    paths = [p for p, _ in info.value.problems]
    assert "joints[0].link.point_masses[0].mass_kg" in paths, info.value.problems
    assert "task.region.spacing_m" in paths, info.value.problems


def test_design_task_unknown_key_reported_with_region_problem():
    d = _sorter_dict()
    d["task"]["accel_mpss"] = 1.0
    d["task"]["region"]["spacing_m"] = 0.0
    with pytest.raises(ir.DesignError) as info:
        ir.Arm.from_dict(d)
    paths = [p for p, _ in info.value.problems]
    assert "task.accel_mpss" in paths, info.value.problems
    assert "task.region.spacing_m" in paths, info.value.problems


# ---------------------------------------------------------------------------
# sampled grids and cell measures
# ---------------------------------------------------------------------------
def test_rectangle_sample_shape_and_points():
    # 0.3 / 0.05 = 6 cells -> 7 points along u; 0.2 / 0.05 = 4 cells -> 5 points along v
    region = ir.region_from_dict(RECT)
    points, grid = region.sample()
    assert points.shape == (5, 7, 3)
    assert list(grid) == ["v_m", "u_m"]
    u_expected = 0.05 * np.arange(-3, 4)
    v_expected = 0.05 * np.arange(-2, 3)
    assert np.allclose(grid["u_m"], u_expected, rtol=0, atol=1e-15)
    assert np.allclose(grid["v_m"], v_expected, rtol=0, atol=1e-15)
    # axes (1,0,0) and (0,0,1): x = 0.3 + u, y = 0, z = 0.1 + v
    x, z = np.meshgrid(0.3 + u_expected, 0.1 + v_expected)      # (v, u) order
    expected = np.stack([x, np.zeros_like(x), z], axis=-1)
    assert np.allclose(points, expected, rtol=0, atol=1e-15)
    assert region.cell_measure == pytest.approx(0.05 ** 2, rel=1e-15)


def test_rectangle_sides_rounded_down_to_whole_cells():
    # 0.32 m at 0.1 m: 3 whole cells -> 4 points spanning 0.3 m, centred on the centre
    region = ir.Rectangle((0.0, 0.0, 0.0), ((1.0, 0.0, 0.0), (0.0, 1.0, 0.0)), (0.32, 0.0), 0.1)
    points, grid = region.sample()
    assert points.shape == (1, 4, 3)
    assert np.allclose(grid["u_m"], [-0.15, -0.05, 0.05, 0.15], rtol=0, atol=1e-15)
    assert np.allclose(grid["v_m"], [0.0], rtol=0, atol=0)


def test_tilted_rectangle_points_lie_in_their_plane():
    s = np.sqrt(0.5)
    axes = ((s, s, 0.0), (0.0, 0.0, 1.0))
    region = ir.region_from_dict({"kind": "rectangle", "center_m": [1.0, 2.0, 3.0], "axes": axes,
                                  "size_m": [0.4, 0.2], "spacing_m": 0.1})
    points, grid = region.sample()
    assert points.shape == (3, 5, 3)
    normal = np.cross(axes[0], axes[1])                   # (s, -s, 0), by hand
    assert np.allclose(normal, [s, -s, 0.0])
    rel = points - np.array([1.0, 2.0, 3.0])
    assert np.allclose(rel @ normal, 0.0, rtol=0, atol=1e-14)
    assert np.allclose(rel @ np.array(axes[0]), grid["u_m"][None, :], rtol=0, atol=1e-14)
    assert np.allclose(rel @ np.array(axes[1]), grid["v_m"][:, None], rtol=0, atol=1e-14)


def test_box_sample_shape_and_points():
    region = ir.region_from_dict(BOX)
    points, grid = region.sample()
    # sides 0.2, 0.1, 0.3 at 0.1: 3, 2 and 4 points (u, v, w); array order (w, v, u)
    assert points.shape == (4, 2, 3, 3)
    assert list(grid) == ["w_m", "v_m", "u_m"]
    assert np.allclose(grid["u_m"], [-0.1, 0.0, 0.1], rtol=0, atol=1e-15)
    assert np.allclose(grid["v_m"], [-0.05, 0.05], rtol=0, atol=1e-15)
    assert np.allclose(grid["w_m"], [-0.15, -0.05, 0.05, 0.15], rtol=0, atol=1e-15)
    # default axes: the world axes
    assert np.allclose(points[..., 0], 0.1 + grid["u_m"][None, None, :], rtol=0, atol=1e-15)
    assert np.allclose(points[..., 1], -0.2 + grid["v_m"][None, :, None], rtol=0, atol=1e-15)
    assert np.allclose(points[..., 2], 0.3 + grid["w_m"][:, None, None], rtol=0, atol=1e-15)
    assert region.cell_measure == pytest.approx(0.1 ** 3, rel=1e-15)


def test_pointset_sample_shape_and_measure():
    pts = [[0.1, 0.0, 0.2], [0.3, 0.0, 0.1], [0.0, 0.0, 0.4]]
    region = ir.region_from_dict({"kind": "points", "points_m": pts})
    points, grid = region.sample()
    assert points.shape == (3, 3)
    assert np.array_equal(points, np.array(pts))
    assert list(grid) == ["point"] and np.array_equal(grid["point"], [0, 1, 2])
    assert region.cell_measure == 1.0                     # each point weighs the same


@pytest.mark.parametrize("data", [RECT, BOX, {"kind": "points", "points_m": [[0.0, 1.0, 2.0]]}],
                         ids=["rectangle", "box", "points"])
def test_region_dict_round_trip(data):
    region = ir.region_from_dict(data)
    again = ir.region_from_dict(region.to_dict())
    assert again == region
    assert region.kind == data["kind"]
