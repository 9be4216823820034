"""Stiffness screens: the probe's stiffness ellipse, the datasheet cards and their cautions.

Headless (ipywidgets without a kernel, Agg figures), as in test_widgets.py. Outside checks:

- the probe's stiffness ellipse against ``numpy.linalg.eigh`` of ``ir.tool_stiffness`` at the
  probed point (for a 3-D task: of its shadow on the drawing plane, inv(P K^-1 P^T), the
  stiffness along an in-plane direction with the others free);
- for a two-joint planar arm with joint springs only, the tool stiffness
  K_x = (J K^-1 J^T)^-1 with the Jacobian of the planar two-link arm written out by hand
  (J = [[-l1 s1 - l2 s12, -l2 s12], [l1 c1 + l2 c12, l2 c12]]; any robotics text, common
  practice, no source), and the first mode against ``scipy.linalg.eigh(K, M)`` (the
  generalized symmetric eigenproblem K phi = omega^2 M phi solved by LAPACK);
- the datasheet cards against the fields of ``ir.datasheet`` over ``ir.metric_map`` run here.

All designs are the invented demo designs of ``designs/`` or invented here.
"""

import html.parser
import io
import math
from pathlib import Path

import numpy as np
import pytest
from numpy.testing import assert_allclose

import inertia_review as ir
from inertia_review.studies._cautions import STIFFNESS_CAUTION

DESIGNS = Path(__file__).resolve().parent.parent / "designs"
PNG_SIGNATURE = b"\x89PNG\r\n\x1a\n"   # PNG specification (ISO/IEC 15948), file signature
SPACING_M = 0.04
CAUTION_WORDS = ("CAUTION", "linear-elastic", "not a validation", "ISO 10218")


@pytest.fixture(autouse=True)
def _cleanup(close_figures):
    """The plot tests here draw through pyplot: close everything after each (tests/conftest.py)."""


@pytest.fixture(scope="module")
def task(kestrel_a):
    """The demo task, its region resampled coarsely (40 mm)."""
    t = kestrel_a.task
    r = t.region
    return ir.Task(ir.Rectangle(r.center_m, r.axes, r.size_m, SPACING_M),
                   accel_mps2=t.accel_mps2, payload_kg=t.payload_kg, approach=t.approach)


L1, L2, M1, M2, K1, K2 = 0.40, 0.30, 1.5, 0.9, 2500.0, 1200.0   # invented


def sprung_planar(springs=True):
    """Two joints about world z (a horizontal plane), uniform rods, joint springs only."""
    i1, i2 = M1 * L1**2 / 12, M2 * L2**2 / 12

    def actuator(k):
        return {"stiffness_Nm_per_rad": k} if springs else {}

    return ir.Arm.from_dict({
        "name": "sprung_planar" if springs else "rigid_planar", "format": 1,
        "joints": [
            {"axis": [0.0, 0.0, 1.0], "actuator": actuator(K1),
             "link": {"mass_kg": M1, "com_m": [L1 / 2, 0.0, 0.0],
                      "inertia_kgm2": [0.0, i1, i1, 0.0, 0.0, 0.0]}},
            {"xyz_m": [L1, 0.0, 0.0], "axis": [0.0, 0.0, 1.0], "actuator": actuator(K2),
             "link": {"mass_kg": M2, "com_m": [L2 / 2, 0.0, 0.0],
                      "inertia_kgm2": [0.0, i2, i2, 0.0, 0.0, 0.0]}},
        ],
        "tool": {"xyz_m": [L2, 0.0, 0.0]},
        "task": {"axes": [[1.0, 0.0, 0.0], [0.0, 1.0, 0.0]]},
    })


PLANAR_REGION = ir.Rectangle([0.40, 0.25, 0.0], [[1.0, 0.0, 0.0], [0.0, 1.0, 0.0]], [0.2, 0.2],
                             0.05)


def _type_point(probe, ds, iv, iu):
    probe.u_box.value = float(ds["u_m"].values[iu] * 1000.0)
    probe.v_box.value = float(ds["v_m"].values[iv] * 1000.0)


def _solved_point(ds):
    ok = np.argwhere(ds["status"].values == 0)
    assert ok.size
    return tuple(int(i) for i in ok[len(ok) // 3])


def _ellipse_stiffness(art):
    """In-plane stiffnesses [N/mm] (soft, stiff) and the soft axis angle read off the patch."""
    e = art.stiffness_ellipse
    semi = np.array([e.width, e.height]) / 2.0                  # mm
    return (art.stiffness_scale / semi) ** 2, e.angle


def _same_axis(angle_deg, vector):
    """|cos| of the angle between an axis at ``angle_deg`` and ``vector`` (signless)."""
    a = np.radians(angle_deg)
    v = np.asarray(vector, float) / np.linalg.norm(vector)
    return abs(np.cos(a) * v[0] + np.sin(a) * v[1])


# --------------------------------------------------------------------------
# plot function
# --------------------------------------------------------------------------
def test_plot_returns_artists_and_draws_a_figure(plt, kestrel_a):
    from matplotlib.lines import Line2D
    from matplotlib.patches import Ellipse

    from inertia_review import plots

    q = np.array([0.1, 0.8, -1.6])
    art = plots.plot_stiffness_ellipse(kestrel_a, q)
    assert isinstance(art, plots.StiffnessEllipseArtists)
    assert isinstance(art.stiffness_ellipse, Ellipse) and isinstance(art.mass_ellipse, Ellipse)
    assert art.stiffness_ellipse in art.ax.patches and art.mass_ellipse in art.ax.patches
    for line in (art.softest_line, art.heaviest_line, art.mode_line):
        assert isinstance(line, Line2D) and line in art.ax.lines
    assert art.sag_arrow is not None                     # gravity bends the tube links
    # the view holds both ellipses (fitted to the data)
    (x0, x1), (y0, y1) = art.ax.get_xlim(), art.ax.get_ylim()
    for patch in (art.stiffness_ellipse, art.mass_ellipse):
        r = 0.5 * max(patch.width, patch.height)
        assert x0 < -r and x1 > r and y0 < -r and y1 > r
    assert "[mm, drawing scale]" in art.ax.get_xlabel()
    from matplotlib.legend import Legend

    labels = [t.get_text() for leg in art.ax.figure.findobj(Legend) for t in leg.get_texts()]
    assert any("N/mm" in t for t in labels) and any("Hz" in t for t in labels)
    for word in CAUTION_WORDS:
        assert word in art.caution.get_text().replace("\n", " ")
    buf = io.BytesIO()
    art.ax.figure.savefig(buf, format="png")
    assert buf.getvalue().startswith(PNG_SIGNATURE)
    # the numbers drawn are the core's
    modes = ir.natural_frequencies(kestrel_a, q)
    assert art.f1_hz == modes.frequencies_hz[0]
    assert_allclose(art.sag_mm, 1e3 * ir.tool_deflection(kestrel_a, q), rtol=0, atol=0)


def test_plot_into_a_given_axes_makes_no_new_figure(plt, kestrel_a):
    from inertia_review import plots

    fig, ax = plt.subplots()
    art = plots.plot_stiffness_ellipse(kestrel_a, [0.1, 0.8, -1.6], ax=ax, mass=False)
    assert art.ax is ax and plt.get_fignums() == [fig.number]
    assert art.mass_ellipse is None and art.heaviest_line is None


def test_plot_of_a_rigid_design_raises_a_clear_error(plt):
    from inertia_review import plots

    with pytest.raises(ValueError, match="no joint stiffness_Nm_per_rad"):
        plots.plot_stiffness_ellipse(sprung_planar(springs=False), [0.3, 0.9])


# --------------------------------------------------------------------------
# probe
# --------------------------------------------------------------------------
def test_probe_stiffness_ellipse_agrees_with_eigh_of_tool_stiffness(irw, kestrel_a, task):
    panel = irw.MapPanel(kestrel_a, task)
    probe = irw.PointProbe(panel)
    iv, iu = _solved_point(panel.ds)
    _type_point(probe, panel.ds, iv, iu)
    q = panel.ds["q"].values[iv, iu]
    assert_allclose(probe.q, q, rtol=0, atol=0)
    # outside: the task stiffness (3 x 3 here, task axes = world axes), its shadow on the
    # drawing plane (x, z): inv(P K^-1 P^T), eigen-decomposed by numpy
    k_task = ir.tool_stiffness(kestrel_a, q)
    a = kestrel_a.task_axes
    p = np.array([[1.0, 0.0, 0.0], [0.0, 0.0, 1.0]])
    assert_allclose(probe.stiffness.plane_axes, p)
    k_plane = np.linalg.inv(p @ a.T @ np.linalg.inv(k_task) @ a @ p.T)
    vals, vecs = np.linalg.eigh(k_plane)                   # ascending [N/m]
    drawn, angle = _ellipse_stiffness(probe.stiffness)
    assert_allclose(drawn, vals / 1e3, rtol=1e-9)          # N/mm on screen
    assert _same_axis(angle, vecs[:, 0]) == pytest.approx(1.0, abs=1e-9)
    assert_allclose(probe.stiffness.plane_stiffness_N_per_mm, vals / 1e3, rtol=1e-9)
    # f1 and sag at the point, in the readout
    f1 = float(ir.natural_frequencies(kestrel_a, q).frequencies_hz[0])
    sag = 1e3 * float(np.linalg.norm(ir.tool_deflection(kestrel_a, q)))
    assert probe.f1_hz == pytest.approx(f1, rel=1e-12)
    assert probe.sag_mm == pytest.approx(sag, rel=1e-12)
    text = probe.stiffness_text.value
    assert f"{f1:.1f} Hz" in text and f"{sag:.4f} mm" in text and "N/mm" in text
    assert bytes(probe.stiffness_image.value).startswith(PNG_SIGNATURE)
    for word in CAUTION_WORDS:
        assert word in probe.caution.value


def test_probe_of_a_planar_arm_matches_the_hand_formula(irw):
    arm = sprung_planar()
    panel = irw.MapPanel(arm, PLANAR_REGION)
    probe = irw.PointProbe(panel)
    iv, iu = _solved_point(panel.ds)
    _type_point(probe, panel.ds, iv, iu)
    q1, q2 = probe.q
    s1, c1, s12, c12 = math.sin(q1), math.cos(q1), math.sin(q1 + q2), math.cos(q1 + q2)
    jac = np.array([[-L1 * s1 - L2 * s12, -L2 * s12], [L1 * c1 + L2 * c12, L2 * c12]])
    k_hand = np.linalg.inv(jac @ np.diag([1.0 / K1, 1.0 / K2]) @ jac.T)   # (J K^-1 J^T)^-1
    assert_allclose(ir.tool_stiffness(arm, probe.q), k_hand, rtol=1e-9)
    vals, vecs = np.linalg.eigh(k_hand)
    drawn, angle = _ellipse_stiffness(probe.stiffness)
    assert_allclose(drawn, vals / 1e3, rtol=1e-9)
    assert _same_axis(angle, vecs[:, 0]) == pytest.approx(1.0, abs=1e-9)
    # first mode: scipy's generalized eigensolver on K and M(q)
    from scipy.linalg import eigh

    w2, phi = eigh(np.diag([K1, K2]), arm.mass_matrix(probe.q))
    assert probe.f1_hz == pytest.approx(math.sqrt(w2[0]) / (2.0 * math.pi), rel=1e-9)
    motion = jac @ phi[:, 0]
    motion /= np.linalg.norm(motion)
    assert abs(float(np.dot(probe.stiffness.mode_direction[:2], motion))) == pytest.approx(
        1.0, abs=1e-9)
    # gravity is normal to the plane of motion: no joint torque, so the springs do not sag
    assert probe.sag_mm == 0.0 and probe.stiffness.sag_arrow is None


def test_probe_of_a_rigid_design_says_why_no_stiffness_is_shown(irw):
    panel = irw.MapPanel(sprung_planar(springs=False), PLANAR_REGION)
    probe = irw.PointProbe(panel)
    assert probe.q is not None
    assert probe.stiffness is None and probe.f1_hz is None and probe.sag_mm is None
    assert "not shown" in probe.stiffness_text.value
    assert "stiffness_Nm_per_rad" in probe.stiffness_text.value
    assert not probe.stiffness_image.value
    assert bytes(probe.ellipse_image.value).startswith(PNG_SIGNATURE)   # mass ellipse still


# --------------------------------------------------------------------------
# datasheet cards
# --------------------------------------------------------------------------
class _Cards(html.parser.HTMLParser):
    """{design: {field: cell text}} from the cards' data-design / data-field attributes."""

    def __init__(self):
        super().__init__()
        self.cards, self._design, self._field = {}, None, None

    def handle_starttag(self, tag, attrs):
        attrs = dict(attrs)
        if "data-design" in attrs:
            self._design = attrs["data-design"]
            self.cards[self._design] = {}
        if "data-field" in attrs:
            self._field = attrs["data-field"]
            self.cards[self._design][self._field] = ""

    def handle_endtag(self, tag):
        if tag == "td":
            self._field = None

    def handle_data(self, data):
        if self._field is not None:
            self.cards[self._design][self._field] += data


def _cards(text):
    parser = _Cards()
    parser.feed(text)
    return parser.cards


# field -> SI-to-screen factor on the card (m -> mm)
SCREEN = {"payload_rated_kg": 1.0, "reach_m": 1e3, "tool_speed_max_mps": 1.0,
          "f1_lowest_hz": 1.0, "sag_largest_m": 1e3}


def _same_sheet(a, b):
    """Datasheets equal field by field (NaN, a value not defined, equal to NaN)."""
    import dataclasses

    for f in dataclasses.fields(a):
        x, y = getattr(a, f.name), getattr(b, f.name)
        if isinstance(x, float):
            assert np.array_equal(x, y, equal_nan=True), (f.name, x, y)
        else:
            assert x == y, (f.name, x, y)
    return True


def _check_card(cells, sheet):
    assert set(cells) == set(SCREEN)
    for field, factor in SCREEN.items():
        value = getattr(sheet, field)
        cell = cells[field].replace("★", "").strip()
        if np.isfinite(value):
            shown = float(cell)
            digits = len(cell.split(".")[1]) if "." in cell else 0
            assert shown == pytest.approx(value * factor, abs=0.51 * 10.0 ** -digits), field
        else:
            assert cell.startswith("n/a"), (field, cell)


def test_review_app_card_equals_the_datasheet_and_follows_a_slider(irw, kestrel_a, task):
    app = irw.ReviewApp(kestrel_a, task)
    sheet = ir.datasheet(kestrel_a, ir.metric_map(kestrel_a, task))
    assert _same_sheet(app.datasheet, sheet)
    _check_card(_cards(app.card.value)["kestrel_a"], sheet)
    assert _cards(app.card.value)["kestrel_a"]["tool_speed_max_mps"].startswith("n/a")
    for word in CAUTION_WORDS:
        assert word in app.card.value
    # a slider changes the design: the card is recomputed from the new design's map
    app.controls.set_value("joints[shoulder].link_length_m", 0.40)
    longer = kestrel_a.with_values({"joints[shoulder].link_length_m": 0.40})
    expected = ir.datasheet(longer, ir.metric_map(longer, task))
    assert app.datasheet.f1_lowest_hz != sheet.f1_lowest_hz
    assert app.datasheet.sag_largest_m != sheet.sag_largest_m
    for field in SCREEN:
        assert getattr(app.datasheet, field) == pytest.approx(getattr(expected, field),
                                                              rel=1e-6, nan_ok=True), field
    _check_card(_cards(app.card.value)[app.datasheet.design], expected)


def test_board_shows_one_card_per_design_with_the_best_marked(irw, kestrel_a, kestrel_b, task):
    board = irw.ComparisonBoard([kestrel_a, kestrel_b], task)
    sheets = [ir.datasheet(a, ir.metric_map(a, task)) for a in (kestrel_a, kestrel_b)]
    assert len(board.sheets) == 2 and all(map(_same_sheet, board.sheets, sheets))
    cards = _cards(board.cards.value)
    assert list(cards) == ["kestrel_a", "kestrel_b"]
    for sheet in sheets:
        _check_card(cards[sheet.design], sheet)
    rules = {"payload_rated_kg": max, "f1_lowest_hz": max, "sag_largest_m": min}
    for field, pick in rules.items():
        values = {s.design: getattr(s, field) for s in sheets}
        assert len(set(values.values())) == 2, field        # the demo designs differ here
        best = pick(values, key=values.get)
        for design, cells in cards.items():
            assert cells[field].startswith("★") == (design == best), (field, design)
    for design, cells in cards.items():                    # reach is not ranked, n/a never best
        assert not cells["reach_m"].startswith("★")
        assert not cells["tool_speed_max_mps"].startswith("★")
    for word in CAUTION_WORDS:
        assert word in board.cards.value


def test_board_cards_follow_a_change_of_designs(irw, kestrel_a, kestrel_b, task):
    board = irw.ComparisonBoard([kestrel_a, kestrel_b], task)
    heavier = kestrel_a.with_values({"tool.payload_kg": 1.2})
    spec = heavier.to_dict()
    spec["name"] = "kestrel_a_heavy"
    heavier = ir.Arm.from_dict(spec)
    board.add(heavier)
    assert [s.design for s in board.sheets] == ["kestrel_a", "kestrel_b", "kestrel_a_heavy"]
    expected = ir.datasheet(heavier, ir.metric_map(heavier, task))
    _check_card(_cards(board.cards.value)["kestrel_a_heavy"], expected)
    assert expected.sag_largest_m > board.sheets[0].sag_largest_m   # more payload, more sag


@pytest.fixture
def ipython(tmp_path, monkeypatch):
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


def test_snapshot_of_the_review_app_has_the_stiffness_image_sheet_and_caution(irw, kestrel_a,
                                                                             task, ipython):
    from IPython.utils.capture import capture_output

    app = irw.ReviewApp(kestrel_a, task)
    with capture_output() as captured:
        irw.snapshot(app)
    pngs = [o.data["image/png"] for o in captured.outputs if "image/png" in o.data]
    assert len(pngs) == 4                 # map, mass ellipse, stiffness ellipse, torque bars
    cards = [o.data["text/html"] for o in captured.outputs if "text/html" in o.data]
    assert cards == [irw.datasheet_cards_html([app.datasheet])]     # the live card, once
    assert f">{app.datasheet.payload_rated_kg:.3f}<" in cards[0]          # kg, 3 decimals
    assert f">{1e3 * app.datasheet.sag_largest_m:.4f}<" in cards[0]       # mm, 4 decimals
    import html as _html
    assert " ".join(STIFFNESS_CAUTION.split()) in " ".join(_html.unescape(cards[0]).split())
