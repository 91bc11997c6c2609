"""Benchmark of the limits check (script, not collected by pytest: run it directly).

    /work/venv/bin/python tests/perf/bench_check.py

Five-case plan at 1 kHz, 2 s per case: the invented demo scenario (legbridge.mapping.slip.demo) at
its five ground heights, translated with legbridge.mapping.translate.translate_plan for the demo leg
(robots/library/lab-biped-leg.toml);
synthetic trajectories if those are not available. Times (1) the whole check (every limit, the
thermal model and both batched QPs) and (2) in the same run the same QPs solved one sample at a
time with cvxpy, on a subset of samples, extrapolated to all samples (said in the output). The
per-sample motion QP is the straightforward greedy version: sample k given the two corrected
samples before it (same constraints, one small problem per sample).
Targets: batched QPs >= 20x the per-sample path; whole check of the demo < 2 s.
"""

from __future__ import annotations

import time

import numpy as np

HEIGHTS_M = (-0.06, -0.03, 0.0, 0.03, 0.06)  # the demo's own cases (mapping/slip/demo.py)
RATE_HZ = 1000.0
SUBSET = 150


def load():
    from legbridge.robots import load_robot
    from legbridge.robots.library import library_path

    robot = load_robot(library_path("lab-biped-leg.toml"))
    try:
        from legbridge.mapping.slip.demo import demo_plan
        from legbridge.mapping.translate import translate_plan

        t0 = time.perf_counter()
        plan = demo_plan(HEIGHTS_M)
        trajs = translate_plan(plan, robot, rate_hz=RATE_HZ)
        print(f"demo plan: {len(trajs)} cases ({', '.join(t.case for t in trajs)}), simulated and translated in "
              f"{time.perf_counter() - t0:.2f} s (not counted below)")
        return robot, trajs
    except ImportError as exc:
        print(f"demo plan or translate not available ({exc}); synthetic trajectories")
        return robot, synthetic(robot)


def synthetic(robot):
    import sys
    from pathlib import Path

    sys.path.insert(0, str(Path(__file__).resolve().parents[1] / "limits"))
    from conftest import build_trajectory, leg_jacobian

    n = int(2 * RATE_HZ)
    t = np.arange(n) / RATE_HZ
    out = []
    for k, h in enumerate(HEIGHTS_M):
        q = np.column_stack([0.3 * np.sin(2 * np.pi * 1.5 * t), -1.0 + 0.3 * np.sin(2 * np.pi * 1.5 * t + 0.5)])
        qd = np.gradient(q, 1 / RATE_HZ, axis=0)
        qdd = np.gradient(qd, 1 / RATE_HZ, axis=0)
        J = leg_jacobian(robot, q)
        stance = (t % 0.66) < 0.3
        F = np.where(stance[:, None], np.column_stack([20 * np.cos(t), (300 + 200 * k) * np.sin(np.pi * (t % 0.66) / 0.3)]), 0.0)
        tau = -np.einsum("kri,kr->ki", J, F)
        out.append(build_trajectory(robot, q, qd, qdd, tau, J, F, stance, case=f"h{h:+.2f}", ground_height_m=h))
    return tuple(out)


def per_sample_force(traj, robot, mu, idx):
    import cvxpy as cp

    from legbridge.limits.qp.force import torque_bounds

    lo, hi = torque_bounds(traj, robot)
    w = 1e3 * max(1.0, float(np.max(np.abs(traj.foot_force_n))))
    t0 = time.perf_counter()
    for k in idx:
        f = cp.Variable(2)
        s = cp.Variable(traj.n_joints, nonneg=True)
        tau = traj.tau_free[k] - traj.jacobian[k].T @ f
        cons = [tau <= hi[k] + s, tau >= lo[k] - s, f[0] <= mu * f[1], -f[0] <= mu * f[1], f[1] >= 0]
        cp.Problem(cp.Minimize(cp.sum_squares(f - traj.foot_force_n[k]) + w * cp.sum(s)), cons).solve(solver="CLARABEL")
    return (time.perf_counter() - t0) / len(idx)


def per_sample_motion(traj, robot, settings, idx):
    import cvxpy as cp

    from legbridge.limits.qp.motion import accel_limits
    from legbridge.robots.actuator_limits import max_joint_speed

    joints = [robot.joint(n) for n in traj.joint_names]
    lower = np.array([j.lower_rad for j in joints])
    upper = np.array([j.upper_rad for j in joints])
    vmax = np.array([max_joint_speed(j).value for j in joints])
    amax = accel_limits(traj, robot, settings)
    dt = 1.0 / traj.rate_hz
    prev = [np.clip(traj.q[idx[0] - 2], lower, upper), np.clip(traj.q[idx[0] - 1], lower, upper)]
    t0 = time.perf_counter()
    for k in idx:
        q = cp.Variable(traj.n_joints)
        cons = [q >= lower, q <= upper, cp.abs(q - prev[-1]) <= vmax * dt,
                cp.abs(q - 2 * prev[-1] + prev[-2]) <= amax[k] * dt * dt]
        cp.Problem(cp.Minimize(cp.sum_squares(q - traj.q[k])), cons).solve(solver="CLARABEL")
        prev = [prev[-1], q.value if q.value is not None else prev[-1]]
    return (time.perf_counter() - t0) / len(idx)


def main():
    from legbridge.limits.checks.case import check_plan
    from legbridge.limits.verdict import rank
    from legbridge.limits.checks.results import CheckSettings

    robot, trajs = load()
    settings = CheckSettings(rate_hz=RATE_HZ)
    n_total = sum(t.n_samples for t in trajs)
    check_plan(trajs[:1], robot, settings)  # warm-up: imports and first cvxpy compile
    t0 = time.perf_counter()
    reviews = check_plan(trajs, robot, settings)
    whole = time.perf_counter() - t0
    qp_time = sum(r.force_qp.solve_time_s + r.motion_qp.solve_time_s for r in reviews)
    n_stance = sum(int(np.sum(t.stance)) for t in trajs)
    print(f"whole check (all limits, thermal, both batched QPs): {n_total} samples in {whole:.3f} s = "
          f"{n_total / whole:,.0f} samples/s (target: < 2 s) -> {'met' if whole < 2.0 else 'NOT met'}")
    print(f"batched QPs alone (compile included): {qp_time:.3f} s; force QP over {n_stance} stance samples, "
          f"motion QP over {n_total} samples")
    for i in rank(r.summary for r in reviews):
        s = reviews[i].summary
        print(f"  {s.case}: {s.verdict.value}, worst {s.worst.text if s.worst else '-'}")
    mu = robot.ground_friction
    tf = tm = 0.0
    for traj in trajs:
        st = np.flatnonzero(traj.stance)
        idx_f = st[np.linspace(0, st.size - 1, min(SUBSET // len(trajs), st.size)).astype(int)] if st.size else st
        tf += per_sample_force(traj, robot, mu, idx_f) * st.size if st.size else 0.0
        idx_m = np.arange(2, 2 + SUBSET // len(trajs))
        tm += per_sample_motion(traj, robot, settings, idx_m) * traj.n_samples
    per = tf + tm
    print(f"per-sample cvxpy path: timed on {SUBSET // len(trajs)} samples per case for each QP and EXTRAPOLATED to all "
          f"samples: force {tf:.2f} s + motion {tm:.2f} s = {per:.2f} s")
    print(f"ratio per-sample / batched QPs: {per / qp_time:.1f}x (target >= 20x) -> {'met' if per / qp_time >= 20 else 'NOT met'}")
    print(f"ratio per-sample QPs / whole batched check: {per / whole:.1f}x")


if __name__ == "__main__":
    main()
