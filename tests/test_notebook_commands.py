"""Baseline tables, notebook rebaselining and reports, and the command line.

What is checked, and against what:
- ``ir.baseline_table``: the same text for the same design computed twice, a fixed number
  of decimals per score, every printed number equal to ``ir.design_scores`` of the map
  rounded to that many decimals, and a clear error naming the known scores;
- ``inertia_review.review._notebooks.rebaseline`` and ``write_report`` on small notebooks written
  here into ``tmp_path`` and executed by a real kernel (the "python3" kernelspec of
  ipykernel, which jupyter_client starts with this interpreter, ``sys.executable``):
  the changed checked cell is reported, ``accept=False`` writes nothing, ``accept=True``
  saves the new output, unchecked cells are not compared, the HTML report embeds the
  figure as a data URI;
- the ``inertia-review`` command (``inertia_review.review._cli.main``): ``check`` prints OK for
  the demo designs and every field path of a broken one (exit status 1), ``summary``
  prints the table and the caution. The moving mass of kestrel_a is redone here by hand
  from its design file: tube mass m = rho pi (R^2 - r^2) L (Machinery's Handbook, 31st
  ed., "Radius of Gyration" table, references.md item 7 [C]) with 6061 aluminium at
  2700 kg/m^3 (Aluminum Association typical value, references.md item 7 [C]).

The designs are the invented demo designs of ``designs/`` and files written here
(invented data).
"""

import math
import re
import sys
from pathlib import Path

import nbformat
import pytest
from nbformat.v4 import new_code_cell, new_markdown_cell, new_notebook

import inertia_review as ir
from inertia_review.review import _notebooks
from inertia_review.review._cli import main

DESIGNS = Path(__file__).resolve().parent.parent / "designs"

# decimals the baseline table promises (its docstring): dimensionless scores 4,
# accelerations 3, masses 4, frequencies 2, sag 7, payloads 3
DECIMALS = {"accel_capability_min": 3, "moving_mass_kg": 4, "f1_lowest_hz": 2,
            "sag_largest_m": 7, "payload_rated_kg": 3}


@pytest.fixture(scope="module")
def coarse_task(kestrel_a):
    t = kestrel_a.task
    r = t.region
    return ir.Task(ir.Rectangle(r.center_m, r.axes, r.size_m, 0.04), accel_mps2=t.accel_mps2,
                   payload_kg=t.payload_kg, approach=t.approach)


@pytest.fixture(scope="module")
def kestrel_map(kestrel_a, coarse_task):
    return ir.metric_map(kestrel_a, coarse_task)


def _unrated(arm):
    spec = arm.to_dict()
    for joint in spec["joints"]:
        joint.pop("actuator", None)
    spec["name"] = "kestrel_a_unrated"
    return ir.Arm.from_dict(spec)


def _table_cells(text):
    """{(design, score): cell text} of a baseline table (one line per design and score)."""
    cells = {}
    for line in text.splitlines():
        m = re.fullmatch(r"(\S+)\s+(\w+) \[[^\]]*\]\s+(\S(?:.*\S)?)", line)
        assert m, f"unexpected baseline line: {line!r}"
        cells[(m.group(1), m.group(2))] = m.group(3)
    return cells


# --------------------------------------------------------------------------
# baseline_table
# --------------------------------------------------------------------------
def test_baseline_table_is_stable(kestrel_a, coarse_task, kestrel_map):
    again = ir.metric_map(kestrel_a, coarse_task)          # recomputed, not the same object
    assert again is not kestrel_map
    first = ir.baseline_table([kestrel_map])
    assert ir.baseline_table([again]) == first
    assert ir.baseline_table([kestrel_map]) == first


def test_baseline_table_has_fixed_precision_and_the_map_scores(kestrel_map):
    text = ir.baseline_table([kestrel_map])
    cells = _table_cells(text)
    scores = ir.design_scores(kestrel_map)
    assert {score for _, score in cells} == set(ir.SCORE_COLUMNS)
    for (design, score), cell in cells.items():
        assert design == "kestrel_a"
        value = scores[score]
        if isinstance(value, str):
            assert cell == value
            continue
        decimals = DECIMALS.get(score, 4)
        assert re.fullmatch(rf"-?\d+\.\d{{{decimals}}}", cell), (score, cell)
        assert abs(float(cell) - value) <= 0.5 * 10.0 ** -decimals + 1e-12, (score, cell, value)


def test_baseline_table_decimals_and_columns(kestrel_map):
    text = ir.baseline_table([kestrel_map], decimals=2, columns=["gci", "moving_mass_kg"])
    cells = _table_cells(text)
    assert list(cells) == [("kestrel_a", "gci"), ("kestrel_a", "moving_mass_kg")]
    assert re.fullmatch(r"\d\.\d{2}", cells[("kestrel_a", "gci")])
    assert re.fullmatch(r"\d\.\d{4}", cells[("kestrel_a", "moving_mass_kg")])   # masses keep 4


def test_baseline_table_marks_missing_ratings(kestrel_a, coarse_task, kestrel_map):
    unrated_map = ir.metric_map(_unrated(kestrel_a), coarse_task)
    cells = _table_cells(ir.baseline_table([kestrel_map, unrated_map]))
    assert cells[("kestrel_a_unrated", "headroom_worst")] == "n/a"
    assert cells[("kestrel_a_unrated", "accel_capability_min")] == "n/a"
    assert cells[("kestrel_a_unrated", "headroom_worst_joint")] == "not rated"
    assert cells[("kestrel_a", "headroom_worst")] != "n/a"


def test_baseline_table_rejects_an_unknown_score_with_the_list(kestrel_map):
    with pytest.raises(KeyError, match="No score named 'gcI'") as info:
        ir.baseline_table([kestrel_map], columns=["gci", "gcI"])
    for name in ir.SCORE_COLUMNS:
        assert name in str(info.value)


# --------------------------------------------------------------------------
# rebaseline and write_report (a real kernel)
# --------------------------------------------------------------------------
def _write_notebook(path, cells):
    nb = new_notebook(cells=cells)
    nb.metadata["kernelspec"] = {"name": "python3", "display_name": "Python 3",
                                 "language": "python"}
    nbformat.write(nb, path)


def _cell_text(nb, index):
    code = [c for c in nb.cells if c.cell_type == "code"]
    return "".join(o.get("text", "") for o in code[index].outputs if o.output_type == "stream")


def test_rebaseline_reports_changed_checked_output(tmp_path):
    (tmp_path / "value.txt").write_text("1.2500\n")
    (tmp_path / "note.txt").write_text("first\n")
    path = tmp_path / "tiny.ipynb"
    _write_notebook(path, [
        new_markdown_cell("A tiny review notebook (test data)."),
        new_code_cell("import sys\nfrom pathlib import Path\nprint(sys.prefix)\n"
                      "print(Path('note.txt').read_text().strip())"),            # not checked
        new_code_cell("# NBVAL_CHECK_OUTPUT\nprint(Path('value.txt').read_text().strip())"),
    ])

    # first run: no accepted output yet, so the checked cell shows as new; accept it
    lines = []
    assert _notebooks.rebaseline(path, accept=True, stream=lines.append) == [1]
    saved = nbformat.read(path, as_version=4)
    assert _cell_text(saved, 1) == "1.2500\n"
    prefix, note = _cell_text(saved, 0).splitlines()
    assert prefix == sys.prefix and note == "first"      # the kernel ran in this environment
    # executed without per-cell timing metadata (nbclient record_timing=False): clean diffs
    assert [c.metadata.get("execution") for c in saved.cells] == [None] * len(saved.cells)
    accepted_bytes = path.read_bytes()

    # both files change; only the checked cell is compared; a dry run writes nothing
    (tmp_path / "value.txt").write_text("2.5000\n")
    (tmp_path / "note.txt").write_text("second\n")
    lines = []
    changed = _notebooks.rebaseline(path, accept=False, stream=lines.append)
    assert changed == [1]
    text = "\n".join(lines)
    assert "cell 1" in text and "-1.2500" in text and "+2.5000" in text
    assert "first" not in text and "second" not in text
    assert path.read_bytes() == accepted_bytes

    # accept: the new output is saved
    lines = []
    assert _notebooks.rebaseline(path, accept=True, stream=lines.append) == [1]
    saved = nbformat.read(path, as_version=4)
    assert _cell_text(saved, 1) == "2.5000\n"
    assert any("saved" in line for line in lines)

    # nothing changed since: the command's dry run says so and exits 0
    before = path.read_bytes()
    assert main(["rebaseline", "--dry-run", str(path)]) == 0
    assert path.read_bytes() == before


def test_rebaseline_dry_run_command_fails_on_a_change(tmp_path, capsys):
    (tmp_path / "value.txt").write_text("7\n")
    path = tmp_path / "one.ipynb"
    _write_notebook(path, [new_code_cell(
        "# NBVAL_CHECK_OUTPUT\nprint(open('value.txt').read().strip())")])
    before = path.read_bytes()                    # never executed: no accepted output
    assert main(["rebaseline", "--dry-run", str(path)]) == 1
    assert path.read_bytes() == before
    assert "+7" in capsys.readouterr().out


def test_write_report_embeds_text_and_figure(tmp_path):
    path = tmp_path / "report.ipynb"
    _write_notebook(path, [
        new_markdown_cell("# Report test (invented numbers)"),
        new_code_cell("print('report marker 42.125 kg')"),
        new_code_cell("%matplotlib inline\nimport matplotlib.pyplot as plt\n"
                      "fig, ax = plt.subplots()\nax.plot([0, 1, 2], [0, 1, 4])\nplt.show()"),
    ])
    out = _notebooks.write_report(path, tmp_path / "report.html")
    assert Path(out) == tmp_path / "report.html"
    page = (tmp_path / "report.html").read_text(encoding="utf-8")
    assert "report marker 42.125 kg" in page
    images = re.findall(r"data:image/png;base64,([A-Za-z0-9+/=]{200,})", page)
    assert images, "no embedded PNG image in the report"
    import base64

    assert base64.b64decode(images[0]).startswith(b"\x89PNG\r\n\x1a\n")
    assert nbformat.read(path, as_version=4).cells[1].outputs == []   # the source is untouched


# --------------------------------------------------------------------------
# the command line
# --------------------------------------------------------------------------
@pytest.mark.parametrize("design", sorted(p.name for p in DESIGNS.glob("*.toml")))
def test_check_accepts_the_demo_designs(design, capsys):
    assert main(["check", str(DESIGNS / design)]) == 0
    out = capsys.readouterr().out
    assert f"{design}: OK" in out


def test_check_states_the_moving_mass_of_kestrel_a(capsys):
    # by hand from designs/kestrel_a.toml (see the module docstring for the sources)
    def tube(length, outer_d, wall, rho=2700.0):
        big, small = outer_d / 2, outer_d / 2 - wall
        return rho * math.pi * (big ** 2 - small ** 2) * length

    moving = (1.8 + 0.9                          # yaw link and its point mass
              + tube(0.35, 0.05, 0.003) + 0.7    # shoulder tube and elbow motor
              + tube(0.30, 0.04, 0.0025) + 0.4   # elbow tube and gripper
              + 0.3)                             # payload
    assert main(["check", str(DESIGNS / "kestrel_a.toml")]) == 0
    out = capsys.readouterr().out
    assert f"moving mass {moving:.3f} kg" in out
    assert "3 of 3 joints rated" in out


BROKEN = """\
name = "broken_demo"
format = 1

[[joints]]
name = "shoulder"
axis = [0.0, 0.0, 1.0]
[joints.link]
mass_kg = -2.0
com_m = [0.1, 0.0]
inertia_kgm2 = [0.001, 0.001, 0.001, 0.0, 0.0, 0.0]
colour = "red"

[[joints]]
name = "elbow"
xyz_m = [0.3, 0.0, 0.0]
axis = [0.0, 0.0, 0.0]
[joints.link]
mass_kg = 1.0
com_m = [0.1, 0.0, 0.0]
inertia_kgm2 = [0.001, 0.001, 0.001, 0.0, 0.0, 0.0]
[joints.actuator]
peak_torque_Nm = -5.0
"""


def test_check_prints_every_problem_of_a_broken_design(tmp_path, capsys):
    broken = tmp_path / "broken_demo.toml"
    broken.write_text(BROKEN)
    good = DESIGNS / "sorter_planar.toml"
    assert main(["check", str(good), str(broken)]) == 1
    out = capsys.readouterr().out
    assert f"{good}: OK" in out
    assert f"{broken}: OK" not in out
    for field in ("joints[0].link.mass_kg", "joints[0].link.com_m", "joints[0].link.colour",
                  "joints[1].axis", "joints[1].actuator.peak_torque_Nm"):
        assert field in out, f"{field} missing from:\n{out}"
    assert re.search(r"broken_demo.*has \d+ problems", out)


def test_summary_prints_the_table_and_the_caution(capsys):
    design = DESIGNS / "kestrel_a.toml"
    assert main(["summary", str(design), "--samples", "300", "--accel", "2.0"]) == 0
    out = capsys.readouterr().out
    assert "300 configurations per design" in out
    assert "kestrel_a" in out
    for row in ("moving mass [kg]", "isotropy worst", "mass ratio worst", "limiting joint",
                "accel. capability"):
        assert row in out, row
    assert re.search(r"moving mass \[kg\]\s+4\.757\b", out)     # hand value above: 4.757 kg
    for phrase in ("CAUTION", "design-stage estimates", "not a validation", "ISO 10218"):
        assert phrase in out


def test_summary_reports_a_broken_design_and_fails(tmp_path, capsys):
    broken = tmp_path / "broken_demo.toml"
    broken.write_text(BROKEN)
    assert main(["summary", str(broken), "--samples", "50"]) == 1
    captured = capsys.readouterr()
    assert "joints[0].link.mass_kg" in captured.err


# --------------------------------------------------------------------------
# the compact scores table for reviewers
# --------------------------------------------------------------------------
def test_scores_view_one_row_per_design_units_and_best_marked(kestrel_a, coarse_task):
    import numpy as np

    other = ir.load_design(DESIGNS / "kestrel_b.toml")
    maps = [ir.metric_map(a, coarse_task) for a in (kestrel_a, other)]
    view = ir.scores_view(maps)
    table = ir.scores_table(maps)
    assert list(view.data.index) == ["kestrel_a", "kestrel_b"]
    assert list(view.data.columns) == list(ir.SCORE_COLUMNS)
    html = view.to_html()
    for header in ("gci [-]", "accel capability min [m/s²]", "moving mass [kg]"):
        assert header in html, header
    # the best design of each score, from the scores themselves (higher is better except
    # moving mass, as the board's rule says); marked bold with a star
    for score, higher in (("gci", True), ("headroom_worst", True), ("moving_mass_kg", False)):
        values = table[score]
        expected = values.idxmax() if higher else values.idxmin()
        assert view.best_[score] == [expected], score
    assert "headroom_worst_joint" not in view.best_
    # shown numbers are the baseline table's fixed-precision cells
    cells = _table_cells(ir.baseline_table(maps))
    for (design, score), text in cells.items():
        if score in view.best_ and design in view.best_[score]:
            text = f"★ {text}"
        assert f">{text}</td>" in html, (design, score, text)
    assert html.count(">★ ") == sum(len(v) for v in view.best_.values())
    assert "font-weight: bold" in html and "not a validation" in html
    assert ir.scores_view(maps).to_html() == html, "same HTML on every run"
    with pytest.raises(KeyError, match="No score named 'speed'"):
        ir.scores_view(maps, columns=["speed"])
    assert np.isfinite(table["gci"]).all()
