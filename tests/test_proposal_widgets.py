"""Headless tests of the design-search widgets: ProposalExplorer and SensitivityPanel.

As in ``test_widgets.py``, the widgets run without a kernel and draw on Agg figures;
every test acts the way a person at the screen would (choosing a dropdown row, clicking
on the image) and checks the result from outside, against the public core run here
independently (``ir.DesignSearch``, ``ir.parameter_paths``, ``ir.metric_map``,
``ir.design_scores``, ``ir.one_at_a_time``), never against the widget's own helpers.

One outside check: the moving-mass score is by definition the sum of link, point and
payload masses (``SCORE_COLUMNS['moving_mass_kg']``), so its one-at-a-time swing over a
payload range (0, 0.5) kg is exactly 0.5 kg (a sum of masses; common practice, no source).

The search is tiny and seeded (3 generations of 8 on a coarse 100 mm grid), so the file
runs in seconds. kestrel_a is the invented demo design of ``designs/`` (no real product).
"""

import io
from pathlib import Path

import numpy as np
import pytest
import traitlets
from numpy.testing import assert_allclose

import inertia_review as ir

DESIGNS = Path(__file__).resolve().parent.parent / "designs"
PNG_SIGNATURE = b"\x89PNG\r\n\x1a\n"   # PNG specification (ISO/IEC 15948), file signature
REGION = ir.Rectangle((0.38, 0.05, 0.20), ((1.0, 0.0, 0.0), (0.0, 0.0, 1.0)), (0.30, 0.30), 0.10)
SPACE = {"joints[shoulder].link_length_m": (0.25, 0.45), "derived.link_ratio": (0.6, 1.2)}
VARY = {"joints[shoulder].link_length_m": (0.30, 0.40), "derived.link_ratio": (0.8, 1.0),
        "tool.payload_kg": (0.0, 0.5)}
NUMERIC = [c for c in ir.SCORE_COLUMNS if c != "headroom_worst_joint"]


@pytest.fixture(autouse=True)
def _leak_check(no_figure_leak):
    """Every test here runs under the shared leak check (tests/conftest.py)."""


@pytest.fixture(scope="module")
def arm():
    return ir.load_design(DESIGNS / "kestrel_a.toml")


@pytest.fixture(scope="module")
def search(arm):
    return ir.DesignSearch(arm, SPACE, ["max:gci", "max:headroom_worst"],
                           ["reachable_fraction >= 0.99"], region=REGION, generations=3,
                           population=8, progress=False).run(random_state=1)


def _png_shape(data):
    import matplotlib.image as mpimg

    return mpimg.imread(io.BytesIO(data), format="png").shape


def _pareto_rows(search):
    res = search.results_
    return [int(i) for i in np.flatnonzero(res["pareto"].values)]


# --------------------------------------------------------------------------
# ProposalExplorer
# --------------------------------------------------------------------------
def test_explorer_lists_exactly_the_pareto_rows(search):
    from inertia_review.widgets import ProposalExplorer

    explorer = ProposalExplorer(search)
    assert len(_pareto_rows(search)) >= 3          # enough points for the click test below
    assert sorted(explorer.proposals) == _pareto_rows(search)
    assert [v for _, v in explorer.choice.options] == [-1] + explorer.proposals
    assert explorer.selected == -1 and explorer.proposal is None
    assert (explorer.x, explorer.y) == ("gci", "headroom_worst")   # the two objectives
    assert [a.name for a in explorer.board.arms] == ["kestrel_a"]


def test_choosing_a_pareto_row_loads_that_design_and_compares_it_with_the_baseline(search, arm):
    from inertia_review.widgets import ProposalExplorer

    explorer = ProposalExplorer(search)
    res = search.results_
    i = _pareto_rows(search)[1]
    explorer.choice.value = i                      # the person picks the row in the dropdown
    assert explorer.selected == i
    loaded = explorer.app.controls.arm             # what the review app shows
    assert loaded is explorer.proposal
    values = ir.parameter_paths(loaded)
    for path in SPACE:
        assert abs(values[path] - float(res[path].values[i])) <= 1e-12, path
    # the design's scores recomputed by the public per-design path equal the row's;
    # the search scores variants in a batch, equal to the per-variant path to rtol 1e-7
    # (test_search.py::test_batched_variants_equal_per_variant_path)
    scores = ir.design_scores(ir.metric_map(loaded, REGION))
    for column in NUMERIC:
        assert_allclose(scores[column], float(res[column].values[i]), rtol=1e-7, atol=1e-10,
                        err_msg=column)
    assert explorer.app.panel.arm is loaded        # the map panel follows the controls
    # the board: the baseline design first, then the proposal
    board = explorer.board.arms
    assert len(board) == 2 and board[0] is arm and board[1] is loaded
    base_values = ir.parameter_paths(board[0])
    assert all(base_values[p] == ir.parameter_paths(arm)[p] for p in SPACE)
    assert len(explorer.board.maps) == 2 and explorer.board.error == ""
    # the table row shows the values in screen units (mm for a length)
    assert f"{float(res['joints[shoulder].link_length_m'].values[i]) * 1000:.6g}" \
        in explorer.table.value
    assert f"{float(res['gci'].values[i]):.4g}" in explorer.table.value
    # choosing the same row again does not add it twice; another row is added next to it
    explorer.selected = -1
    explorer.selected = i
    assert len(explorer.board.arms) == 2
    explorer.selected = _pareto_rows(search)[0]
    assert len(explorer.board.arms) == 3 and explorer.board.arms[0] is arm


def test_a_row_outside_the_pareto_set_is_refused(search):
    from inertia_review.widgets import ProposalExplorer

    explorer = ProposalExplorer(search)
    outside = int(np.flatnonzero(~search.results_["pareto"].values)[0])
    with pytest.raises(traitlets.TraitError, match=f"{outside} is not an evaluation of the Pareto"):
        explorer.selected = outside
    assert explorer.selected == -1


def test_a_click_on_a_pareto_point_selects_it(search):
    from inertia_review.widgets import ProposalExplorer

    explorer = ProposalExplorer(search)
    res = search.results_
    fig_w, fig_h = explorer._figure.canvas.get_width_height()
    shown_w, shown_h = fig_w / 2.0, fig_h / 2.0    # the image shown at half size
    for i in _pareto_rows(search)[:3]:
        # the point's data coordinates (GCI and headroom: unit '1', shown as they are)
        data = (float(res["gci"].values[i]), float(res["headroom_worst"].values[i]))
        x_px, y_px = explorer._ax.transData.transform(data)
        explorer.selected = -1
        explorer._on_click({"relativeX": (x_px + 1.0) * shown_w / fig_w,      # 1 px off
                            "relativeY": (fig_h - y_px) * shown_h / fig_h,
                            "boundingRectWidth": shown_w, "boundingRectHeight": shown_h})
        assert explorer.selected == i
        explorer.selected = -1
        assert explorer.select_at(*data) == i
    # a click away from every point selects the nearest one on screen
    points = explorer._ax.transData.transform(
        np.column_stack([res["gci"].values, res["headroom_worst"].values])[_pareto_rows(search)])
    corner = np.array(explorer._ax.transAxes.transform((0.0, 0.0)))
    nearest = _pareto_rows(search)[int(np.argmin(np.hypot(*(points - corner).T)))]
    explorer.selected = -1
    explorer._on_click({"relativeX": corner[0], "relativeY": fig_h - corner[1],
                        "boundingRectWidth": fig_w, "boundingRectHeight": fig_h})
    assert explorer.selected == nearest


def test_explorer_renders_images(search):
    from inertia_review.widgets import ProposalExplorer

    explorer = ProposalExplorer(search)
    first = bytes(explorer.pareto_image.value)
    assert first.startswith(PNG_SIGNATURE)
    fig_w, fig_h = explorer._figure.canvas.get_width_height()
    assert _png_shape(first)[:2] == (fig_h, fig_w)
    explorer.selected = explorer.proposals[0]
    marked = bytes(explorer.pareto_image.value)
    assert marked.startswith(PNG_SIGNATURE) and marked != first      # the selection is ringed
    assert bytes(explorer.app.panel.image.value).startswith(PNG_SIGNATURE)
    assert bytes(explorer.board.maps_image.value).startswith(PNG_SIGNATURE)
    assert bytes(explorer.board.diff_image.value).startswith(PNG_SIGNATURE)
    explorer.x = "joints[shoulder].link_length_m"                       # a searched path
    assert bytes(explorer.pareto_image.value) not in (first, marked)
    assert explorer.selected == explorer.choice.value


def test_explorer_snapshot_prints_the_proposal_and_the_caution(search, capsys):
    from inertia_review.studies._cautions import TORQUE_CAUTION
    from inertia_review.widgets import ProposalExplorer, snapshot

    explorer = ProposalExplorer(search)
    i = explorer.proposals[0]
    explorer.selected = i
    snapshot(explorer)
    out = capsys.readouterr().out
    assert f"proposal #{i} of kestrel_a" in out
    assert f"{float(search.results_['headroom_worst'].values[i]):.4g}" in out
    assert " ".join(TORQUE_CAUTION.split()) in " ".join(out.split())   # wrapped at 100 columns


def test_explorer_needs_a_run_search(arm):
    from inertia_review.widgets import ProposalExplorer

    with pytest.raises(ValueError, match="call `search.run"):
        ProposalExplorer(ir.DesignSearch(arm, SPACE, ["max:gci"], region=REGION))


# --------------------------------------------------------------------------
# SensitivityPanel
# --------------------------------------------------------------------------
def _bar_widths(bars):
    return np.array([patch.get_width() for patch in bars.patches])


def test_tornado_bars_equal_one_at_a_time_and_follow_the_dropdown(arm):
    from inertia_review.widgets import SensitivityPanel

    panel = SensitivityPanel(arm, VARY, REGION)
    for score in ("gci", "moving_mass_kg"):
        panel.score_choice.value = score           # the person picks the score
        assert panel.score == score and panel.error == ""
        ref = ir.one_at_a_time(arm, VARY, score, REGION)
        assert list(panel.table.index) == list(ref.index)
        assert_allclose(panel.table[["score_low", "score_high", "swing"]].to_numpy(),
                        ref[["score_low", "score_high", "swing"]].to_numpy(), rtol=0, atol=0)
        base = float(ref["score_baseline"].iloc[0])
        assert panel.artists.paths == list(ref.index)
        assert_allclose(_bar_widths(panel.artists.low_bars), ref["score_low"] - base,
                        rtol=1e-12, atol=1e-15)
        assert_allclose(_bar_widths(panel.artists.high_bars), ref["score_high"] - base,
                        rtol=1e-12, atol=1e-15)
        if score == "gci":
            gci_image, gci_widths = bytes(panel.image.value), _bar_widths(panel.artists.low_bars)
    assert bytes(panel.image.value) != gci_image
    assert not np.allclose(_bar_widths(panel.artists.low_bars), gci_widths)
    # outside check: moving mass = sum of the masses, so the payload swing is its range
    assert panel.table.loc["tool.payload_kg", "swing"] == pytest.approx(0.5, abs=1e-12)


def test_tornado_panel_renders_an_image_and_a_table(arm):
    from inertia_review.widgets import SensitivityPanel

    panel = SensitivityPanel(arm, VARY, REGION, score="headroom_worst")
    data = bytes(panel.image.value)
    assert data.startswith(PNG_SIGNATURE) and len(_png_shape(data)) == 3
    # one row per path, with the range in screen units (mm for the shoulder link)
    assert panel.table_html.value.count("<tr>") == 1 + len(VARY)
    assert "300 to 400 mm" in panel.table_html.value
    assert "design-stage" in panel.table_html.value           # headroom carries the caution
    assert "one-at-a-time sensitivity of headroom_worst" in panel.snapshot_text()


def test_tornado_panel_refuses_an_unoffered_score(arm):
    from inertia_review.widgets import SensitivityPanel

    with pytest.raises(ValueError, match="'sag' is not among the offered scores"):
        SensitivityPanel(arm, VARY, REGION, scores=["gci"], score="sag")


# --------------------------------------------------------------------------
# parameter paths given together (found by the explorer test: a derived ratio and a
# link length in one search space)
# --------------------------------------------------------------------------
def test_a_derived_value_and_a_link_length_are_met_together(arm):
    both = arm.with_values({"joints[shoulder].link_length_m": 0.30, "derived.link_ratio": 0.8})
    values = ir.parameter_paths(both)
    assert values["joints[shoulder].link_length_m"] == pytest.approx(0.30, abs=1e-12)
    assert values["derived.link_ratio"] == pytest.approx(0.8, abs=1e-12)
    assert values["joints[elbow].link_length_m"] == pytest.approx(0.24, abs=1e-12)
    reach = arm.with_values({"joints[elbow].link_length_m": 0.25, "derived.reach_m": 0.60})
    assert ir.parameter_paths(reach)["joints[shoulder].link_length_m"] == pytest.approx(0.35,
                                                                                    abs=1e-12)
    with pytest.raises(ir.DesignError, match="over-determined"):
        arm.with_values({"joints[shoulder].link_length_m": 0.3, "derived.reach_m": 0.6,
                         "derived.link_ratio": 0.8})
    with pytest.raises(ir.DesignError, match="derived.reach_m.*link length of -0.05"):
        arm.with_values({"joints[shoulder].link_length_m": 0.65, "derived.reach_m": 0.6})
