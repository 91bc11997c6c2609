"""``legbridge check PLAN --robot ROBOT [-o REVIEW.json]``: check every case of a plan against the
modelled limits.

Prints the review summary (limits.review.text, the same one ``legbridge review`` prints) and, with
-o/--output, writes the review document (limits.review.json_doc). Exit 0 when every case is within
the modelled limits, 1 when a limit is exceeded or something could not be evaluated, 2 on bad input.
"""

from __future__ import annotations

import sys


from legbridge.limits.cli.options import PLAN_HELP, add_check_options, add_output, add_robot, settings_from_args
from legbridge.mapping.pipeline import prepare


def register(subparsers) -> None:
    """Add the ``check`` sub-command to ``legbridge`` (sets ``func``)."""
    p = subparsers.add_parser("check", help="check a plan's cases against the robot's modelled limits",
                              description="Translate every case of PLAN for ROBOT and check each sample against the "
                                          "modelled limits (range, speed, torque, voltage, current, temperature, power, "
                                          "friction), with the force-feasibility and nearest-motion QPs.")
    p.add_argument("plan", metavar="PLAN", help=PLAN_HELP)
    add_robot(p)
    add_check_options(p)
    add_output(p, "write the review as JSON to OUT")
    p.add_argument("--json", dest="output", default=None, help="same as -o/--output (legbridge 0.1 name)")
    p.add_argument("--modified-targets", default=None, metavar="OUT",
                   help="also write the nearest feasible motion (QP) as MODIFIED targets to OUT (CSV; the name must "
                        "contain 'modified'); never the reviewed plan")
    p.set_defaults(func=run)


def run(args) -> int:
    """Run ``legbridge check``; returns the exit status."""
    from legbridge.limits.checks.case import check_case
    from legbridge.limits.cli.progress import StderrProgress
    from legbridge.limits.review.corrected_targets import check_marked_name, write_corrected_targets
    from legbridge.limits.review.json_doc import review_to_json, write_json
    from legbridge.limits.review.review import assemble_review
    from legbridge.limits.review.text import review_lines
    from legbridge.robots.files import check_outputs
    from legbridge.robots.library import resolve_robot

    settings = settings_from_args(args)
    if args.modified_targets:
        check_marked_name(args.modified_targets)
    robot_path = resolve_robot(args.robot)
    check_outputs([args.output, args.modified_targets], inputs=[args.plan, robot_path], force=args.force)
    progress = StderrProgress(sys.stderr, quiet=args.quiet)
    try:
        progress(f"reading and translating the plan at {settings.rate_hz:g} Hz")
        prepared = prepare(args.plan, robot_path, rate_hz=settings.rate_hz, gait=settings.gait)
        cases = []
        for traj in prepared.trajectories:
            progress(f"checking case {traj.case} ({traj.n_samples} samples, every limit and both QPs)")
            cases.append(check_case(traj, prepared.robot, settings))
        review = assemble_review(prepared.plan, prepared.robot, settings, tuple(cases), warnings=prepared.warnings)
        paths = {}
        if args.output:
            progress("writing the review")
            paths["review"] = write_json(review_to_json(review), args.output, force=args.force)
        if args.modified_targets:
            progress("writing the MODIFIED targets")
            paths["modified"] = write_corrected_targets(review, args.modified_targets, force=args.force)
    finally:
        progress.close()
    print("\n".join(review_lines(review, command="check", paths=paths)))
    return review.exit_code
