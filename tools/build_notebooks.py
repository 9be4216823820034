"""Write the review notebooks' cells (sources only); execute them with
``inertia-review rebaseline notebooks/NAME.ipynb`` to store their outputs.

``python tools/build_notebooks.py [NAME.ipynb ...]`` writes the named notebooks only (all
when none is named).

Kept in the repository so that the notebooks' text has one editable source.
"""

from pathlib import Path

import nbformat
from nbformat.v4 import new_code_cell, new_markdown_cell, new_notebook

HERE = Path(__file__).resolve().parents[1] / "notebooks"

CAUTION_MD = (
    "> **Caution.** Torque margins and acceleration capabilities below are design-stage "
    "estimates from an idealised rigid-body model, not a validation. The applicable standards "
    "(ISO 12100, ISO 10218-1/-2), local regulations and qualified, licensed engineering "
    "practice decide.")

SCENARIO_MD = (
    "*All designs here are **invented demo data** for a fictional scenario: \"Kestrel Optics\" "
    "wants a bench-top arm that lifts lens blanks (up to 0.3 kg with their carrier) from a tray "
    "into a polishing fixture, working in a vertical plane beside its base. None of the numbers "
    "describe a real product.*")


#: a checked record cell shown collapsed (JupyterLab and the classic notebook honour it)
COLLAPSED = {"collapsed": True, "jupyter": {"outputs_hidden": True}}


def quick_review():
    return [
        new_markdown_cell("# Quick review: kestrel_a\n\n" + SCENARIO_MD + "\n\n"
                          "This notebook reviews one candidate arm over its task region: how heavy "
                          "the tool feels in each direction (apparent mass), how evenly it moves "
                          "(isotropy), and the torque headroom against gravity plus the required "
                          "tool acceleration.\n\n" + CAUTION_MD),
        new_code_cell("import numpy as np\nimport inertia_review as ir\nfrom inertia_review import plots\n"
                      "from inertia_review.widgets import ReviewApp, snapshot\n\n"
                      "arm = ir.demo_design(\"kestrel_a\")\narm"),
        new_markdown_cell("## The design and its task\nThe design file carries its task: a "
                          "rectangle in a vertical plane 50 mm beside the base, a required tool "
                          "acceleration of 2 m/s² in any direction, and a downward approach."),
        new_code_cell("# NBVAL_CHECK_OUTPUT\ntask = arm.task\n"
                      "print(f\"joints: {', '.join(arm.joint_names)}; moving mass {arm.moving_mass:.3f} kg\")\n"
                      "print(f\"region: {task.region.kind}, centre {np.round(np.multiply(task.region.center_m, 1000)).tolist()} mm, \"\n"
                      "      f\"size {np.round(np.multiply(task.region.size_m, 1000)).tolist()} mm, spacing {task.region.spacing_m * 1000:.0f} mm\")\n"
                      "print(f\"required acceleration {task.accel_mps2:g} m/s^2, approach {list(task.approach)}\")"),
        new_markdown_cell("## Maps over the task region\nOne batched pass solves every grid point "
                          "for a configuration (elbow up) and evaluates every metric there."),
        new_code_cell("ds = ir.metric_map(arm, task)\n"
                      "plots.plot_metric_map(ds, \"mass_ratio\", arm=arm, probe=(0.0, 0.0));"),
        new_code_cell("plots.plot_headroom_map(ds);"),
        new_code_cell("plots.plot_ellipse_field(ds, arm, every=6);"),
        new_markdown_cell("## Accepted scores\nThe printed table below is the accepted baseline "
                          "of this design: nbval compares it on every run."),
        new_code_cell("# NBVAL_CHECK_OUTPUT\nprint(ir.baseline_table([ds]))"),
        new_markdown_cell("## Live review\nMove a slider (values apply on release): the map, the "
                          "scores and the probe follow. Click on the map, or type u and v, to "
                          "probe a point. An invalid design shows its error and keeps the last "
                          "valid map."),
        new_code_cell("app = ReviewApp(arm)\napp"),
        new_markdown_cell("A static snapshot of the live state, for readers without a kernel:"),
        new_code_cell("# NBVAL_IGNORE_OUTPUT\nsnapshot(app, title=\"kestrel_a, baseline settings\")"),
    ]


def compare():
    return [
        new_markdown_cell("# Comparing three alternatives to kestrel_a\n\n" + SCENARIO_MD + "\n\n"
                          "- **kestrel_b**: other link proportions (upper arm 280 mm, forearm 370 mm);\n"
                          "- **kestrel_c**: the elbow motor moved down to the shoulder (belt drive);\n"
                          "- **kestrel_wall**: arm A on a wall bracket tilted so its first axis is no longer vertical.\n\n"
                          "All are scored on kestrel_a's task region.\n\n" + CAUTION_MD),
        new_code_cell("import inertia_review as ir\nfrom inertia_review import plots\n"
                      "from inertia_review.widgets import ComparisonBoard, snapshot\n\n"
                      "names = [\"kestrel_a\", \"kestrel_b\", \"kestrel_c\", \"kestrel_wall\"]\n"
                      "arms = [ir.demo_design(n) for n in names]\n"
                      "task = arms[0].task\nmaps = [ir.metric_map(a, task) for a in arms]"),
        new_markdown_cell("## Scores\nOne row per design, one column per score (units in the "
                          "header); the best value of each score is bold with a ★."),
        new_code_cell("ir.scores_view(maps)"),
        new_markdown_cell("The accepted baseline of these scores, as fixed-precision text that "
                          "nbval compares on every run (collapsed: expand to read)."),
        new_code_cell("# NBVAL_CHECK_OUTPUT\nprint(ir.baseline_table(maps))",
                      metadata=COLLAPSED),
        new_markdown_cell("## Side by side, one colour scale"),
        new_code_cell("plots.plot_small_multiples(maps, \"mass_ratio\");"),
        new_code_cell("plots.plot_small_multiples(maps, \"min_margin\");"),
        new_markdown_cell("## Differences against the baseline (B minus A)"),
        new_code_cell("for other in maps[1:]:\n    plots.plot_difference_map(other, maps[0], \"mass_ratio\")"),
        new_markdown_cell("## The board\nTwo to four alternatives on shared colour scales; the best "
                          "value of each score is marked."),
        new_code_cell("board = ComparisonBoard(arms, task)\nboard"),
        new_code_cell("# NBVAL_IGNORE_OUTPUT\nsnapshot(board, title=\"comparison board\")"),
    ]


def sweep_study():
    return [
        new_markdown_cell("# Sweep study: link-length ratio and mount tilt\n\n" + SCENARIO_MD + "\n\n"
                          "The reach of the last two links is kept at 650 mm while the "
                          "forearm-to-upper-arm ratio varies; the mount pitches forward by 0 to "
                          "30 degrees. Each variant is scored on kestrel_a's task region (20 mm "
                          "grid).\n\n" + CAUTION_MD),
        new_code_cell("import numpy as np\nimport inertia_review as ir\nfrom inertia_review import plots\n"
                      "from inertia_review.widgets import SweepExplorer, snapshot\n\n"
                      "arm = ir.demo_design(\"kestrel_a\")\n"
                      "r = arm.task.region\n"
                      "region = ir.Rectangle(r.center_m, r.axes, r.size_m, 0.02)\n"
                      "sweep = ir.Sweep(arm, vary={\"derived.link_ratio\": np.linspace(0.6, 1.4, 5),\n"
                      "                            \"mount.rpy_deg[1]\": [0.0, 10.0, 20.0, 30.0]},\n"
                      "                 region=region, accel_mps2=arm.task.accel_mps2, progress=False).run()"),
        new_code_cell("# NBVAL_CHECK_OUTPUT\nres = sweep.results_\n"
                      "for score in (\"gci\", \"mass_ratio_worst\", \"headroom_worst\"):\n"
                      "    print(score)\n"
                      "    print(np.array2string(res[score].values, precision=4, floatmode=\"fixed\"))\n"
                      "best, value = sweep.best(\"gci\")\n"
                      "print(\"best by gci:\", {k: round(v, 4) for k, v in best.items()}, round(value, 4))"),
        new_code_cell("plots.plot_tradeoff(res, \"gci\");"),
        new_code_cell("plots.plot_tradeoff(res, \"headroom_worst\");"),
        new_markdown_cell("## Explore interactively\nChoose parameters and ranges (in mm, deg or kg), "
                          "run, and read the trade-off."),
        new_code_cell("explorer = SweepExplorer(arm, region)\nexplorer"),
    ]


def baselines():
    return [
        new_markdown_cell("# Accepted design baselines\n\nEvery demo design (invented data) scored on "
                          "its own task region. The printed tables are compared by nbval on every "
                          "test run: a change in any accepted design's metrics fails the run. "
                          "After a reviewed, intended change, re-accept with\n\n"
                          "```\ninertia-review rebaseline notebooks/04_baselines.ipynb\n```\n\n" + CAUTION_MD),
        new_code_cell("import inertia_review as ir\n\n"
                      "names = [\"kestrel_a\", \"kestrel_b\", \"kestrel_c\", \"kestrel_wall\", \"sorter_planar\"]\n"
                      "arms = {n: ir.demo_design(n) for n in names}"),
        new_code_cell("# NBVAL_CHECK_OUTPUT\nfor name, arm in arms.items():\n"
                      "    print(ir.baseline_table([ir.metric_map(arm, arm.task)]))\n    print()"),
        new_code_cell("# NBVAL_CHECK_OUTPUT\n# joint-range summary (seeded sampling of the joint limits)\n"
                      "from inertia_review.review._summary import joint_range_summary\n"
                      "for name, arm in arms.items():\n"
                      "    row = joint_range_summary(arm, samples=4000, accel_mps2=2.0)\n"
                      "    print(f\"{name:14s} reach {row['reach_mm']:.1f} mm  isotropy mean {row['isotropy_mean']:.4f}  \"\n"
                      "          f\"mass ratio mean {row['mass_ratio_mean']:.4f}  static margin {row['static_margin']:+.4f}\")"),
    ]


CONTACT_MD = (
    "> **Caution (contact speeds).** Permissible contact speeds are design-stage estimates from the "
    "informative transient-contact model of ISO/TS 15066:2016 Annex A with the arm's rigid-body "
    "apparent mass; they are not a validation. Contact forces and pressures must be measured on "
    "the finished application (ISO/PAS 5672) after a risk assessment per ISO 12100 and "
    "ISO 10218-2; no transient contact with the skull, forehead or face is permitted. The body-region "
    "values are secondary copies, to be checked against a licensed copy of the current standard. "
    "Local regulations and qualified, licensed practice decide.")


def sizing_and_contact():
    return [
        new_markdown_cell("# Actuator sizing and contact speeds for the alternatives\n\n" + SCENARIO_MD +
                          "\n\nThe tray-to-fixture move cycle of each design file (invented) is "
                          "sampled at 1 kHz; joint torques come from the rigid-body model "
                          "(tau = M qdd + velocity torque + gravity torque) and are compared with the "
                          "actuators' peak and continuous ratings. Then the permissible tool speed "
                          "for an accidental contact with a hand or a lower arm is mapped over the "
                          "task region from the apparent mass along the motion, and the cycle's own "
                          "tool speeds are checked against it.\n\n" + CAUTION_MD + "\n\n" + CONTACT_MD),
        new_code_cell("import numpy as np\nimport inertia_review as ir\nfrom inertia_review import plots\n"
                      "from inertia_review.widgets import ContactBoard, ContactMapPanel, CyclePanel, snapshot\n\n"
                      "names = [\"kestrel_a\", \"kestrel_b\", \"kestrel_c\"]\n"
                      "arms = [ir.demo_design(n) for n in names]\n"
                      "cycles = [ir.design_cycles(a)[0] for a in arms]\n"
                      "results = [ir.cycle_torques(a, c) for a, c in zip(arms, cycles)]"),
        new_markdown_cell("## Cycle torques against the ratings (accepted values)"),
        new_code_cell("# NBVAL_CHECK_OUTPUT\nfor r in results:\n    print(r.text())\n    print()"),
        new_code_cell("plots.plot_cycle_torques(results[0]);"),
        new_code_cell("for r in results:\n    plots.plot_cycle_utilisation(r)"),
        new_markdown_cell("## Permissible contact speed over the task region"),
        new_markdown_cell("The contact area is the smaller of the gripper's and the body's contact "
                          "surface; here a 1 cm² jaw edge (an invented value for the Kestrel gripper). "
                          "Each speed is the lower of the force and the pressure route of the model; "
                          "the maps say which one governed."),
        new_code_cell("task = arms[0].task\nAREA_CM2 = 1.0   # contact area [cm^2], invented\n"
                      "maps = {(a.name, body): ir.contact_speed_map(a, task, body, contact_area_cm2=AREA_CM2)\n"
                      "        for a in arms for body in (\"hand\", \"lower_arm\")}"),
        new_code_cell("# NBVAL_CHECK_OUTPUT\nfor (name, body), ds in maps.items():\n"
                      "    ok = ds[\"status\"].values == 0\n"
                      "    v = ds[\"permissible_speed\"].values[ok]\n"
                      "    print(f\"{name:10s} {body:10s} lowest {v.min():.4f} m/s, median {float(np.median(v)):.4f} m/s, \"\n"
                      "          f\"{ds.attrs['governing_route']} route ({ds.attrs['body_area_name']})\")\n"
                      "print(next(iter(maps.values())).attrs[\"caution\"])"),
        new_code_cell("plots.plot_contact_speed_map(maps[(\"kestrel_a\", \"hand\")]);"),
        new_markdown_cell("## The cycle's tool speeds against the hand limit"),
        new_code_cell("# NBVAL_CHECK_OUTPUT\nfor a, r in zip(arms, results):\n"
                      "    check = ir.check_speeds(a, None, r.tool_velocity[::10], q=r.q[::10], body_region=\"hand\",\n"
                      "                           contact_area_cm2=AREA_CM2)\n"
                      "    w = check.worst\n"
                      "    print(f\"{a.name}: {int(check.ok.sum())} of {check.ok.size} samples within the limit; \"\n"
                      "          f\"worst margin {check.margin_mps[w]:.4f} m/s at {check.speeds_mps[w]:.4f} m/s\")"),
        new_markdown_cell("## Panels\nThe cycle panel shows the three alternatives side by side; the "
                          "contact board compares the permissible hand speed of the alternatives on one scale (with "
                          "`ContactBoard.follow(board)` it tracks a ComparisonBoard); the contact "
                          "panel maps a chosen body region. All show their cautions."),
        new_code_cell("cycle_panel = CyclePanel(arms)\ncycle_panel"),
        new_code_cell("contact_board = ContactBoard(arms, task, body_region=\"hand\", contact_area_cm2=AREA_CM2)\ncontact_board"),
        new_code_cell("contact_panel = ContactMapPanel(arms[0], task, body_region=\"hand\", contact_area_cm2=AREA_CM2)\ncontact_panel"),
        new_code_cell("# NBVAL_IGNORE_OUTPUT\nsnapshot(cycle_panel, title=\"cycle torques\")\n"
                      "snapshot(contact_board, title=\"contact speeds of the alternatives, hand\")\n"
                      "snapshot(contact_panel, title=\"contact speeds, hand\")"),
    ]


def design_search():
    return [
        new_markdown_cell("# Design search: link proportions of kestrel_a\n\n" + SCENARIO_MD + "\n\n"
                          "The search proposes shoulder- and elbow-link lengths that trade "
                          "isotropy (GCI) against torque headroom, under the review's constraints; "
                          "the sensitivity table says which parameters matter. The search is seeded, "
                          "so the proposals below are the same on every run.\n\n" + CAUTION_MD),
        new_code_cell("import tempfile\nfrom pathlib import Path\n\nimport inertia_review as ir\n"
                      "from inertia_review import plots\n\narm = ir.demo_design(\"kestrel_a\")\n"
                      "space = {\"joints[shoulder].link_length_m\": (0.25, 0.45), \"joints[elbow].link_length_m\": (0.20, 0.45)}\n"
                      "search = ir.DesignSearch(arm, space, [\"max:gci\", \"max:headroom_worst\"],\n"
                      "                         [\"reachable_fraction >= 0.99\", \"headroom_worst >= 0.2\"],\n"
                      "                         generations=20, population=16, progress=False)\n"
                      "search.run(random_state=7);"),
        new_markdown_cell("## The Pareto set\nEvery proposal meets the constraints (reachable "
                          "fraction at least 0.99, worst headroom at least 0.2); none is beaten in "
                          "both GCI and headroom by another evaluated design."),
        new_code_cell("# NBVAL_CHECK_OUTPUT\nimport numpy as np\n\nres = search.results_\n"
                      "cols = list(space) + [\"gci\", \"headroom_worst\", \"moving_mass_kg\"]\n"
                      "front = (res.where(res.pareto, drop=True).to_dataframe()[cols].round(4)\n"
                      "         .drop_duplicates().sort_values(\"gci\"))\n"
                      "print(f\"{int(res.feasible.sum())} of {res.sizes['evaluation']} evaluated designs feasible, \"\n"
                      "      f\"{len(front)} distinct designs in the Pareto set; six of them, by GCI:\")\n"
                      "pick = np.unique(np.linspace(0, len(front) - 1, 6).round().astype(int))\n"
                      "print(front.iloc[pick].to_string(index=False))\n"
                      "base = ir.design_scores(ir.metric_map(arm, arm.task))\n"
                      "print(f\"baseline kestrel_a: GCI {float(base['gci']):.4f}, worst headroom {float(base['headroom_worst']):.4f}\")"),
        new_code_cell("plots.plot_pareto(search, \"gci\", \"headroom_worst\");"),
        new_markdown_cell("## Which parameters matter\nOne at a time, each parameter from the low "
                          "to the high end of its range with the others at the design's values."),
        new_code_cell("# NBVAL_CHECK_OUTPUT\nvary = {\"joints[shoulder].link_length_m\": (0.30, 0.40),\n"
                      "        \"derived.link_ratio\": (0.8, 1.0), \"tool.payload_kg\": (0.0, 0.5)}\n"
                      "table = ir.one_at_a_time(arm, vary, \"gci\")\nprint(table.round(4).to_string())"),
        new_code_cell("plots.plot_tornado(table);"),
        new_markdown_cell("## A proposal as a design file\nThe best-GCI proposal is written as a "
                          "design file (here to a temporary folder) and read back."),
        new_code_cell("# NBVAL_CHECK_OUTPUT\nwith tempfile.TemporaryDirectory() as folder:\n"
                      "    path = search.save_design(Path(folder) / \"kestrel_a_proposal.toml\")\n"
                      "    proposal = ir.load_design(path)\n"
                      "values = ir.parameter_paths(proposal)\n"
                      "print(proposal.name, {p: round(values[p], 4) for p in space})\n"
                      "print(\"GCI of the file read back:\", round(float(ir.design_scores(ir.metric_map(proposal, proposal.task))[\"gci\"]), 4))"),
        new_markdown_cell("## Panels\nThe proposal explorer shows the Pareto plot: click a point "
                          "(or choose a row in the dropdown) to see its parameters and scores, load "
                          "it into a review app and add it to a comparison board next to the "
                          "baseline design. The sensitivity panel draws the tornado chart of the "
                          "score chosen in its dropdown."),
        new_code_cell("from inertia_review.widgets import ProposalExplorer, SensitivityPanel, snapshot\n\n"
                      "explorer = ProposalExplorer(search, \"gci\", \"headroom_worst\")\n"
                      "explorer.selected = explorer.proposals[-1]   # the highest-GCI proposal\n"
                      "explorer"),
        new_code_cell("sensitivity = SensitivityPanel(arm, vary, score=\"gci\")\nsensitivity"),
        new_code_cell("# NBVAL_IGNORE_OUTPUT\nsnapshot(explorer, title=\"proposal explorer\")\n"
                      "snapshot(sensitivity, title=\"one-at-a-time sensitivity of GCI\")"),
    ]


STIFFNESS_MD = (
    "> **Caution (stiffness and payload).** Stiffness, sag, natural frequencies and payload "
    "ratings are design-stage estimates from a linear-elastic model (joint springs and straight "
    "Euler-Bernoulli link beams; no joint play or backlash, no bearing, housing or flange "
    "compliance, no control loop, no structure beyond the model, small deflections). Measure "
    "stiffness and vibration on the built arm. They are not a validation: the applicable "
    "standards (ISO 12100, ISO 10218-1/-2), local regulations and qualified, licensed "
    "engineering practice decide.")


def stiffness_and_payload():
    return [
        new_markdown_cell("# Stiffness, sag, first natural frequency and payload\n\n" + SCENARIO_MD +
                          "\n\nThe aluminium tube links bend and twist as Euler-Bernoulli beams "
                          "(E and G from the material table); joints with a "
                          "`stiffness_Nm_per_rad` are torsional springs. Over each design's task "
                          "region the map holds the static tool sag under gravity, the first "
                          "natural frequency of K phi = omega^2 M(q) phi (link compliance lumped "
                          "into joint springs) and the payload each point can carry within the "
                          "peak torque ratings at the task's acceleration.\n\n" + STIFFNESS_MD),
        new_code_cell("import inertia_review as ir\nfrom inertia_review import plots\n\n"
                      "names = [\"kestrel_a\", \"kestrel_b\", \"kestrel_c\"]\n"
                      "arms = [ir.demo_design(n) for n in names]\n"
                      "maps = [ir.metric_map(a, a.task) for a in arms]"),
        new_markdown_cell("## Datasheets over the task region (accepted values)\n\nThe demo designs "
                          "give no rated motor speeds, so their largest tool speed is n/a."),
        new_code_cell("# NBVAL_CHECK_OUTPUT\nfor a, ds in zip(arms, maps):\n"
                      "    print(ir.datasheet(a, ds))\n    print()"),
        new_code_cell("# NBVAL_CHECK_OUTPUT\nprint(ir.baseline_table(maps, columns=[\"f1_lowest_hz\", "
                      "\"sag_largest_m\", \"payload_rated_kg\"]))"),
        new_markdown_cell("## Tool speed from rated motor speeds\n\nFor illustration only, kestrel_a "
                          "with invented rated motor speeds of 3000 rpm on every joint "
                          "(joint speed = rated motor speed / gear ratio)."),
        new_code_cell("# NBVAL_CHECK_OUTPUT\nspec = arms[0].to_dict()\n"
                      "for joint in spec[\"joints\"]:\n"
                      "    joint[\"actuator\"][\"rated_speed_rpm\"] = 3000.0\n"
                      "fast = ir.Arm.from_dict(spec)\n"
                      "sheet = ir.datasheet(fast)\n"
                      "print(f\"largest tool speed {sheet.tool_speed_max_mps:.3f} m/s\")"),
        new_markdown_cell("## Maps"),
        new_code_cell("plots.plot_metric_map(maps[0], \"first_frequency\");"),
        new_code_cell("plots.plot_metric_map(maps[0], \"sag\");"),
        new_code_cell("plots.plot_metric_map(maps[0], \"payload_capacity\");"),
        new_code_cell("plots.plot_small_multiples(maps, \"sag\");"),
        new_markdown_cell("## Stiffness beside apparent mass at the softest point\nAt the grid point "
                          "of kestrel_a's lowest first natural frequency: the tool-stiffness "
                          "ellipse (semi-axes 1 / √k, long = soft) over the apparent-mass "
                          "ellipse (1 / √m, short = heavy), the softest and heaviest in-plane "
                          "directions, the first mode's tool motion and the sag direction. Where "
                          "the stiffness ellipse is long and the mass ellipse short, the tool is "
                          "soft and heavy: the low frequencies live there."),
        new_code_cell("import numpy as np\n\nf1 = maps[0][\"first_frequency\"].values\n"
                      "iv, iu = np.unravel_index(np.nanargmin(f1), f1.shape)\n"
                      "plots.plot_stiffness_ellipse(arms[0], maps[0][\"q\"].values[iv, iu]);"),
        new_markdown_cell("## Review screens\nThe point probe of the review app shows the "
                          "stiffness ellipse beside the mass ellipse, with f1, the first mode's "
                          "tool motion and the sag at the probed point; the app's datasheet card "
                          "follows the sliders. The comparison board shows one card per design, "
                          "the best value of each row marked. Every screen carries the stiffness "
                          "caution."),
        new_code_cell("from inertia_review.widgets import ComparisonBoard, ReviewApp, snapshot\n\n"
                      "app = ReviewApp(arms[0])\napp"),
        new_code_cell("board = ComparisonBoard(arms, arms[0].task)\nboard"),
        new_code_cell("# NBVAL_IGNORE_OUTPUT\nsnapshot(app, title=\"kestrel_a, baseline settings\")\n"
                      "snapshot(board, title=\"datasheets of the alternatives\")"),
    ]


def main(only=()):
    books = {"01_quick_review.ipynb": quick_review(), "02_compare_alternatives.ipynb": compare(),
             "03_sweep_study.ipynb": sweep_study(), "04_baselines.ipynb": baselines(),
             "05_actuators_and_contact.ipynb": sizing_and_contact(),
             "06_stiffness_and_payload.ipynb": stiffness_and_payload(),
             "07_design_search.ipynb": design_search()}
    unknown = [name for name in only if name not in books]
    if unknown:
        raise SystemExit(f"unknown notebook {unknown[0]!r}; known: {', '.join(books)}")
    for name, cells in books.items():
        if only and name not in only:
            continue
        nb = new_notebook(cells=cells, metadata={
            "kernelspec": {"display_name": "Python 3", "language": "python", "name": "python3"},
            "language_info": {"name": "python"}})
        nbformat.write(nb, HERE / name)
        print("wrote", HERE / name)


if __name__ == "__main__":
    import sys

    main(sys.argv[1:])           # names given: write only those notebooks
