"""Every figure appears in the notebook cell that draws it, exactly once.

Under the inline backend of a Jupyter kernel a figure is shown when the cell that made
it ends, but only if matplotlib is in interactive mode when the figure is made. These
tests run real kernels (nbclient, the "python3" kernelspec of ipykernel, started with
this interpreter) and read the outputs a reader would see:

- (a) each review notebook of ``notebooks/``, executed fresh: every code cell that calls
  a ``plots.`` function shows at least one ``image/png`` (exactly one per call when the
  cell has no loop), no cell shows the same image twice, and cells that only compute or
  show a live widget show no image (widgets draw off-screen; nothing leaks);
- (b) a notebook generated here that calls every public plot function of
  ``inertia_review.plots.__all__`` (and both Display classes) in its own cell, in a
  shuffled (seeded) order, with and without a trailing ``;``: exactly one image per
  cell, and without ``;`` the returned artists object is the cell's result.

The rule that a figure made in interactive mode is shown once at the end of the cell is
the documented behaviour of the matplotlib-inline backend (common practice, no source
beyond its documentation). Designs are the invented demo designs of ``designs/``.
"""

import random
import re
from pathlib import Path

import nbformat
import pytest
from nbformat.v4 import new_code_cell, new_notebook

pytestmark = pytest.mark.notebook_run

ROOT = Path(__file__).resolve().parent.parent
NOTEBOOKS = sorted((ROOT / "notebooks").glob("*.ipynb"))
WIDGET_VIEW = "application/vnd.jupyter.widget-view+json"


def _execute(nb, cwd):
    from nbclient import NotebookClient

    NotebookClient(nb, timeout=600, kernel_name="python3", record_timing=False,
                   resources={"metadata": {"path": str(cwd)}}).execute()
    return nb


def _images(cell):
    return [o["data"]["image/png"] for o in cell.get("outputs", [])
            if "data" in o and "image/png" in o["data"]]


def _fresh(path):
    """The notebook's cells with their saved outputs removed (nothing carried over)."""
    nb = nbformat.read(path, as_version=4)
    for cell in nb.cells:
        if cell.cell_type == "code":
            cell.outputs, cell.execution_count = [], None
    return nb


@pytest.fixture(scope="module")
def executed():
    """Every review notebook executed once per test session, in its own folder."""
    return {p.name: _execute(_fresh(p), p.parent) for p in NOTEBOOKS}


def test_there_are_review_notebooks():
    assert len(NOTEBOOKS) >= 5, [p.name for p in NOTEBOOKS]


@pytest.mark.parametrize("name", [p.name for p in NOTEBOOKS])
def test_every_plot_cell_shows_its_figures_once(executed, name):
    nb = executed[name]
    problems = []
    for i, cell in enumerate(nb.cells):
        if cell.cell_type != "code":
            continue
        errors = [o for o in cell.outputs if o.output_type == "error"]
        assert not errors, f"{name} cell {i} raised {errors[0].get('ename')}"
        images = _images(cell)
        calls = len(re.findall(r"\bplots\.plot_\w+\(", cell.source))
        draws = calls or "snapshot(" in cell.source
        if len(set(images)) != len(images):
            problems.append(f"cell {i}: the same figure shown twice")
        if calls and "for " not in cell.source and len(images) != calls:
            problems.append(f"cell {i}: {calls} plot call(s) but {len(images)} image(s)")
        elif draws and not images:
            problems.append(f"cell {i}: draws but shows no image")
        elif not draws and images:
            problems.append(f"cell {i}: shows {len(images)} image(s) it did not draw (leak)")
        if any("data" in o and WIDGET_VIEW in o["data"] for o in cell.outputs) and images:
            problems.append(f"cell {i}: a live widget cell shows a static image (leak)")
    assert not problems, f"{name}:\n" + "\n".join(problems)


def test_review_notebooks_draw_figures(executed):
    # the check above must have something to check: the plot cells the issue lists exist
    sources = "\n".join(c.source for nb in executed.values() for c in nb.cells)
    for call in ("plot_headroom_map", "plot_ellipse_field", "plot_small_multiples",
                 "plot_difference_map", "plot_tradeoff", "plot_cycle_torques",
                 "plot_contact_speed_map"):
        assert f"plots.{call}(" in sources, call


# --------------------------------------------------------------------------
# (b) every public plot function, one per cell, shuffled
# --------------------------------------------------------------------------
SETUP = f"""\
import numpy as np
import matplotlib.pyplot as plt
import inertia_review as ir
from inertia_review import plots
from inertia_review.widgets import ComparisonBoard, snapshot

arms = [ir.load_design({str(ROOT / 'designs')!r} + f"/kestrel_{{c}}.toml") for c in "ab"]
arm = arms[0]
r = arm.task.region
region = ir.Rectangle(r.center_m, r.axes, r.size_m, 0.05)
maps = [ir.metric_map(a, region, accel_mps2=2.0) for a in arms]
ds = maps[0]
res = ir.Sweep(arm, vary={{"derived.link_ratio": [0.8, 1.2], "mount.rpy_deg[1]": [0.0, 20.0]}},
               region=ir.Rectangle(r.center_m, r.axes, r.size_m, 0.08), progress=False).run()
cycle = ir.cycle_torques(arm, ir.design_cycles(arm)[0], sample_rate_hz=50.0)
contact = ir.contact_speed_map(arm, region, "hand", contact_area_cm2=1.0, direction=(0.0, 0.0, -1.0))
q = np.radians([10.0, 30.0, -60.0])
tornado = ir.one_at_a_time(arm, {{"derived.link_ratio": (0.8, 1.2), "tool.payload_kg": (0.0, 0.5)}},
                           "gci", region=ir.Rectangle(r.center_m, r.axes, r.size_m, 0.08))
planar = ir.planar_chain([0.4, 0.3], [1.0, 0.8], plane_tilt_deg=90.0, name="pareto")
search = ir.DesignSearch(planar, {{"joints[0].link_length_m": (0.2, 0.6),
                                   "joints[0].link.mass_kg": (0.5, 1.5)}},
                         ["max:gci", "min:moving_mass_kg"], region=ir.PointSet(((0.4, 0.2, 0.0),)),
                         generations=2, population=8, progress=False).run(random_state=0)
"""

#: one call per public plot function; the result type is what the cell returns
CALLS = {
    "plot_metric_map": ('plots.plot_metric_map(ds, "mass_ratio", arm=arm, probe=(0.0, 0.0))',
                        "MapArtists"),
    "plot_ellipse_field": ("plots.plot_ellipse_field(ds, arm, every=3)", "EllipseField"),
    "plot_principal_directions": ("plots.plot_principal_directions(ds, every=3)",
                                  "PrincipalArrows"),
    "plot_small_multiples": ('plots.plot_small_multiples(maps, "min_margin")', "SmallMultiples"),
    "plot_difference_map": ("plots.plot_difference_map(maps[1], maps[0])", "MapArtists"),
    "plot_headroom_map": ("plots.plot_headroom_map(ds)", "HeadroomArtists"),
    "plot_tradeoff": ('plots.plot_tradeoff(res, "gci")', "TradeoffArtists"),
    "plot_tornado": ("plots.plot_tornado(tornado)", "TornadoArtists"),
    "plot_pareto": ('plots.plot_pareto(search, "moving_mass_kg", "gci")', "ParetoArtists"),
    "plot_cycle_torques": ("plots.plot_cycle_torques(cycle)", "CycleTorqueArtists"),
    "plot_cycle_utilisation": ("plots.plot_cycle_utilisation(cycle)", "CycleUtilisationArtists"),
    "plot_contact_speed_map": ("plots.plot_contact_speed_map(contact)", "ContactMapArtists"),
    "MassEllipseDisplay": ("plots.MassEllipseDisplay.from_arm(arm, q)", "MassEllipseDisplay"),
    "plot_stiffness_ellipse": ("plots.plot_stiffness_ellipse(arm, q)", "StiffnessEllipseArtists"),
    "TorqueBarsDisplay": ("plots.TorqueBarsDisplay.from_arm(arm, q, 2.0)", "TorqueBarsDisplay"),
    # the style context with plain pyplot: the user's own figure in our look
    "plot_style": ("with plots.plot_style():\n    plt.plot([0.0, 1.0], [0.0, 1.0])", None),
}


def test_every_public_plot_function_is_called():
    import inertia_review.plots as irp

    public = {n for n in irp.__all__ if n.startswith("plot_")}
    assert public <= set(CALLS), f"add a cell for {sorted(public - set(CALLS))}"


@pytest.fixture(scope="module")
def shuffled():
    rng = random.Random(20240508)
    names = list(CALLS)
    rng.shuffle(names)
    cells, expected = [new_code_cell(SETUP)], [None]
    for i, name in enumerate(names):
        code, kind = CALLS[name]
        trailing = i % 2 == 0 and kind is not None
        cells.append(new_code_cell(code + (";" if trailing else "")))
        expected.append((name, kind, trailing))
        if i == len(names) // 2:
            # a live widget in between: it draws off-screen, shows no image, leaks none
            cells.append(new_code_cell("board = ComparisonBoard(arms, region)\nboard"))
            expected.append(("widget", None, False))
            cells.append(new_code_cell("snapshot(board)"))
            expected.append(("snapshot", None, False))
    nb = new_notebook(cells=cells, metadata={"kernelspec": {"name": "python3",
                                                            "display_name": "Python 3",
                                                            "language": "python"}})
    return _execute(nb, ROOT), expected


def test_shuffled_plot_cells_show_one_image_each(shuffled):
    nb, expected = shuffled
    assert len(nb.cells) == len(CALLS) + 3
    assert not _images(nb.cells[0]), "the setup cell draws nothing"
    for cell, (name, kind, trailing) in zip(nb.cells[1:], expected[1:]):
        errors = [o for o in cell.outputs if o.output_type == "error"]
        assert not errors, f"{name}: {errors[0].get('ename')}: {errors[0].get('evalue')}"
        images = _images(cell)
        if name == "widget":
            assert not images, "a live widget leaked a figure into its cell"
            assert any("data" in o and WIDGET_VIEW in o["data"] for o in cell.outputs)
            continue
        if name == "snapshot":
            assert images and len(set(images)) == len(images), "snapshot images"
            continue
        assert len(images) == 1, f"{name} ({'with' if trailing else 'without'} ';'): " \
                                 f"{len(images)} images"
        results = [o for o in cell.outputs if o.output_type == "execute_result"]
        if trailing or kind is None:
            assert not results, f"{name}: ';' must hide the result"
        else:
            assert len(results) == 1 and results[0]["data"]["text/plain"].startswith(kind), \
                f"{name} must return its {kind}"
