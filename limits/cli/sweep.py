"""``legbridge sweep PLAN... --robot ROBOT... [--ground-offsets LO:HI:N]``: disturbance sweeps.

Re-simulates each plan's open-loop policy on every ground-height offset (the actuated spring-mass
model, legbridge.mapping.slip), translates and checks every case that completes exactly as
``legbridge check`` does, and prints per offset the reduced-model outcome, the apex error against
the nominal case and the hardware verdict, then the window of offsets that complete within the
modelled limits and what closes it at each end. Several plans and robots: the cross product.
Progress on stderr. Exit 0 when every offset completes within the modelled limits, 1 otherwise,
2 on bad input (nothing run, nothing written).
"""

from __future__ import annotations

import math
import os
import sys
import time
from pathlib import Path

from legbridge.limits.cli.progress import StderrProgress
from legbridge.limits.cli.options import (
    add_check_options,
    add_output,
    add_ground_offsets,
    add_jobs,
    jobs_from_args,
    offsets_from_args,
    settings_from_args,
)

HELP = "re-simulate a plan's policy on many ground heights and check every case"


def register(subparsers) -> None:
    """Add the ``sweep`` sub-command to ``legbridge`` (sets ``func``)."""
    p = subparsers.add_parser(
        "sweep", help=HELP,
        description="Re-simulate the open-loop policy of PLAN (actuated spring-mass model) on a range of ground-height "
                    "offsets, translate and check every case that completes, and report the window of offsets that "
                    "complete within the modelled limits.")
    p.add_argument("plan", nargs="+", metavar="PLAN", help="plan file(s) carrying a policy and model (JSON, NPZ or MAT-file)")
    p.add_argument("--robot", action="append", required=True, metavar="ROBOT",
                   help="robot description file or bundled robot name; repeat for several (cross product with PLAN)")
    add_ground_offsets(p, "ground-height offsets [m]: N values from LO to HI (default 11 from -0.1 l0 to +0.1 l0)")
    add_check_options(p)
    add_jobs(p)
    p.add_argument("--scheduler", default=None, metavar="ADDRESS", help="run on this Dask distributed scheduler instead")
    p.add_argument("--qps", choices=("all", "verdict"), default="all",
                   help="'all': both QPs on every completed offset, as `check` (default); 'verdict': skip them where "
                        "the sample checks already exceed a limit (the verdict cannot change)")
    p.add_argument("--csv", default=None, metavar="OUT", help="write the results table as CSV")
    p.add_argument("--json", default=None, metavar="OUT", help="write the results as JSON")
    p.add_argument("--plot", default=None, metavar="OUT.png",
                   help="write the utilisation-against-offset figure (one file per plan and robot: OUT-2.png ...)")
    add_output(p, "folder for sweep.csv, sweep.json and sweep.png (the names a review folder uses); --csv, "
                  "--json and --plot name single files instead")
    p.set_defaults(func=run)


def plot_paths(path: str, n: int) -> list[Path]:
    """OUT for one pair; OUT, OUT-2, OUT-3 ... (same suffix) for several."""
    p = Path(path)
    return [p] + [p.with_name(f"{p.stem}-{k}{p.suffix}") for k in range(2, n + 1)]


def _m(v: float) -> str:
    return "n/a" if v is None or (isinstance(v, float) and math.isnan(v)) else f"{v:.4f}"


def summary_lines(sweeps, jobs_label: str) -> list[str]:
    """The terminal summary of every (plan, robot) pair, then the caution text. Never says 'safe'."""
    from legbridge.limits.cautions import caution_lines
    from legbridge.limits.sweep.model import NOT_CHECKED
    from legbridge.limits.verdict import Verdict, utilisation_text

    out = []
    for s in sweeps:
        offs = s.offsets_m
        out.append(f"legbridge sweep: plan {s.plan_path} (SHA-256 {s.plan_sha256[:12]}...) on robot '{s.robot_name}': "
                   f"{len(offs)} ground offset(s) from {offs[0]:+.4f} to {offs[-1]:+.4f} m (l0 {s.nominal_leg_length_m:.3f} m), "
                   f"{s.duration_s:g} s each; checked at {s.settings.rate_hz:g} Hz, margin {s.settings.margin:.0%}, "
                   f"QPs: {s.qps}; {jobs_label}")
        out.append(f"  {'offset [m]':>10}  {'reduced model':<44} {'apex error rms dz [m] / dvx [m/s]':<34} hardware")
        for r, e in zip(s.offsets, s.apex_errors):
            model = "completed" if r.completed else f"fell at {r.end_time_s:.3f} s ({r.fall_reason})"
            apex = f"{_m(e.rms_dz_m)} / {_m(e.rms_dvx_m_s)} ({e.n_paired} apex{'es' if e.n_paired != 1 else ''})"
            if r.verdict == NOT_CHECKED:
                hw = "not checked (the reduced model fell)"
            else:
                hw = Verdict(r.verdict).words
                if r.worst_limit:
                    u = r.worst_utilisation
                    hw += f"; worst {r.worst_limit}{' (' + r.worst_joint + ')' if r.worst_joint else ''} " \
                          f"{utilisation_text(u)}"
                if r.findings:
                    hw += f"; {len(r.findings)} finding(s) not evaluated"
                if s.qps != "all" and not r.qps_run:
                    hw += " (QPs skipped: verdict already set)"
            out.append(f"  {r.offset_m:>+10.4f}  {model:<44} {apex:<34} {hw}")
        w = s.window
        if w.empty:
            out.append(f"  window: none: the offset nearest 0 does not complete within the modelled limits: {w.below.text}")
        else:
            out.append(f"  window: {w.lo_m:+.4f} to {w.hi_m:+.4f} m ({w.n_within} offset(s)) complete "
                       f"{Verdict.WITHIN.words}")
            out.append(f"    below: {w.below.text}")
            out.append(f"    above: {w.above.text}")
        n_fell = sum(not r.completed for r in s.offsets)
        n_bad = sum(r.completed and not r.within for r in s.offsets)
        if s.all_within:
            out.append(f"  every offset completes {Verdict.WITHIN.words}")
        else:
            out.append(f"  {n_fell} of {len(offs)} offset(s) fell; {n_bad} completed but exceed a modelled limit "
                       f"or could not be evaluated")
        out.append("")
    out.extend(caution_lines())
    return out


def run(args) -> int:
    """Run ``legbridge sweep``; returns the exit status."""
    from legbridge.robots.library import resolve_robot

    settings = settings_from_args(args)
    offsets = offsets_from_args(args)
    jobs = jobs_from_args(args)
    n_pairs = len(args.plan) * len(args.robot)
    robot_paths = [resolve_robot(r) for r in args.robot]
    if args.output:  # a folder: the review folder's names for whatever was not named on its own
        from legbridge.limits.review.run import SWEEP_CSV, SWEEP_JSON
        from legbridge.robots.files import check_output_folder

        folder = Path(args.output)
        names = [SWEEP_CSV, SWEEP_JSON] + [p.name for p in plot_paths("sweep.png", n_pairs)]
        check_output_folder(folder, names, inputs=[*args.plan, *robot_paths], force=args.force)
        args.csv = args.csv or str(folder / SWEEP_CSV)
        args.json = args.json or str(folder / SWEEP_JSON)
        args.plot = args.plot or str(folder / "sweep.png")
        created = not folder.exists()
        folder.mkdir(parents=True, exist_ok=True)
        try:
            return _run(args, settings, offsets, jobs, n_pairs, robot_paths)
        except BaseException:
            if created and not any(folder.iterdir()):  # nothing written: leave no empty folder behind
                folder.rmdir()
            raise
    return _run(args, settings, offsets, jobs, n_pairs, robot_paths)


def _run(args, settings, offsets, jobs, n_pairs, robot_paths) -> int:
    from legbridge.limits.sweep.model import exit_status
    from legbridge.limits.sweep.runner import run_sweep
    from legbridge.limits.sweep.table import write_csv, write_json
    from legbridge.robots.files import check_outputs, write_atomic

    plots = [str(p) for p in plot_paths(args.plot, n_pairs)] if args.plot else []
    check_outputs([args.csv, args.json, *plots], inputs=[*args.plan, *robot_paths], force=args.force)
    jobs_used = jobs or os.cpu_count() or 1
    label = f"Dask scheduler {args.scheduler}" if args.scheduler else f"{jobs_used} local job(s)"
    t0 = time.perf_counter()
    progress = StderrProgress(sys.stderr, quiet=args.quiet)
    try:
        sweeps = run_sweep(args.plan, robot_paths, offsets, settings=settings, jobs=jobs_used, scheduler=args.scheduler,
                           progress=progress.count, qps=args.qps)
    finally:
        progress.close()
    elapsed = time.perf_counter() - t0
    n = sum(len(s.offsets) for s in sweeps)
    for line in summary_lines(sweeps, label):
        print(line)
    print(f"  sweep: {n} offset(s) in {elapsed:.1f} s ({n / elapsed:.1f} offsets/s, {label})", file=sys.stderr)
    if args.csv:
        write_csv(sweeps, args.csv, force=args.force)
        print(f"  results table written to {args.csv}", file=sys.stderr)
    if args.json:
        write_json(sweeps, args.json, force=args.force)
        print(f"  results written to {args.json}", file=sys.stderr)
    if args.plot:
        from legbridge.limits.sweep.plot import plot_sweep, png_bytes

        for s, p in zip(sweeps, plot_paths(args.plot, len(sweeps))):
            write_atomic(p, png_bytes(plot_sweep(s)), force=args.force)
            print(f"  figure written to {p}", file=sys.stderr)
    return exit_status(sweeps)


__all__ = ["plot_paths", "register", "run", "summary_lines"]
