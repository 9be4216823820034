"""Screens that show contact speeds: the caution is always there, the numbers are the core's."""

import matplotlib

matplotlib.use("Agg")

import numpy as np  # noqa: E402
import pytest  # noqa: E402

import inertia_review as ir  # noqa: E402
from inertia_review import plots  # noqa: E402
from inertia_review.studies._cautions import CONTACT_CAUTION  # noqa: E402
from inertia_review.widgets import ContactMapPanel  # noqa: E402


# a 0.5 cm^2 contact: below the hand's crossover area 280 / 400 = 0.7 cm^2 (Table A.2 values
# via references.md item 6 [S]), so the pressure route governs the hand maps
AREA = 0.5


@pytest.fixture(scope="module")
def arm_and_region():
    arm = ir.load_design("designs/kestrel_a.toml")
    r = arm.task.region
    return arm, ir.Rectangle(r.center_m, r.axes, r.size_m, 0.04)


def test_contact_plot_shows_the_values_and_the_caution(arm_and_region):
    arm, region = arm_and_region
    ds = ir.contact_speed_map(arm, region, "hand", contact_area_cm2=AREA, direction=(0.0, 0.0, -1.0))
    art = plots.plot_contact_speed_map(ds)
    shown = np.ma.masked_invalid(art.map.mesh.get_array())
    ok = np.isin(ds["status"].values, ir.SOLVED)
    # the mesh is the dataset's permissible speed [m/s] where solved (screen unit m/s, factor 1)
    np.testing.assert_allclose(shown.filled(np.nan)[ok], ds["permissible_speed"].values[ok])
    assert np.all(shown.mask[~ok])
    assert "validation" in art.caution.get_text() and "ISO 12100" in art.caution.get_text()
    assert art.map.colorbar.ax.get_ylabel().endswith("[m/s]")
    assert "pressure route, Thenar eminence, A = 0.5 cm²" in art.map.ax.get_title()
    import matplotlib.pyplot as plt
    plt.close("all")


def test_contact_panel_caution_and_core_numbers(arm_and_region):
    arm, region = arm_and_region
    panel = ContactMapPanel(arm, region, body_region="hand", contact_area_cm2=AREA, direction=(0.0, 0.0, -1.0))
    assert CONTACT_CAUTION[:60] in panel.readout.value.replace("&#x27;", "'")
    ref = ir.contact_speed_map(arm, region, "hand", contact_area_cm2=AREA, direction=(0.0, 0.0, -1.0))
    ok = np.isin(ref["status"].values, ir.SOLVED)
    assert panel.scores["speed_min_mps"] == pytest.approx(float(ref["permissible_speed"].values[ok].min()),
                                                          rel=1e-9)
    # a different body region recomputes with that region's values (ISO/TS 15066 Table A.2/A.3
    # as shipped in inertia_review/data/body_regions.toml)
    panel.body_choice.value = "abdomen"
    ref2 = ir.contact_speed_map(arm, region, "abdomen", contact_area_cm2=AREA, direction=(0.0, 0.0, -1.0))
    assert panel.scores["speed_min_mps"] == pytest.approx(
        float(ref2["permissible_speed"].values[ok].min()), rel=1e-9)
    assert panel.scores["speed_min_mps"] != pytest.approx(float(ref["permissible_speed"].values[ok].min()))
    assert "validation" in panel.readout.value and panel.error == ""
    assert panel.scores["governing_route"] == ref2.attrs["governing_route"] == "pressure"
    assert "<b>pressure</b> (body area Abdominal muscle, contact area 0.5 cm²)" in panel.readout.value
    with pytest.raises(ValueError, match=r"`contact_area_cm2` is required"):
        ContactMapPanel(arm, region, body_region="hand")


def test_cycle_panel_shows_the_core_review_and_the_caution():
    from inertia_review.widgets import CyclePanel

    arms = [ir.load_design(f"designs/kestrel_{c}.toml") for c in "ab"]
    cycle = ir.design_cycles(arms[0])[0]
    panel = CyclePanel(arms[0], sample_rate_hz=200.0)
    ref = ir.cycle_torques(arms[0], cycle, sample_rate_hz=200.0)
    got = panel.results[0]
    np.testing.assert_allclose(got.rms_torque_Nm, ref.rms_torque_Nm, rtol=1e-12)
    np.testing.assert_allclose(got.peak_torque_Nm, ref.peak_torque_Nm, rtol=1e-12)
    assert panel.torque_image.value[:8] == b"\x89PNG\r\n\x1a\n"      # PNG signature
    assert "validation" in panel.table.value and "ISO 12100" in panel.table.value
    # side by side: one result per design, same cycle, and the per-design numbers differ
    panel.arms = arms
    assert [r.design_name for r in panel.results] == ["kestrel_a", "kestrel_b"]
    assert not np.allclose(panel.results[0].rms_torque_Nm, panel.results[1].rms_torque_Nm)
    assert panel.torque_image.layout.display == "none" and panel.error == ""


def test_snapshot_of_safety_panels_prints_their_cautions(arm_and_region):
    from IPython.core.interactiveshell import InteractiveShell
    from IPython.utils.capture import capture_output

    from inertia_review.studies._cautions import TORQUE_CAUTION
    from inertia_review.widgets import CyclePanel, snapshot

    InteractiveShell.instance()
    arm, region = arm_and_region
    contact = ContactMapPanel(arm, region, body_region="hand", contact_area_cm2=AREA, direction=(0.0, 0.0, -1.0))
    assert contact.error == ""
    cycle = CyclePanel(arm, sample_rate_hz=100.0)
    with capture_output() as out_contact:
        snapshot(contact)
    with capture_output() as out_cycle:
        snapshot(cycle)
    def flat(text):          # the snapshot wraps the caution at 100 columns
        return " ".join(text.split())

    assert flat(CONTACT_CAUTION) in flat(out_contact.stdout)
    assert "permissible contact speed" in out_contact.stdout
    assert flat(TORQUE_CAUTION) in flat(out_cycle.stdout) and "limiting joint" in out_cycle.stdout
    assert sum("image/png" in o.data for o in out_contact.outputs + out_cycle.outputs) >= 3


def test_contact_board_follows_the_comparison_board(arm_and_region):
    from inertia_review.widgets import ComparisonBoard, ContactBoard

    arm, region = arm_and_region
    other = ir.load_design("designs/kestrel_b.toml")
    board = ComparisonBoard([arm], region)
    contact = ContactBoard([arm], region, contact_area_cm2=AREA, direction=(0.0, 0.0, -1.0))
    contact.follow(board)
    board.add(other)
    assert [ds.attrs["design"] for ds in contact.maps] == ["kestrel_a", "kestrel_b"]
    ref = ir.contact_speed_map(other, region, "hand", contact_area_cm2=AREA, direction=(0.0, 0.0, -1.0))
    ok = np.isin(ref["status"].values, ir.SOLVED)
    np.testing.assert_allclose(contact.maps[1]["permissible_speed"].values[ok],
                               ref["permissible_speed"].values[ok], rtol=1e-9)
    assert f"{float(ref['permissible_speed'].values[ok].min()):.3f}" in contact.table.value
    assert "validation" in contact.table.value and contact.error == ""
    assert "governing route: <b>pressure</b> (body area Thenar eminence" in contact.table.value
