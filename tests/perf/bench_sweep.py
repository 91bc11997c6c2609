"""Benchmark of the disturbance sweep (script, not collected by pytest).

    /work/venv/bin/python tests/perf/bench_sweep.py [--offsets 101] [--rate 1000] [--skip-serial]

Sweeps the invented demo plan (legbridge.mapping.slip.demo.demo_plan(), 2 s per case) on the bundled
lab-biped leg over N offsets from -0.1 l0 to +0.1 l0 and prints offsets per second with 1 job and
with all cores, in the same run, so the ratio holds on a noisy machine. Also prints where the time
goes per offset (simulate / translate / check, the check with and without its two QPs) and the
window found, for the 'all' QP mode (as `legbridge check`) and the 'verdict' mode.
"""

from __future__ import annotations

import argparse
import os
import time

import numpy as np

from legbridge.limits.checks.results import CheckSettings
from legbridge.limits.sweep.model import offsets_between
from legbridge.limits.sweep.runner import run_sweep
from legbridge.mapping.slip.demo import demo_plan


def _run(plan, hs, settings, jobs, qps):
    t0 = time.perf_counter()
    (sw,) = run_sweep([plan], ["lab-biped-leg"], hs, settings=settings, jobs=jobs, qps=qps)
    return sw, time.perf_counter() - t0


def _split(sw) -> str:
    t = np.array([r.timing_s for r in sw.offsets])
    done = np.array([r.checked for r in sw.offsets])
    sim, tr, ch = t[:, 0].mean(), t[done, 1].mean() if done.any() else 0.0, t[done, 2].mean() if done.any() else 0.0
    return (f"per offset: simulate {1e3 * sim:.0f} ms; per checked offset: translate {1e3 * tr:.0f} ms, "
            f"check {1e3 * ch:.0f} ms ({int(done.sum())} checked, {sum(r.qps_run for r in sw.offsets)} with QPs)")


def _window(sw) -> str:
    w = sw.window
    if w.empty:
        return f"window: none ({w.below.text})"
    return f"window {w.lo_m:+.4f} to {w.hi_m:+.4f} m; closed below by {w.below.text}; above by {w.above.text}"


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--offsets", type=int, default=101)
    ap.add_argument("--rate", type=float, default=1000.0)
    ap.add_argument("--skip-serial", action="store_true", help="skip the 1-job runs")
    a = ap.parse_args()
    plan = demo_plan()
    l0 = plan.metadata["model"]["nominal_leg_length_m"]
    hs = offsets_between(-0.1 * l0, 0.1 * l0, a.offsets)
    cores = os.cpu_count() or 1
    settings = CheckSettings(rate_hz=a.rate)
    print(f"demo plan, {a.offsets} offsets {hs[0]:+.3f}..{hs[-1]:+.3f} m, 2 s per case, checked at {a.rate:g} Hz, {cores} cores")
    for qps in ("all", "verdict"):
        rows = []
        for jobs in ((1, cores) if not a.skip_serial else (cores,)):
            sw, dt = _run(plan, hs, settings, jobs, qps)
            rows.append((jobs, dt, sw))
            print(f"  qps={qps:<8} jobs={jobs}: {dt:6.1f} s, {a.offsets / dt:6.2f} offsets/s; {_split(sw)}")
        if len(rows) == 2:
            assert rows[0][2].offsets == rows[1][2].offsets, "results differ between 1 job and all cores"
            print(f"  qps={qps:<8} speed-up {rows[0][1] / rows[1][1]:.2f} with {cores} jobs; results identical")
        print(f"  qps={qps:<8} {_window(rows[-1][2])}")
    sw, dt = _run(plan, hs, CheckSettings(rate_hz=a.rate, run_qps=False), cores, "all")
    print(f"  no QPs (library setting run_qps=False, not offered by the command): {dt:.1f} s, "
          f"{a.offsets / dt:.2f} offsets/s; {_split(sw)}")


if __name__ == "__main__":
    main()
