"""``legbridge after-test REVIEW_DIR LOG [--log-map MAP] [--case NAME] -o OUT``: a hardware log held against a
review's targets and modelled limits, and a robot file corrected from it (limits.aftertest).

Exit status as for ``check``, on what the log shows: 0 when no measured sample exceeds a modelled
limit, 1 when one does (the outputs are still written), 2 on bad input (a log that cannot be aligned
with the reviewed targets included; nothing written).
"""

from __future__ import annotations

import sys

from legbridge.limits.cli.options import add_output
from legbridge.limits.cli.progress import StderrProgress, add_quiet

HELP = "hold a hardware log against a review and write a robot file corrected from it"


def register(sub) -> None:
    """Add the ``after-test`` sub-command to ``legbridge`` (sets ``func``)."""
    p = sub.add_parser("after-test", help=HELP, description=HELP[0].upper() + HELP[1:] + ".")
    p.add_argument("review", metavar="REVIEW_DIR", help="the folder legbridge review wrote (holding review.json)")
    p.add_argument("log", metavar="LOG", help="hardware log (CSV, NPZ or MAT-file)")
    p.add_argument("--log-map", default=None, metavar="MAP",
                   help="TOML file naming which log column is which joint quantity and in what unit (default: the "
                        "conventional column names, e.g. left_knee_current_a)")
    p.add_argument("--case", default=None, metavar="NAME", help="the reviewed case the test ran (default: nominal)")
    p.add_argument("--robot", default=None, metavar="ROBOT",
                   help="the reviewed robot file, when it has moved since the review (its SHA-256 must match)")
    add_output(p, "output folder for the comparison and the corrected robot file", required=True)
    add_quiet(p)
    p.set_defaults(func=run)


def run(args) -> int:
    """Run ``legbridge after-test``; returns the exit status."""
    from legbridge.limits.aftertest.document import after_test_lines
    from legbridge.limits.aftertest.run import read_review_folder, rereview_command, run_after_test

    progress = StderrProgress(sys.stderr, quiet=args.quiet)
    try:
        done = run_after_test(args.review, args.log, args.output, mapping=args.log_map, case=args.case,
                              robot=args.robot, force=args.force, say=progress)
    finally:
        progress.close()
    plan = read_review_folder(args.review, args.robot).plan_path
    print("\n".join(after_test_lines(done.result, done.corrected,
                                     paths={"Results": done.json_path, "Report": done.report_path},
                                     rereview=rereview_command(done, plan))))
    return done.result.exit_code
