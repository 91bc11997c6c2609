"""``legbridge check PLAN --robot ROBOT``: check every case of a plan against the modelled limits.

Prints a summary (verdict per case, worst limits, segment counts, caution text) and, with --json,
writes the review document (limits.review_json). Exit 0 when every case is within the modelled
limits, 1 when a limit is exceeded or something could not be evaluated, 2 on bad input.
"""

from __future__ import annotations

from legbridge.limits.commands.options import add_check_options, settings_from_args

import sys
from pathlib import Path

from legbridge.robots.errors import LegbridgeError, OutputExistsError

EXIT_WITHIN, EXIT_EXCEEDS = 0, 1


def register(subparsers) -> None:
    """Add the ``check`` sub-command to ``legbridge`` (sets ``func``)."""
    p = subparsers.add_parser("check", help="check a plan's cases against the robot's modelled limits",
                              description="Translate every case of PLAN for ROBOT and check each sample against the "
                                          "modelled limits (range, speed, torque, voltage, current, temperature, power, "
                                          "friction), with the force-feasibility and nearest-motion QPs.")
    p.add_argument("plan", metavar="PLAN", help="plan file (CSV, JSON, NPZ or MAT-file)")
    p.add_argument("--robot", required=True, metavar="ROBOT", help="robot description (TOML, or URDF + actuator table)")
    add_check_options(p)
    p.add_argument("--json", default=None, metavar="OUT", help="write the review as JSON to OUT")
    p.add_argument("--modified-targets", default=None, metavar="OUT",
                   help="also write the nearest feasible motion (QP) as MODIFIED targets to OUT (CSV; the name must "
                        "contain 'modified'); never the reviewed plan")
    p.add_argument("--force", action="store_true", help="replace OUT if it exists")
    p.set_defaults(func=run)


def load_inputs(plan_path: str, robot_path: str, rate_hz: float):
    """(plan, robot, joint trajectories) from the files: robot loader, plan reader, translation."""
    from legbridge.robots import load_robot

    robot = load_robot(robot_path)
    try:
        from legbridge.mapping.readers import read_plan
        from legbridge.mapping.translate import translate_plan
    except ImportError as exc:
        raise LegbridgeError("plan reading or translation is not available in this installation",
                             hint=f"({exc})") from exc
    plan = read_plan(plan_path, robot=robot)
    trajs = translate_plan(plan, robot, rate_hz=rate_hz)
    return plan, robot, tuple(trajs)


def summary_lines(reviews, robot, plan_label: str, settings) -> list[str]:
    """The terminal summary: one block per case, the ranking, the caution text."""
    from legbridge.limits.cautions import caution_lines
    from legbridge.limits.check import rank_cases
    from legbridge.limits.results import SEVERITY_EXCEEDS, SEVERITY_NEAR
    from legbridge.limits.review_json import VERDICT_TEXT

    out = [f"legbridge check: {plan_label}: {len(reviews)} case(s) on robot '{robot.name}' at {settings.rate_hz:g} Hz, "
           f"margin {settings.margin:.0%}"]
    for r in reviews:
        n_ex = sum(s.severity == SEVERITY_EXCEEDS for s in r.segments)
        n_near = sum(s.severity == SEVERITY_NEAR for s in r.segments)
        out.append(f"  case '{r.case}' (ground {r.ground_height_m:+.3f} m): {VERDICT_TEXT.get(r.verdict, r.verdict)}; "
                   f"segments: {n_ex} exceeding, {n_near} near")
        top = sorted(r.worst.items(), key=lambda kv: -kv[1])[:3]
        if top:
            out.append("    highest utilisation: " + ", ".join(f"{k} {v:.0%}" if v != float('inf') else f"{k} not finite"
                                                              for k, v in top))
        for s in [s for s in r.segments if s.severity == SEVERITY_EXCEEDS][:5]:
            where = f"{s.joint} " if s.joint else ""
            out.append(f"    {where}{s.limit}: {s.t_start_s:.3f}-{s.t_end_s:.3f} s, peak {s.peak:.4g} {s.unit} "
                       f"against {s.allowed:.4g} {s.unit}")
        for f in r.findings:
            out.append(f"    not evaluated: {f}")
        for j, t in r.time_to_temp_limit_s.items():
            if t is not None:
                out.append(f"    {j} winding reaches its temperature limit after {t:.1f} s")
    ranks = rank_cases(reviews)
    if len(ranks) > 1:
        out.append("  cases, worst first: " + ", ".join(f"{c.case} ({c.worst_limit} {c.worst_utilisation:.0%})" for c in ranks))
    bad = [r.case for r in reviews if not r.passed]
    if bad:
        out.append(f"  {len(bad)} of {len(reviews)} case(s) exceed a modelled limit or could not be evaluated: {', '.join(bad)}")
    else:
        out.append(f"  every case is {VERDICT_TEXT['within']}")
    out.extend(caution_lines())
    return out


def run(args) -> int:
    """Run ``legbridge check``; returns the exit status."""
    from legbridge.limits.check import check_plan
    from legbridge.limits.review_json import review_to_json, write_json

    settings = settings_from_args(args)
    for out in (args.json, args.modified_targets):
        if out and Path(out).exists() and not args.force:
            raise OutputExistsError("output file exists", path=out, hint="pass --force to replace it")
    if args.modified_targets and "modified" not in Path(args.modified_targets).name.lower():
        from legbridge.limits.corrected_targets import CorrectedTargetsError

        raise CorrectedTargetsError("modified targets need a marked file name", path=args.modified_targets,
                                    expected="a name containing 'modified' (e.g. targets-modified.csv)",
                                    found=Path(args.modified_targets).name)
    plan, robot, trajs = load_inputs(args.plan, args.robot, settings.rate_hz)
    reviews = check_plan(trajs, robot, settings)
    lines = summary_lines(reviews, robot, args.plan, settings)
    if plan.scaling is not None:
        lines.insert(1, f"  {plan.scaling.describe()}")
    for line in lines:
        print(line)
    if args.json:
        write_json(review_to_json(reviews, plan, robot, settings), args.json, force=args.force)
        print(f"  review written to {args.json}", file=sys.stderr)
    if args.modified_targets:
        from legbridge.limits.corrected_targets import write_corrected_targets

        write_corrected_targets(reviews, args.modified_targets, plan=plan, robot=robot, force=args.force)
        print(f"  MODIFIED targets (nearest feasible motion, not the plan) written to {args.modified_targets}",
              file=sys.stderr)
    return EXIT_WITHIN if all(r.passed for r in reviews) else EXIT_EXCEEDS
