"""The ``inertia-review`` command line (private)."""

import argparse
import sys

from ..model._design_io import load_design
from ..model._errors import DesignError
from ._summary import format_summary_table, joint_range_summary

__all__ = ["main"]


def _cmd_summary(args):
    rows = []
    failed = False
    for path in args.designs:
        try:
            arm = load_design(path)
        except DesignError as exc:
            print(f"{path}: {exc}", file=sys.stderr)
            failed = True
            continue
        rows.append(joint_range_summary(arm, samples=args.samples, accel_mps2=args.accel,
                                        random_state=args.seed))
    if rows:
        print(f"Joint-range review summary ({args.samples} configurations per design, uniform in "
              f"the joint limits; required tool acceleration {args.accel:g} m/s^2 in any task "
              "direction; means are joint-space means)\n")
        print(format_summary_table(rows))
    return 1 if failed else 0


def _cmd_check(args):
    status = 0
    for path in args.designs:
        try:
            arm = load_design(path)
        except DesignError as exc:
            print(f"{path}: {exc}")
            status = 1
            continue
        rated = sum(1 for t in arm.peak_torque if t == t)
        print(f"{path}: OK - design '{arm.name}', {arm.dof} joints ({', '.join(arm.joint_names)}), "
              f"moving mass {arm.moving_mass:.3f} kg, {rated} of {arm.dof} joints rated, "
              f"task axes {arm.task_axes.shape[0]}")
    return status


def _cmd_rebaseline(args):
    from ._notebooks import rebaseline
    changed = rebaseline(args.notebook, accept=not args.dry_run)
    return 0 if (not args.dry_run or not changed) else 1


def _cmd_report(args):
    from ._notebooks import write_report
    out = write_report(args.notebook, args.output, execute=not args.no_execute,
                       no_input=args.no_input)
    how = "saved outputs" if args.no_execute else "executed"
    print(f"wrote {out} (self-contained HTML review of {args.notebook}, {how}, opens offline)")
    return 0


def _cmd_present(args):
    from ._present import present
    try:
        return present(args.notebook, port=args.port, token=args.token)
    except ValueError as exc:
        print(exc, file=sys.stderr)
        return 2


def build_parser():
    parser = argparse.ArgumentParser(prog="inertia-review", description=(
        "Review robot-arm designs: apparent tool mass, isotropy and torque headroom."))
    sub = parser.add_subparsers(dest="command", required=True)
    summary = sub.add_parser("summary", help="joint-range review summary of design files")
    summary.add_argument("designs", nargs="+", help="design files (TOML)")
    summary.add_argument("--samples", type=int, default=20000, help="configurations per design")
    summary.add_argument("--accel", type=float, default=2.0,
                         help="required tool acceleration in any task direction [m/s^2]")
    summary.add_argument("--seed", type=int, default=0, help="sampling seed")
    summary.set_defaults(func=_cmd_summary)
    check = sub.add_parser("check", help="validate design files and print their errors or a summary")
    check.add_argument("designs", nargs="+", help="design files (TOML)")
    check.set_defaults(func=_cmd_check)
    rebase = sub.add_parser("rebaseline", help="re-execute a review notebook, show what changed "
                                               "in its checked outputs, and save the new outputs")
    rebase.add_argument("notebook")
    rebase.add_argument("--dry-run", action="store_true",
                        help="show the changes only; do not save (exit 1 if any changed)")
    rebase.set_defaults(func=_cmd_rebaseline)
    report = sub.add_parser("report", help="execute a notebook and write a self-contained HTML review that opens offline")
    report.add_argument("notebook")
    report.add_argument("-o", "--output", required=True, help="HTML file to write")
    report.add_argument("--no-input", action="store_true",
                        help="hide the code cells (a page for a review meeting)")
    report.add_argument("--no-execute", action="store_true",
                        help="render the saved notebook as it is, without running it")
    report.set_defaults(func=_cmd_report)
    present = sub.add_parser("present", help="serve a review notebook as a web page without code "
                                             "cells, with live widgets (Voila, 127.0.0.1, token)")
    present.add_argument("notebook")
    present.add_argument("--port", type=int, default=None, help="TCP port (default: a free one)")
    present.add_argument("--token", default=None, help="access token (default: a random one)")
    present.set_defaults(func=_cmd_present)
    return parser


def main(argv=None):
    args = build_parser().parse_args(argv)
    return args.func(args)


if __name__ == "__main__":
    sys.exit(main())
