"""Scaling benchmark (script, not collected by pytest: run it directly).

    python tests/perf/bench_scale.py               # every size below, a few minutes on 2 cores
    python tests/perf/bench_scale.py --quick       # 2 and 8 s only
    python tests/perf/bench_scale.py --ten-minutes # also a 600 s plan at 1 kHz

The invented demo biped (robots/library/lab-biped.toml) on the nominal case of the invented running
demo (legbridge.mapping.slip.demo: the same parameters, policy and apex), simulated for 2, 8, 32 and
60 and 128 s and checked at 1 kHz with every limit and both QPs (alternating legs); then the whole 2 s
demo (its five ground heights) at 1, 4 and 10 kHz. Each run is a fresh process (its peak resident memory is its own): wall time of
translate + check (the simulation is not counted), peak memory, and microseconds per sample.

Baseline, in the same run: the earlier QP code, every QP solved whole with the case-dependent linear
cost entering cvxpy as a parameter times x (cvxpy's coefficient extraction then builds a dense
parameters x variables array: memory quadratic in the plan length), on the sizes it can hold (up to
8,001 samples per case); the ratios time(baseline) / time(now) and memory(baseline) / memory(now).
"""

from __future__ import annotations

import json
import subprocess
import sys
import time

LONG_S = (2.0, 8.0, 32.0, 60.0, 128.0)
DEMO_HEIGHTS_M = (-0.06, -0.03, 0.0, 0.03, 0.06)
RATES_HZ = (1000.0, 4000.0, 10000.0)
BASELINE_MAX_SAMPLES = 8001


def _quadratic_compiled():
    """Patch in the earlier problem builder for the baseline: the linear cost as a cvxpy Parameter times x."""
    import numpy as np

    import legbridge.limits.qp.problem as pr

    def compiled(A, p_diag, up_rows, lo_rows, c):
        import cvxpy as cp

        n = A.shape[1]
        x = cp.Variable(n)
        cpar = cp.Parameter(n, value=np.asarray(c, dtype=float))
        upper = cp.Parameter(up_rows.size) if up_rows.size else None
        lower = cp.Parameter(lo_rows.size) if lo_rows.size else None
        obj = 0.5 * cp.sum_squares(cp.multiply(np.sqrt(np.asarray(p_diag, dtype=float)), x)) + cpar @ x
        cons = []
        if upper is not None:
            cons.append(A[up_rows] @ x <= upper)
        if lower is not None:
            cons.append(A[lo_rows] @ x >= lower)
        return pr._Compiled(cp.Problem(cp.Minimize(obj), cons), x, None, np.zeros(n, bool), upper, lower, cons)

    pr._compiled = compiled
    pr._windowed = lambda *args, **kwargs: None  # the earlier code solved every QP whole


def one(duration_s: float, rate_hz: float, formulation: str, heights=(0.0,)) -> dict:
    """Simulate, then time translate + check of one case in this process."""
    import resource

    from legbridge.limits.checks.case import check_case
    from legbridge.limits.checks.results import CheckSettings
    from legbridge.mapping.pipeline import prepare
    from legbridge.mapping.slip.demo import demo_apex, demo_params, demo_policy
    from legbridge.mapping.slip.to_plan import simulate_cases

    if formulation == "quadratic":
        _quadratic_compiled()
    plan = simulate_cases(demo_params(), demo_policy(), demo_apex(), heights, duration_s=duration_s, rate_hz=500.0,
                          metadata={"gait": "alternating"}, flight_swing="policy")
    import cvxpy  # noqa: F401  (import time is not the benchmark's)

    t0 = time.perf_counter()
    p = prepare(plan, "lab-biped", rate_hz=rate_hz)
    reviews = [check_case(traj, p.robot, CheckSettings(rate_hz=rate_hz, duration_s=duration_s)) for traj in p.trajectories]
    wall = time.perf_counter() - t0
    rss_mb = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024.0
    n = sum(t.n_samples for t in p.trajectories)
    ok = all(r.force_qp.ok and r.motion_qp.ok for r in reviews)
    return {"samples": n, "per_case": max(t.n_samples for t in p.trajectories), "wall_s": wall, "peak_mb": rss_mb,
            "us_per_sample": 1e6 * wall / n, "qps": "QPs optimal" if ok else "a QP not verified",
            "verdict": "/".join(r.verdict.value for r in reviews)}


def run(duration_s: float, rate_hz: float, formulation: str = "linear", demo: bool = False) -> dict | None:
    cmd = [sys.executable, __file__, "--one", str(duration_s), str(rate_hz), formulation, "demo" if demo else "nominal"]
    out = subprocess.run(cmd, capture_output=True, text=True, timeout=3600)
    if out.returncode != 0:
        print(f"  ({formulation}, {duration_s:g} s at {rate_hz:g} Hz failed: {out.stderr.strip().splitlines()[-1:]})")
        return None
    return json.loads(out.stdout.strip().splitlines()[-1])


def main(argv) -> int:
    if argv[:1] == ["--one"]:
        heights = DEMO_HEIGHTS_M if argv[4] == "demo" else (0.0,)
        print(json.dumps(one(float(argv[1]), float(argv[2]), argv[3], heights)))
        return 0
    quick = "--quick" in argv
    sizes = [(d, 1000.0, False) for d in (LONG_S[:2] if quick else LONG_S)]
    sizes += [(600.0, 1000.0, False)] if "--ten-minutes" in argv else []
    sizes += [(2.0, r, True) for r in RATES_HZ]
    print("invented demo biped (alternating legs), every limit and both QPs: the nominal running case for the long")
    print("plans, the whole demo (five cases) for the rates")
    print(f"{'plan':>8} {'rate':>8} {'samples':>8} {'wall [s]':>9} {'peak [MB]':>10} {'us/sample':>10}   "
          f"{'baseline wall':>13} {'baseline MB':>11} {'ratio t':>8} {'ratio MB':>8}")
    per_sample = {}
    for d, r, demo in sizes:
        now = run(d, r, demo=demo)
        if now is None:
            continue
        base = run(d, r, "quadratic", demo=demo) if now["per_case"] <= BASELINE_MAX_SAMPLES else None
        if not demo:
            per_sample[(d, r)] = now["us_per_sample"]
        btxt = (f"{base['wall_s']:13.2f} {base['peak_mb']:11.0f} {base['wall_s'] / now['wall_s']:8.2f} "
                f"{base['peak_mb'] / now['peak_mb']:8.2f}") if base else f"{'(too large)':>13} {'':>11} {'':>8} {'':>8}"
        label = f"{'demo ' if demo else ''}{d:g}s"
        print(f"{label:>8} {r:7g}Hz {now['samples']:8d} {now['wall_s']:9.2f} {now['peak_mb']:10.0f} "
              f"{now['us_per_sample']:10.1f}   {btxt}   {now['qps']} {now['verdict']}")
    at_1k = [v for (d, r), v in per_sample.items() if r == 1000.0]
    if len(at_1k) > 1:
        print(f"microseconds per sample at 1 kHz vary by {max(at_1k) / min(at_1k):.2f}x from "
              f"{min(d for d, r in per_sample if r == 1000.0):g} s to {max(d for d, r in per_sample if r == 1000.0):g} s "
              "(target < 1.5x)")
    return 0


if __name__ == "__main__":
    raise SystemExit(main(sys.argv[1:]))
