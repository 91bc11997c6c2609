"""``legbridge review PLAN --robot ROBOT -o DIR`` and ``legbridge review --demo -o DIR``.

Runs limits.review.run_review and prints the terminal summary: the verdict of every case, the worst
findings, where the outputs were written, and the caution text. Progress goes to stderr (one short
line per stage) when stderr is a terminal.
"""

from __future__ import annotations

from legbridge.limits.commands.options import add_check_options, settings_from_args

import argparse
import sys
import time

from legbridge.robots.errors import LegbridgeError

HELP = "translate, check and write the pre-test review (JSON, joint targets, HTML report)"


class ReviewUsageError(LegbridgeError, ValueError):
    """The review command was given an impossible combination of arguments."""


def register(sub) -> None:
    """Add the ``review`` sub-command to ``legbridge`` (sets ``func``)."""
    p = sub.add_parser("review", help=HELP, description=HELP[0].upper() + HELP[1:] + ".")
    p.add_argument("plan", nargs="?", metavar="PLAN", help="plan file (.csv, .json, .npz, .mat)")
    p.add_argument("--robot", metavar="ROBOT", help="robot description file, or the name of a bundled robot")
    p.add_argument("--demo", action="store_true",
                   help="review the bundled demo leg with the built-in demo plan (invented data)")
    p.add_argument("-o", "--out", metavar="DIR", required=True, help="output folder for the review")
    add_check_options(p)
    p.add_argument("--sweep", metavar="LO:HI:N", default=None,
                   help="ground-height offsets [m] for the sweep of the plan's open-loop policy (default: 11 from "
                        "-0.1 l0 to +0.1 l0 whenever the plan carries a policy)")
    p.add_argument("--no-sweep", action="store_true", help="do not sweep the ground height")
    p.add_argument("--jobs", metavar="N", type=int, default=None, help="worker processes for the sweep (default: all cores)")
    p.add_argument("--force", action="store_true", help="overwrite previous outputs in DIR")
    p.set_defaults(func=run)


def _progress_printer(stream):
    """One short line per stage on ``stream`` when it is a terminal, with the elapsed time."""
    if not getattr(stream, "isatty", lambda: False)():
        return None
    t0 = time.perf_counter()

    def say(msg: str) -> None:
        print(f"  [{time.perf_counter() - t0:5.1f} s] {msg}", file=stream, flush=True)

    return say


def summary_lines(outcome) -> list[str]:
    """The terminal summary of a review outcome (no colour, no word 'safe')."""
    from legbridge.limits.cautions import caution_lines
    from legbridge.limits.report.summary import joint_label, limit_label, pct_text, ranked, verdict_words, worst_of, worst_segments

    plan, robot = outcome.plan, outcome.robot
    lines = [f"legbridge review: plan {plan.path} (SHA-256 {plan.sha256[:12]}...) on robot {robot.name}"]
    if plan.scaling is not None:
        lines.append(f"  {plan.scaling.describe()}")
    lines.append("")
    width = max((len(r.case) for r in outcome.reviews), default=4)
    for r in outcome.reviews:
        w = worst_of(r)
        worst = f"worst {limit_label(w.limit)} ({joint_label(w.joint)}): {pct_text(w.utilisation)}" if w else "worst: not evaluated"
        lines.append(f"  {r.case:<{width}}  {verdict_words(r):<28} {worst}")
        for f in r.findings:
            lines.append(f"  {'':<{width}}  could not be evaluated: {f}")
    order = ", ".join(r.case for r in ranked(outcome.reviews))
    lines += ["", f"Ranking, worst first: {order}"]
    segs = worst_segments(outcome.reviews)
    if segs:
        lines.append("Worst findings (the worst segment of each limit and joint):")
        for s in segs:
            lines.append(f"  {s.case} / {joint_label(s.joint)} / {s.limit}: {s.severity}, "
                         f"{s.t_start_s:.3f}-{s.t_end_s:.3f} s, peak {s.peak:.4g} {s.unit} against {s.allowed:.4g} {s.unit}, "
                         f"utilisation {pct_text(s.utilisation)}")
    else:
        lines.append("No segment of any case is near or beyond a modelled limit.")
    lines += ["", f"Report:  {outcome.paths['report']}", f"Results: {outcome.paths['review']}",
              f"Targets: {outcome.paths['targets']}"]
    if "plan" in outcome.paths:
        lines.append(f"Plan:    {outcome.paths['plan']} (demo plan, invented data)")
    if outcome.sweep is not None:
        w = outcome.sweep.window
        lines += ["", f"Ground-height sweep ({len(outcome.sweep.offsets)} offsets, reduced model re-simulated): "
                  + ("no offset around zero completes within the modelled limits" if w.empty else
                     f"window {w.lo_m:+.4f} m to {w.hi_m:+.4f} m within the modelled limits"),
                  f"  below: {w.below.text}", f"  above: {w.above.text}",
                  f"Sweep:   {outcome.paths['sweep_csv']}, {outcome.paths['sweep_json']}"]
    lines.append("")
    lines += caution_lines()
    return lines


def run(args: argparse.Namespace) -> int:
    """Run ``legbridge review``; returns the exit status."""
    from legbridge.limits.review import run_demo_review, run_review

    if args.demo and (args.plan or args.robot):
        raise ReviewUsageError(key="--demo", expected="either --demo or PLAN with --robot", found="both")
    if not args.demo and not (args.plan and args.robot):
        raise ReviewUsageError(key="PLAN/--robot", expected="a plan file and --robot ROBOT (or --demo)",
                               found=f"plan={args.plan!r}, robot={args.robot!r}")
    settings = settings_from_args(args)
    progress = _progress_printer(sys.stderr)
    from legbridge.limits.review import SWEEP_AUTO

    if args.no_sweep and args.sweep is not None:
        raise ReviewUsageError(key="--sweep", expected="either --sweep LO:HI:N or --no-sweep", found="both")
    if args.jobs is not None and args.jobs < 1:
        raise ReviewUsageError(key="--jobs", expected="a whole number >= 1", found=args.jobs)
    if args.no_sweep:
        sweep = None
    elif args.sweep is not None:
        from legbridge.limits.sweep import parse_heights

        sweep = parse_heights(args.sweep)
    else:
        sweep = SWEEP_AUTO
    if args.demo:
        outcome = run_demo_review(settings, args.out, force=args.force, progress=progress, sweep=sweep, jobs=args.jobs)
    else:
        from legbridge.robots.library import resolve_robot

        robot_path = resolve_robot(args.robot)  # a file, or a bundled robot by name
        outcome = run_review(args.plan, robot_path, settings, args.out, force=args.force, progress=progress,
                             sweep=sweep, jobs=args.jobs)
    print("\n".join(summary_lines(outcome)))
    return outcome.exit_code
