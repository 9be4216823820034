"""Headless tests of the review widgets (inertia_review.widgets).

The widgets run without a kernel (ipywidgets falls back to a dummy comm) and draw on
Agg figures. Every test sets traits or calls methods the way a person at the screen
would (moving a slider, typing a point, choosing a metric) and checks the derived state
from outside:

- map images, meshes, scores and tables are compared with the public core run
  independently here (``ir.metric_map``, ``ir.design_scores``, ``ir.scores_table``,
  ``ir.principal_masses``, ``ir.Sweep``), never with the widget's own helpers;
- slider values are compared with the numbers written in the demo design file;
- the payload identity (a point payload m_L at the tool point adds exactly m_L I to the
  apparent-mass matrix Lambda, so every principal mass grows by m_L) is an exact
  consequence of Khatib's definition (Khatib 1987, eq. 18 [S]: confirmed only through a
  secondary summary; Woodbury identity, references.md item 4 [D]).

Regions are kept coarse (the demo task region resampled at 40 mm) so the file stays
fast. The designs are the invented demo designs of ``designs/`` (invented data, no real
product) and variants made here.
"""

import base64
import html.parser
import io
import re
from pathlib import Path

import numpy as np
import pytest
import traitlets
from numpy.testing import assert_allclose

import inertia_review as ir

DESIGNS = Path(__file__).resolve().parent.parent / "designs"
PNG_SIGNATURE = b"\x89PNG\r\n\x1a\n"   # PNG specification (ISO/IEC 15948), file signature
SPACING_M = 0.04


# --------------------------------------------------------------------------
# fixtures
# --------------------------------------------------------------------------
@pytest.fixture(autouse=True)
def _leak_check(no_figure_leak):
    """Every test here runs under the shared leak check (tests/conftest.py)."""


@pytest.fixture(scope="module")
def kestrel_c():
    return ir.load_design(DESIGNS / "kestrel_c.toml")


@pytest.fixture(scope="module")
def task(kestrel_a):
    """The demo design's own task, its region resampled coarsely (40 mm)."""
    t = kestrel_a.task
    r = t.region
    region = ir.Rectangle(r.center_m, r.axes, r.size_m, SPACING_M)
    return ir.Task(region, accel_mps2=t.accel_mps2, payload_kg=t.payload_kg,
                   approach=t.approach)


@pytest.fixture(scope="module")
def unrated_a(kestrel_a):
    """kestrel_a without any [joints.actuator] table (no torque ratings, no rotor)."""
    spec = kestrel_a.to_dict()
    for joint in spec["joints"]:
        joint.pop("actuator", None)
    spec["name"] = "kestrel_a_unrated"
    return ir.Arm.from_dict(spec)


def _renamed(arm, name):
    spec = arm.to_dict()
    spec["name"] = name
    return ir.Arm.from_dict(spec)


def _quadmeshes(ax):
    from matplotlib.collections import QuadMesh

    return [c for c in ax.collections if isinstance(c, QuadMesh)]


def _bytes(image):
    """An Image widget's value as bytes (ipywidgets may hand back a memoryview)."""
    return bytes(image.value)


def _png_shape(data):
    import matplotlib.image as mpimg

    return mpimg.imread(io.BytesIO(data), format="png").shape


# --------------------------------------------------------------------------
# DesignControls
# --------------------------------------------------------------------------
# Values read off designs/kestrel_a.toml (SI): link lengths are the distances to the next
# joint origin (or the tool point for the last link).
KESTREL_A_FILE_VALUES = {
    "joints[yaw].link_length_m": 0.22,        # shoulder xyz_m = [0, 0, 0.22]
    "joints[shoulder].link_length_m": 0.35,   # elbow xyz_m = [0.35, 0, 0]
    "joints[elbow].link_length_m": 0.30,      # tool xyz_m = [0.30, 0, 0]
    "joints[yaw].link.mass_kg": 1.8,
    "tool.payload_kg": 0.3,
    "mount.rpy_deg[0]": 0.0,
    "mount.rpy_deg[1]": 0.0,
    "joints[elbow].actuator.gear_ratio": 80.0,
}
SCREEN = {"_m": ("[mm]", 1000.0), "_kg": ("[kg]", 1.0), "]": ("[deg]", 1.0),
          "gear_ratio": ("[-]", 1.0)}


def _screen(path):
    for suffix, (unit, factor) in SCREEN.items():
        if path.endswith(suffix):
            return unit, factor
    raise AssertionError(path)


def test_controls_have_sliders_for_the_default_parameters(irw, kestrel_a):
    controls = irw.DesignControls(kestrel_a)
    sliders = controls.sliders
    assert list(sliders) == irw.default_parameters(kestrel_a)
    for path, si_value in KESTREL_A_FILE_VALUES.items():
        assert path in sliders, f"no slider for {path}"
        unit, factor = _screen(path)
        slider = sliders[path]
        assert slider.description.endswith(unit), (path, slider.description)
        assert slider.value == pytest.approx(si_value * factor, rel=1e-12, abs=1e-12)
        assert slider.min <= slider.value <= slider.max
        assert slider.continuous_update is False      # heavy work happens on release
    for path, si_value in KESTREL_A_FILE_VALUES.items():
        assert controls.values[path] == pytest.approx(si_value, rel=1e-12, abs=1e-12)
    assert controls.arm is kestrel_a and controls.error == ""


def test_slider_descriptions_are_readable(irw, kestrel_a):
    """Each description is words then one unit in brackets: balanced brackets and no
    underscore of the internal path left on screen (common practice, no source)."""
    unit_at_end = re.compile(r"\[(mm|kg|deg|-|N m|kg m\^2)\]$")
    bad = {}
    for path, slider in irw.DesignControls(kestrel_a).sliders.items():
        text = slider.description
        depth, balanced = 0, True
        for ch in text:
            depth += {"[": 1, "]": -1}.get(ch, 0)
            balanced &= depth >= 0
        if not (balanced and depth == 0) or "_" in text or unit_at_end.search(text) is None:
            bad[path] = text
    assert not bad, f"unreadable slider descriptions: {bad}"


def test_set_value_changes_values_and_arm(irw, kestrel_a):
    controls = irw.DesignControls(kestrel_a)
    path = "joints[shoulder].link_length_m"
    controls.set_value(path, 0.40)
    assert controls.values[path] == pytest.approx(0.40, rel=1e-12)
    assert controls.sliders[path].value == pytest.approx(400.0, rel=1e-12)   # shown in mm
    spec = controls.arm.to_dict()
    # the shoulder link ends at the elbow joint: its origin moves out along +x
    assert_allclose(spec["joints"][2]["xyz_m"], [0.40, 0.0, 0.0], rtol=0, atol=1e-12)
    assert_allclose(kestrel_a.to_dict()["joints"][2]["xyz_m"], [0.35, 0.0, 0.0])  # base kept
    assert controls.error == ""
    # every other value stays at the file's value
    for other, si_value in KESTREL_A_FILE_VALUES.items():
        if other != path:
            assert controls.values[other] == pytest.approx(si_value, rel=1e-12, abs=1e-12)


def test_payload_slider_adds_the_payload_to_every_principal_mass(irw, kestrel_a):
    """Payload identity: Lambda grows by exactly m_L I (references.md item 4 [D])."""
    controls = irw.DesignControls(kestrel_a)
    controls.set_value("tool.payload_kg", 0.5)
    heavier = controls.arm
    assert heavier.to_dict()["tool"]["payload_kg"] == pytest.approx(0.5, rel=1e-12)
    q = np.array([[0.3, 0.9, -1.2], [-0.5, 1.4, -0.7]])
    before = ir.principal_masses(kestrel_a, q).masses
    after = ir.principal_masses(heavier, q).masses
    assert_allclose(after - before, 0.2, rtol=0, atol=1e-9)


def test_reset_restores_the_baseline_exactly(irw, kestrel_a):
    controls = irw.DesignControls(kestrel_a)
    baseline_values = dict(controls.values)
    controls.set_value("joints[elbow].link_length_m", 0.27)
    controls.set_value("tool.payload_kg", 0.45)
    controls.sliders["mount.rpy_deg[1]"].value = 12.0
    assert controls.arm.to_dict() != kestrel_a.to_dict()
    controls.reset()
    assert controls.values == baseline_values               # exactly, not approximately
    assert controls.arm.to_dict() == kestrel_a.to_dict()
    assert controls.error == "" and controls.message.value == ""
    for path, si_value in KESTREL_A_FILE_VALUES.items():
        _, factor = _screen(path)
        assert controls.sliders[path].value == pytest.approx(si_value * factor, rel=1e-12,
                                                             abs=1e-12)


def _assert_rejected(controls, path, typed_si, last_valid):
    """The design stays at the last valid arm, the error names the field, the message is
    on screen and the typed value is kept."""
    assert controls.values[path] == typed_si, (
        f"the typed value {typed_si!r} of {path} became {controls.values[path]!r} with "
        f"error {controls.error!r}: nothing typed may be changed silently")
    assert path in controls.error, controls.error
    assert controls.arm is last_valid
    assert path in controls.message.value and "Not applied" in controls.message.value
    _, factor = _screen(path)
    assert controls.sliders[path].value == pytest.approx(typed_si * factor, abs=1e-12)


def test_negative_payload_through_a_widened_slider_is_rejected_and_kept(irw, kestrel_a):
    controls = irw.DesignControls(kestrel_a)
    controls.set_value("joints[elbow].link_length_m", 0.32)      # a valid change first
    last_valid = controls.arm
    slider = controls.sliders["tool.payload_kg"]
    slider.min = -1.0
    slider.value = -0.2
    _assert_rejected(controls, "tool.payload_kg", -0.2, last_valid)
    assert "must be >= 0" in controls.error
    # a valid value afterwards applies and clears the error
    slider.value = 0.25
    assert controls.error == "" and controls.message.value == ""
    assert controls.arm.to_dict()["tool"]["payload_kg"] == pytest.approx(0.25, rel=1e-12)
    assert controls.arm.to_dict()["tool"]["xyz_m"] == pytest.approx([0.32, 0.0, 0.0])


def test_zero_link_length_through_a_widened_slider_is_rejected_and_kept(irw, kestrel_a):
    controls = irw.DesignControls(kestrel_a)
    path = "joints[shoulder].link_length_m"
    controls.sliders[path].min = 0.0
    controls.set_value(path, 0.0)
    _assert_rejected(controls, path, 0.0, kestrel_a)


def test_zero_link_length_via_set_value_is_rejected_and_kept(irw, kestrel_a):
    """set_value is the programmatic entry (SI units): a value outside the slider's range
    must not be clamped without a trace; an invalid one shows the error and is kept."""
    controls = irw.DesignControls(kestrel_a)
    path = "joints[shoulder].link_length_m"
    controls.set_value(path, 0.0)
    _assert_rejected(controls, path, 0.0, kestrel_a)


# --------------------------------------------------------------------------
# MapPanel
# --------------------------------------------------------------------------
# The panel may warm-start its inverse kinematics from the previous map, so its solved
# configurations agree with a fresh ir.metric_map only to the solver's position tolerance
# (1e-9 m); dimensionless metrics then agree to about 1e-9 relative. 1e-6 leaves margin and
# still catches any wrong or stale value (a 1 mm design change moves them by ~1e-3).
MAP_RTOL = 1e-6


def _assert_mesh_matches(ax, ds, metric):
    (mesh,) = _quadmeshes(ax)
    shown = np.ma.masked_invalid(mesh.get_array())
    ok = ds["status"].values == 0
    expected = ds[metric].values
    assert shown.shape == expected.shape
    assert_allclose(shown[ok].filled(np.nan), expected[ok], rtol=MAP_RTOL, atol=0)
    assert np.all(np.ma.getmaskarray(shown)[~ok]), "unsolved points must not be coloured"
    return mesh


def _assert_scores_close(got, expected):
    assert set(got) == set(expected)
    for key, value in expected.items():
        if isinstance(value, str):
            assert got[key] == value, key
        else:
            assert got[key] == pytest.approx(value, rel=MAP_RTOL, nan_ok=True), key


def test_map_panel_image_is_png_of_the_figure(irw, kestrel_a, task):
    panel = irw.MapPanel(kestrel_a, task)
    data = _bytes(panel.image)
    assert isinstance(data, bytes) and data.startswith(PNG_SIGNATURE)
    width, height = panel.figure.canvas.get_width_height()
    assert _png_shape(data)[:2] == (height, width)
    assert panel.error == ""


def test_map_panel_recomputes_in_place_when_the_arm_changes(irw, kestrel_a, task):
    panel = irw.MapPanel(kestrel_a, task)
    expected_first = ir.metric_map(kestrel_a, task)
    _assert_scores_close(panel.scores, ir.design_scores(expected_first))
    first_mesh = _assert_mesh_matches(panel.ax, panel.ds, "mass_ratio")
    _assert_mesh_matches(panel.ax, expected_first, "mass_ratio")
    figure, ax, image, scores = panel.figure, panel.ax, _bytes(panel.image), dict(panel.scores)

    longer = kestrel_a.with_values({"joints[elbow].link_length_m": 0.36})
    panel.arm = longer
    expected = ir.metric_map(longer, task)
    assert panel.error == ""
    _assert_scores_close(panel.scores, ir.design_scores(expected))
    assert panel.scores["gci"] != pytest.approx(scores["gci"], rel=1e-4)
    assert _bytes(panel.image) != image and _bytes(panel.image).startswith(PNG_SIGNATURE)
    assert panel.figure is figure and panel.ax is ax
    mesh = _assert_mesh_matches(panel.ax, expected, "mass_ratio")
    assert mesh is first_mesh, "the QuadMesh must be updated in place, not redrawn"
    # the readout shows the new scores
    assert f"{ir.design_scores(expected)['gci']:.3f}" in panel.readout.value


def test_map_panel_redraws_when_the_metric_changes(irw, kestrel_a, task):
    panel = irw.MapPanel(kestrel_a, task)
    image = _bytes(panel.image)
    panel.metric = "isotropy"
    assert _bytes(panel.image) != image
    expected = ir.metric_map(kestrel_a, task)
    _assert_mesh_matches(panel.ax, expected, "isotropy")
    # the dropdown drives the same trait
    image = _bytes(panel.image)
    panel.metric_choice.value = "mass_ratio"
    assert panel.metric == "mass_ratio" and _bytes(panel.image) != image
    _assert_mesh_matches(panel.ax, expected, "mass_ratio")


def test_map_panel_keeps_the_last_map_when_the_map_fails(irw, kestrel_a, task, monkeypatch):
    import inertia_review.widgets._map_panel as map_panel_module

    panel = irw.MapPanel(kestrel_a, task)
    ds, image, scores = panel.ds, _bytes(panel.image), dict(panel.scores)

    def failing_map(*args, **kwargs):
        raise ValueError("test double: this region cannot be mapped for this arm")

    monkeypatch.setattr(map_panel_module, "metric_map", failing_map)
    panel.arm = kestrel_a.with_values({"tool.payload_kg": 0.4})
    assert "cannot be mapped" in panel.error
    assert "cannot be mapped" in panel.message.value
    assert panel.ds is ds and _bytes(panel.image) == image and panel.scores == scores
    monkeypatch.undo()
    panel.arm = kestrel_a                      # a map that works again clears the error
    assert panel.error == "" and panel.message.value == ""


def test_map_panel_reports_a_metric_the_new_arm_lacks(irw, kestrel_a, unrated_a, task):
    """The torque margin needs ratings: switching to an unrated arm keeps the last map."""
    panel = irw.MapPanel(kestrel_a, task, metric="min_margin")
    ds, image = panel.ds, _bytes(panel.image)
    assert "min_margin" not in ir.metric_map(unrated_a, task)     # what the panel meets
    panel.arm = unrated_a
    assert "min_margin" in panel.error and "min_margin" in panel.message.value
    assert panel.ds is ds and _bytes(panel.image) == image


# --------------------------------------------------------------------------
# PointProbe
# --------------------------------------------------------------------------
def _solved_interior_index(ds):
    ok = ds["status"].values == 0
    nv, nu = ok.shape
    for iv in range(1, nv - 1):
        for iu in range(1, nu - 1):
            if ok[iv, iu] and (iv, iu) != (nv // 2, nu // 2):
                return iv, iu
    raise AssertionError("no solved interior point")


def _masses_in(text):
    m = re.search(r"principal apparent masses ([^<]*?) kg", text)
    assert m, text
    return np.array([float(s) for s in m.group(1).split(",")])


def _type_point(probe, u_mm, v_mm):
    probe.u_box.value = u_mm
    probe.v_box.value = v_mm


def test_probe_selects_the_nearest_grid_point(irw, kestrel_a, task):
    panel = irw.MapPanel(kestrel_a, task)
    probe = irw.PointProbe(panel)
    ds = panel.ds
    iv, iu = _solved_interior_index(ds)
    u_mm = ds["u_m"].values[iu] * 1000.0 + 0.3 * SPACING_M * 1000.0   # off-grid, nearer iu
    v_mm = ds["v_m"].values[iv] * 1000.0 - 0.4 * SPACING_M * 1000.0
    _type_point(probe, u_mm, v_mm)
    assert probe.u_mm == u_mm and probe.v_mm == v_mm
    expected_index = (int(np.argmin(np.abs(ds["v_m"].values * 1000.0 - v_mm))),
                      int(np.argmin(np.abs(ds["u_m"].values * 1000.0 - u_mm))))
    assert expected_index == (iv, iu)
    assert tuple(panel.probe_index) == (iv, iu)
    q = ds["q"].values[iv, iu]
    assert_allclose(probe.q, q, rtol=0, atol=0)
    masses = ir.principal_masses(kestrel_a, q).masses
    assert np.all(np.isfinite(masses))
    assert_allclose(_masses_in(probe.text.value), masses, rtol=5.1e-3)   # 3 significant digits
    angles = re.search(r"joint angles \[([^\]]*)\] deg", probe.text.value).group(1)
    assert_allclose([float(a) for a in angles.split(",")], np.rad2deg(q), rtol=0, atol=0.051)
    assert _bytes(probe.ellipse_image).startswith(PNG_SIGNATURE)
    assert _bytes(probe.torque_image).startswith(PNG_SIGNATURE)     # kestrel_a is rated


def test_probe_says_why_a_point_is_not_solved(irw, kestrel_a, task):
    panel = irw.MapPanel(kestrel_a, task)
    probe = irw.PointProbe(panel)
    ds = panel.ds
    status = ds["status"].values
    unsolved = np.argwhere(status != 0)
    assert unsolved.size, "the coarse region should contain unsolved points"
    iv, iu = (int(i) for i in unsolved[0])
    _type_point(probe, ds["u_m"].values[iu] * 1000.0, ds["v_m"].values[iv] * 1000.0)
    assert tuple(panel.probe_index) == (iv, iu)
    assert probe.q is None
    reason = ir.STATUS[int(status[iv, iu])].replace("_", " ")
    assert "not solved" in probe.text.value and reason in probe.text.value, probe.text.value


def test_probe_follows_an_arm_change(irw, kestrel_a, task):
    panel = irw.MapPanel(kestrel_a, task)
    probe = irw.PointProbe(panel)
    iv, iu = _solved_interior_index(panel.ds)
    _type_point(probe, panel.ds["u_m"].values[iu] * 1000.0, panel.ds["v_m"].values[iv] * 1000.0)
    heavier = kestrel_a.with_values({"tool.payload_kg": 0.8,
                                     "joints[elbow].link_length_m": 0.33})
    panel.arm = heavier
    assert panel.ds["status"].values[iv, iu] == 0
    q = panel.ds["q"].values[iv, iu]
    assert_allclose(probe.q, q, rtol=0, atol=0)
    # q puts the new arm's tool point on the probed grid point (solver tolerance 1e-9 m)
    point = [float(panel.ds[c].values[iv, iu]) for c in ("x_m", "y_m", "z_m")]
    assert_allclose(heavier.tool_position(q), point, rtol=0, atol=1e-8)
    assert_allclose(_masses_in(probe.text.value), ir.principal_masses(heavier, q).masses,
                    rtol=5.1e-3)


# --------------------------------------------------------------------------
# ComparisonBoard
# --------------------------------------------------------------------------
class _TableParser(html.parser.HTMLParser):
    """Rows of an HTML table as lists of cell texts (th and td)."""

    def __init__(self):
        super().__init__()
        self.rows, self._cell = [], None

    def handle_starttag(self, tag, attrs):
        if tag == "tr":
            self.rows.append([])
        elif tag in ("td", "th") and self.rows:
            self._cell = ""

    def handle_endtag(self, tag):
        if tag in ("td", "th") and self._cell is not None:
            self.rows[-1].append(self._cell.strip())
            self._cell = None

    def handle_data(self, data):
        if self._cell is not None:
            self._cell += data


def _parse_board_table(text):
    parser = _TableParser()
    parser.feed(text)
    header, *rows = parser.rows
    columns = [h.split(" [")[0] for h in header[1:]]
    return columns, {row[0]: dict(zip(columns, row[1:])) for row in rows}


# Which direction is better for each score (common practice, no source: a larger
# conditioning or mass ratio, margin and capability is better; less moving mass is better).
HIGHER_IS_BETTER = {"reachable_fraction": True, "gci": True, "isotropy_worst": True,
                    "mass_ratio_worst": True, "headroom_worst": True,
                    "accel_capability_min": True, "moving_mass_kg": False}


@pytest.fixture
def board(irw, kestrel_a, kestrel_b, kestrel_c, task):
    return irw.ComparisonBoard([kestrel_a, kestrel_b, kestrel_c], task)


def test_board_scores_equal_the_scores_table_of_the_maps(board, kestrel_a, kestrel_b,
                                                         kestrel_c, task):
    import pandas.testing

    independent = ir.scores_table([ir.metric_map(a, task) for a in (kestrel_a, kestrel_b,
                                                                      kestrel_c)])
    pandas.testing.assert_frame_equal(board.scores, independent)
    pandas.testing.assert_frame_equal(board.scores, ir.scores_table(board.maps))
    assert list(board.scores.index) == ["kestrel_a", "kestrel_b", "kestrel_c"]
    assert _bytes(board.maps_image).startswith(PNG_SIGNATURE)
    assert _bytes(board.diff_image).startswith(PNG_SIGNATURE)


def test_board_marks_the_best_value_of_each_column_on_the_right_design(board):
    columns, rows = _parse_board_table(board.table.value)
    scores = board.scores
    assert set(rows) == set(scores.index)
    for column, higher in HIGHER_IS_BETTER.items():
        marked = [name for name, cells in rows.items() if "★" in cells[column]]
        assert len(marked) == 1, (column, {n: c[column] for n, c in rows.items()})
        best = scores[column].max() if higher else scores[column].min()
        assert scores.loc[marked[0], column] == best, (column, marked, scores[column])
        shown = float(rows[marked[0]][column].replace("★", ""))
        assert shown == pytest.approx(best, rel=1e-3)
    # the limiting-joint column is a name: no best
    assert not any("★" in cells["headroom_worst_joint"] for cells in rows.values())
    assert "design-stage estimates" in board.table.value


def test_board_holds_one_to_four_designs(board, kestrel_a):
    before = list(board.arms)
    with pytest.raises(traitlets.TraitError, match="1 to 4 designs; got 0"):
        board.arms = []
    with pytest.raises(traitlets.TraitError, match="1 to 4 designs; got 5"):
        board.arms = [_renamed(kestrel_a, f"v{i}") for i in range(5)]
    assert board.arms == before


def test_board_add_appends_then_replaces_the_last(board, kestrel_a):
    fourth, fifth = _renamed(kestrel_a, "alt_four"), _renamed(kestrel_a, "alt_five")
    board.add(fourth)
    assert [a.name for a in board.arms] == ["kestrel_a", "kestrel_b", "kestrel_c", "alt_four"]
    assert list(board.scores.index)[-1] == "alt_four"
    board.add(fifth)
    assert [a.name for a in board.arms] == ["kestrel_a", "kestrel_b", "kestrel_c", "alt_five"]
    assert list(board.scores.index) == ["kestrel_a", "kestrel_b", "kestrel_c", "alt_five"]
    assert len(board.maps) == 4


def test_board_baseline_change_redraws_the_difference(irw, kestrel_a, kestrel_b, task):
    board = irw.ComparisonBoard([kestrel_a, kestrel_b], task)
    diff = _bytes(board.diff_image)
    board.baseline = 1
    assert _bytes(board.diff_image) != diff and _bytes(board.diff_image).startswith(PNG_SIGNATURE)
    assert board.baseline_choice.index == 1
    board.baseline_choice.index = 0                 # the dropdown drives the same trait
    assert board.baseline == 0


# --------------------------------------------------------------------------
# SweepExplorer
# --------------------------------------------------------------------------
RATIO = "derived.link_ratio"


def _explorer(irw, arm, task, board=None):
    explorer = irw.SweepExplorer(arm, task, board=board, parameters=[RATIO])
    explorer.second.value = "(none)"
    explorer.range1.value = "0.8, 1.0, 2"
    return explorer


def test_sweep_explorer_results_equal_a_direct_sweep(irw, kestrel_a, task):
    import xarray.testing

    explorer = _explorer(irw, kestrel_a, task)
    assert explorer.results is None
    explorer.run()
    direct = ir.Sweep(kestrel_a, vary={RATIO: [0.8, 1.0]}, region=task, progress=False).run()
    xarray.testing.assert_allclose(explorer.results, direct.results_, rtol=1e-12, atol=0)
    assert list(explorer.results[RATIO].values) == pytest.approx([0.8, 1.0])
    assert explorer.message.value == ""


def test_sweep_explorer_draws_the_tradeoff_after_a_run(irw, kestrel_a, task):
    """Setting ``results`` must reach its observer: the trade-off image appears, and a new
    score redraws it."""
    explorer = _explorer(irw, kestrel_a, task)
    assert _bytes(explorer.image) == b""
    explorer.run()
    first = _bytes(explorer.image)
    assert first.startswith(PNG_SIGNATURE), "no trade-off plot after run()"
    explorer.score = "moving_mass_kg"
    assert _bytes(explorer.image) != first


@pytest.mark.parametrize("text", ["0.8, 1.0", "0.8, 1.0, 0", "0.8, 1.0, 2, 3", "a, b, c", ""])
def test_sweep_explorer_bad_range_shows_an_error(irw, kestrel_a, task, text):
    explorer = _explorer(irw, kestrel_a, task)
    explorer.range1.value = text
    assert explorer.run() is None                  # does not raise
    assert explorer.results is None
    assert "color:#b00020" in explorer.message.value and len(explorer.message.value) > 40


def test_sweep_explorer_send_best_adds_to_the_board(irw, kestrel_a, kestrel_b, task):
    board = irw.ComparisonBoard([kestrel_a, kestrel_b], task)
    explorer = _explorer(irw, kestrel_a, task, board=board)
    explorer.run()
    gci = explorer.results["gci"].values
    best_ratio = float(explorer.results[RATIO].values[int(np.argmax(gci))])
    sent = explorer.send_best()
    assert len(board.arms) == 3 and board.arms[-1] is sent
    expected = kestrel_a.with_values({RATIO: best_ratio}).to_dict()
    got = sent.to_dict()
    assert got.pop("name").startswith("kestrel_a best")
    expected.pop("name")
    assert got == expected
    assert f"{RATIO}={best_ratio:.3g}" in sent.name


def test_sweep_explorer_send_best_by_lowest_mass_is_labelled_with_its_values(irw, kestrel_a,
                                                                              kestrel_b, task):
    """For moving mass the best is the lightest; the name must give that variant's values."""
    board = irw.ComparisonBoard([kestrel_a, kestrel_b], task)
    explorer = _explorer(irw, kestrel_a, task, board=board)
    explorer.score = "moving_mass_kg"
    explorer.run()
    mass = explorer.results["moving_mass_kg"].values
    assert mass[0] != mass[1]
    lightest = float(explorer.results[RATIO].values[int(np.argmin(mass))])
    sent = explorer.send_best()
    assert sent.to_dict()["joints"] == kestrel_a.with_values({RATIO: lightest}).to_dict()["joints"]
    assert f"{RATIO}={lightest:.3g}" in sent.name, sent.name


# --------------------------------------------------------------------------
# snapshot
# --------------------------------------------------------------------------
@pytest.fixture
def ipython(tmp_path, monkeypatch):
    """An IPython shell (no kernel) so that display() output can be captured."""
    from IPython.core.interactiveshell import InteractiveShell
    from traitlets.config import Config

    monkeypatch.setenv("IPYTHONDIR", str(tmp_path / "ipython"))
    created = not InteractiveShell.initialized()
    config = Config()
    config.HistoryManager.hist_file = ":memory:"
    shell = InteractiveShell.instance(config=config)
    yield shell
    if created:
        InteractiveShell.clear_instance()


def _png_outputs(outputs):
    out = []
    for output in outputs:
        data = output.data.get("image/png")
        if data is not None:
            out.append(data if isinstance(data, bytes) else base64.b64decode(data))
    return out


CAUTION_PHRASES = ("CAUTION", "design-stage estimates", "not a validation", "ISO 10218")


def test_snapshot_of_a_map_panel(irw, kestrel_a, task, ipython):
    from IPython.utils.capture import capture_output

    panel = irw.MapPanel(kestrel_a, task)
    with capture_output() as captured:
        result = irw.snapshot(panel, title="coarse map")
    assert result is None
    pngs = _png_outputs(captured.outputs)
    assert pngs == [_bytes(panel.image)]
    assert any("coarse map" in o.data.get("text/markdown", "") for o in captured.outputs)
    assert ir.baseline_table([ir.metric_map(kestrel_a, task)]) in captured.stdout
    for phrase in CAUTION_PHRASES:
        assert phrase in captured.stdout


def test_snapshot_of_a_board(irw, kestrel_a, kestrel_b, task, ipython):
    from IPython.utils.capture import capture_output

    board = irw.ComparisonBoard([kestrel_a, kestrel_b], task)
    with capture_output() as captured:
        irw.snapshot(board)
    pngs = _png_outputs(captured.outputs)
    assert len(pngs) == 2 and all(p.startswith(PNG_SIGNATURE) for p in pngs)
    assert set(pngs) == {_bytes(board.maps_image), _bytes(board.diff_image)}
    tables = [o.data["text/html"] for o in captured.outputs if "text/html" in o.data]
    assert board.table.value in tables                 # the compact table, a row per design
    rows = tables[tables.index(board.table.value)].count("<tr>") - 1
    assert rows == 2
    maps = [ir.metric_map(a, task) for a in (kestrel_a, kestrel_b)]
    assert f"{ir.design_scores(maps[1])['gci']:.4g}" in board.table.value
    assert ir.baseline_table(maps) not in captured.stdout   # the long text stays in nbval cells
    for phrase in CAUTION_PHRASES:
        assert phrase in captured.stdout
