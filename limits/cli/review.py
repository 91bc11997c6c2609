"""``legbridge review PLAN --robot ROBOT -o DIR`` and ``legbridge review --demo -o DIR``.

Runs limits.review.run.run_review and prints the review summary (limits.review.text): the verdict of
every case, the worst findings, where the outputs were written, and the caution text. Progress goes
to stderr (one short line per stage) when stderr is a terminal.
"""

from __future__ import annotations
from legbridge.robots.errors import Described

import argparse
import sys

from legbridge.limits.cli.options import (
    PLAN_HELP,
    add_check_options,
    add_ground_offsets,
    add_jobs,
    add_output,
    add_robot,
    jobs_from_args,
    offsets_from_args,
    settings_from_args,
)
from legbridge.limits.cli.progress import StderrProgress
from legbridge.robots.errors import UsageError

HELP = "translate, check and write the pre-test review (JSON, joint targets, HTML report)"


def register(sub) -> None:
    """Add the ``review`` sub-command to ``legbridge`` (sets ``func``)."""
    p = sub.add_parser("review", help=HELP, description=HELP[0].upper() + HELP[1:] + ".")
    p.add_argument("plan", nargs="?", metavar="PLAN", help=PLAN_HELP)
    add_robot(p, required=False)
    p.add_argument("--demo", action="store_true",
                   help="review the bundled demo robot with the shipped demo plan (invented data)")
    add_output(p, "output folder for the review", required=True)
    add_check_options(p)
    add_ground_offsets(p, "ground-height offsets [m] for the sweep of the plan's open-loop policy (default: 11 from "
                          "-0.1 l0 to +0.1 l0 whenever the plan carries a policy)")
    p.add_argument("--no-sweep", action="store_true", help="do not sweep the ground height")
    add_jobs(p)
    p.set_defaults(func=run)


def run(args: argparse.Namespace) -> int:
    """Run ``legbridge review``; returns the exit status."""
    from legbridge.limits.review.review import SWEEP_AUTO
    from legbridge.limits.review.text import review_lines

    if args.demo and (args.plan or args.robot):
        raise UsageError("--demo reviews the shipped demo plan", key="--demo",
                         expected="either --demo or PLAN with --robot", found=Described("both"))
    if not args.demo and not (args.plan and args.robot):
        missing = " and ".join(x for x, v in (("PLAN", args.plan), ("--robot ROBOT", args.robot)) if not v)
        raise UsageError("a plan and a robot are needed", key="PLAN/--robot",
                         expected="a plan file and --robot ROBOT (or --demo)", found=Described(f"no {missing}"))
    if args.no_sweep and args.ground_offsets is not None:
        raise UsageError(key="--ground-offsets", expected="either --ground-offsets LO:HI:N or --no-sweep", found=Described("both"))
    settings = settings_from_args(args)
    jobs = jobs_from_args(args)
    sweep = None if args.no_sweep else (offsets_from_args(args) or SWEEP_AUTO)
    progress = StderrProgress(sys.stderr, quiet=args.quiet)
    try:
        run_ = _run(args, settings, sweep, jobs, progress)
    finally:
        progress.close()
    print("\n".join(review_lines(run_.review, command="review", paths=run_.paths)))
    return run_.exit_code


def _run(args, settings, sweep, jobs, progress):
    from legbridge.limits.review.run import run_demo_review, run_review

    if args.demo:
        run_ = run_demo_review(settings, args.output, force=args.force, progress=progress, sweep=sweep, jobs=jobs)
    else:
        from legbridge.robots.library import resolve_robot

        run_ = run_review(args.plan, resolve_robot(args.robot), settings, args.output, force=args.force,
                          progress=progress, sweep=sweep, jobs=jobs)
    return run_
