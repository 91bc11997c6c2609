"""``legbridge translate``: a plan's cases -> joint targets at the controller rate (CSV, NPZ or JSON).

    legbridge translate PLAN --robot ROBOT [--rate HZ] [--case NAME ...] -o OUT [--force]

PLAN is read and translated by legbridge.mapping.pipeline.prepare for ROBOT (a description file or
a bundled robot name). Prints a short summary (cases, samples, flagged samples, the
scaling of a nondimensional plan, where the targets went) and the caution text; exit status 0.
Bad input raises a LegbridgeError (exit status 2 via legbridge.limits.cli, nothing written).
Flagged samples (out of reach, singular...) do not change the exit status here: `legbridge check`
reviews them; they are listed in the summary and counted in the file's metadata.
"""

from __future__ import annotations

import sys
from pathlib import Path

from legbridge.limits.cautions import caution_lines
from legbridge.limits.cli.options import PLAN_HELP, add_gait, add_output, add_rate, add_robot
from legbridge.limits.cli.progress import StderrProgress, add_quiet


def register(subparsers) -> None:
    """Add the ``translate`` sub-command to ``legbridge`` (sets ``func``)."""
    p = subparsers.add_parser("translate", help="translate a plan's cases into joint targets at the controller rate")
    p.add_argument("plan", metavar="PLAN", help=PLAN_HELP)
    add_robot(p)
    add_rate(p)
    p.add_argument("--case", action="append", metavar="NAME", help="translate only this case (repeatable)")
    add_gait(p)
    add_quiet(p)
    add_output(p, "targets file to write (.csv, .npz, .json)", required=True)
    p.set_defaults(func=run)


def summary_lines(plan, trajs, out: Path, rate_hz: float, warnings=()) -> list[str]:
    """The terminal summary of one translation (``warnings``: what plan and robot disagree on)."""
    from legbridge.mapping.joint_trajectory import FLAG_NAMES

    n = sum(t.n_samples for t in trajs)
    flagged = sum(int((t.flags != 0).sum()) for t in trajs)
    lines = [f"plan {plan.path}: {len(trajs)} case(s), {n} samples at {rate_hz:g} Hz, {flagged} flagged sample(s)"]
    if plan.scaling is not None:
        lines.append(f"  {plan.scaling.describe()}")
    lines.extend(f"  Warning: {w}" for w in warnings)
    from legbridge.mapping.readers.phases import stance_events

    def times(a) -> str:
        shown = ", ".join(f"{v:.3f}" for v in a[:6])
        return (shown + (f", ... ({a.size} in all)" if a.size > 6 else "")) or "none"

    for t in trajs:
        ev = stance_events(t.time_s, t.stance)
        reasons = [f"{int(((t.flags & bit) != 0).sum())} {name}" for bit, name in FLAG_NAMES.items() if ((t.flags & bit) != 0).any()]
        res = t.base_residual_summary()
        lines.append(f"  {t.case}: {t.n_samples} samples, {int((t.flags != 0).sum())} flagged"
                     + (f" ({', '.join(reasons)})" if reasons else "")
                     + f"; base residual up to {res['max_force_x_n']:.3g} N (x), {res['max_force_z_n']:.3g} N (z), "
                       f"{res['max_moment_nm']:.3g} N m (pitch)")
        lines.append(f"    touchdowns at {times(ev.touchdown_s)} s; liftoffs at {times(ev.liftoff_s)} s")
    lines.append(f"targets written to {out}")
    return lines


def limit_hint(prepared, rate_hz: float, args) -> list[str]:
    """A pointer to ``legbridge check`` when a case would exceed a modelled limit: the instantaneous
    and thermal checks run without the QPs (translate stays quick); the exit status is not changed."""
    from legbridge.limits.checks.case import check_case
    from legbridge.limits.checks.results import CheckSettings

    settings = CheckSettings(rate_hz=rate_hz, gait=args.gait, run_qps=False)
    over = [c for c in (check_case(t, prepared.robot, settings) for t in prepared.trajectories)
            if not c.summary.passes]
    if not over:
        return []
    worst = "; ".join(f"{c.case}: {c.summary.verdict.words}, worst {c.summary.worst.text}" if c.summary.worst
                      else f"{c.case}: {c.summary.verdict.words}" for c in over)
    return [f"Hint: {len(over)} case(s) would not stay within the modelled limits ({worst}); "
            f"run legbridge check (or review) on this plan before using these targets"]


def run(args) -> int:
    """Run ``legbridge translate``; returns the exit status."""
    from legbridge.mapping.pipeline import check_rate, prepare
    from legbridge.mapping.targets_export import write_targets
    from legbridge.robots.files import check_outputs
    from legbridge.robots.library import resolve_robot

    rate = check_rate(args.rate)
    robot_path = resolve_robot(args.robot)
    (out,) = check_outputs([args.output], inputs=[args.plan, robot_path], force=args.force)
    progress = StderrProgress(sys.stderr, quiet=args.quiet)
    try:
        progress(f"reading and translating the plan at {rate:g} Hz")
        prepared = prepare(args.plan, robot_path, rate_hz=rate, cases=args.case, gait=args.gait)
        progress(f"writing {out.name}")
        write_targets(prepared.trajectories, out, plan=prepared.plan, robot=prepared.robot, rate_hz=rate, force=args.force)
    finally:
        progress.close()
    print("\n".join(summary_lines(prepared.plan, prepared.trajectories, out, rate, prepared.warnings)))
    print("\n".join(limit_hint(prepared, rate, args)))
    print()
    print("\n".join(caution_lines()))
    return 0
