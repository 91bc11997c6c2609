"""Benchmark: translate_plan() against a straightforward per-sample implementation (not a pytest test).

    /work/venv/bin/python tests/perf/bench_translate.py [--synthetic] [--repeat N]

Plan: the demo plan (legbridge.mapping.slip.demo.demo_plan) when it exists, otherwise a synthetic
(invented) five-case hopping plan, 2 s per case sampled at 1 kHz. Both paths translate at 1 kHz on
the example leg. The per-sample path shares the resampling, then for every sample solves the IK
numerically with Pinocchio (damped Gauss-Newton from the previous sample), takes the Jacobian and
J_dot qd from Pinocchio, solves for qd and qdd, runs one rnea with the foot force and does the
motor side with scalar arithmetic. Prints samples/s of both paths, the ratio and the largest
difference between their joint angles and torques.
"""

from __future__ import annotations

import argparse
import time

import numpy as np
import pinocchio as pin


from legbridge.mapping.plan import Plan, ReducedTrajectory
from legbridge.mapping.resample import resample_case
from legbridge.mapping.translate import translate_plan
from legbridge.robots import actuator_limits as al
from legbridge.robots import build_leg_model, load_robot
from legbridge.robots.library import library_path


def synthetic_plan(n_cases=5, duration_s=2.0, plan_rate_hz=1000.0) -> Plan:
    """Invented hopping cases: 0.2 s stance, 0.3 s flight; stance depth and angle sweep vary per case."""
    cases = []
    t = np.arange(0.0, duration_s + 1e-12, 1.0 / plan_rate_hz)
    for k in range(n_cases):
        ph = (t % 0.5) / 0.5
        stance = ph < 0.4
        s = np.where(stance, ph / 0.4, (ph - 0.4) / 0.6)
        depth = 0.04 + 0.01 * k
        l = np.where(stance, 0.72 - depth * np.sin(np.pi * s), 0.72)
        a = np.where(stance, 0.3 - 0.6 * s, -0.3 + 0.6 * s)
        fz = np.where(stance, (600 + 60 * k) * np.sin(np.pi * s), 0.0)
        fx = -0.25 * fz * np.cos(np.pi * s)
        cases.append(ReducedTrajectory(f"case{k}", t, l, a, fx, fz, stance, ground_height_m=-0.01 * k))
    return Plan("synthetic (invented)", "", tuple(cases))


def load_plan() -> Plan:
    try:
        from legbridge.mapping.slip.demo import demo_plan
    except ImportError:
        return synthetic_plan()
    return demo_plan()


def per_sample_translate(case, robot, leg, rate_hz, base):
    """The straightforward path: one numerical IK solve, Jacobians and one rnea per sample. ``base``:
    the fast path's base pitch, velocity and acceleration (in flight the base floats: its state
    comes from mapping.free_flight, which this loop takes as given)."""
    pitch, base_v, base_a = base
    rs = resample_case(case, rate_hz)
    model, data = leg.model, leg.model.createData()
    fid, parent = leg.foot_frame_id, leg.model.frames[leg.foot_frame_id].parentJoint
    n, nj = rs.n_samples, leg.n_joints
    q_out, tau_out, cur_out = np.zeros((n, nj)), np.zeros((n, nj)), np.zeros((n, nj))

    qf = pin.neutral(model)
    qf[leg.q_index] = [0.3, -1.0]
    fext = pin.StdVec_Force()
    for _ in range(model.njoints):
        fext.append(pin.Force.Zero())
    for i in range(n):
        l, a = rs.leg_length.value[i], rs.leg_angle.value[i]
        ld, ad = rs.leg_length.rate[i], rs.leg_angle.rate[i]
        ldd, add = rs.leg_length.accel[i], rs.leg_angle.accel[i]
        target = np.array([l * np.sin(a), -l * np.cos(a)])
        rd = np.array([ld * np.sin(a) + l * ad * np.cos(a), -ld * np.cos(a) + l * ad * np.sin(a)])
        rdd = (ldd - l * ad**2) * np.array([np.sin(a), -np.cos(a)]) + (2 * ld * ad + l * add) * np.array([np.cos(a), np.sin(a)])
        qf[leg.base_q_index] = 0.0
        for _ in range(50):  # IK with the base level (the plan's leg angle is in the world)
            pin.framesForwardKinematics(model, data, qf)
            err = target - (data.oMf[fid].translation - data.oMf[leg.hip_frame_id].translation)[[0, 2]]
            if np.max(np.abs(err)) < 1e-10:
                break
            jl = pin.computeFrameJacobian(model, data, qf, fid, pin.LOCAL_WORLD_ALIGNED)[[0, 2]][:, leg.v_index]
            qf[leg.q_index] += jl.T @ np.linalg.solve(jl @ jl.T + 1e-8 * np.eye(2), err)
        jl = pin.computeFrameJacobian(model, data, qf, fid, pin.LOCAL_WORLD_ALIGNED)[[0, 2]][:, leg.v_index]
        qd = np.linalg.solve(jl, rd)
        vf = np.zeros(model.nv)
        vf[leg.v_index] = qd
        qf_dyn = qf.copy()
        qf_dyn[leg.base_q_index[2]] = pitch[i]
        pin.forwardKinematics(model, data, qf, vf, np.zeros(model.nv))
        jdq = pin.getFrameClassicalAcceleration(model, data, fid, pin.LOCAL_WORLD_ALIGNED).linear[[0, 2]]
        qdd = np.linalg.solve(jl, rdd - jdq)
        stance = bool(rs.stance[i])
        f = np.array([rs.force_x_n[i], rs.force_z_n[i]]) if stance else np.zeros(2)
        af = np.zeros(model.nv)
        af[leg.base_v_index] = base_a[i]
        vf[leg.base_v_index] = base_v[i]
        af[leg.v_index] = qdd
        rot = data.oMi[parent].rotation
        fl = rot.T @ np.array([f[0], 0.0, f[1]])
        lever = model.frames[fid].placement.translation
        fext[parent] = pin.Force(fl, np.cross(lever, fl))
        tau = pin.rnea(model, data, qf_dyn, vf, af, fext)[leg.v_index]
        q_out[i], tau_out[i] = qf[leg.q_index], tau
        for j, joint in enumerate(robot.joints):
            cur_out[i, j] = float(al.current_a(joint.actuator, tau[j], qd[j], qdd[j]))
    return q_out, tau_out, cur_out


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--synthetic", action="store_true", help="use the synthetic five-case plan even if the demo exists")
    ap.add_argument("--repeat", type=int, default=3, help="timing repeats of the fast path (best is kept)")
    args = ap.parse_args()
    robot = load_robot(library_path("example-leg.toml"))
    plan = synthetic_plan() if args.synthetic else load_plan()
    rate = 1000.0
    best = np.inf
    for _ in range(args.repeat):
        t0 = time.perf_counter()
        fast = translate_plan(plan, robot, rate_hz=rate)
        best = min(best, time.perf_counter() - t0)
    n = sum(t.n_samples for t in fast)
    leg = build_leg_model(robot)
    t0 = time.perf_counter()
    slow = [per_sample_translate(c, robot, leg, rate, (f.base_pitch_rad, f.base_velocity, f.base_accel))
            for c, f in zip(plan.cases, fast)]
    t_slow = time.perf_counter() - t0
    dq = max(np.abs(f.q - s[0]).max() for f, s in zip(fast, slow))
    dtau = max(np.abs(f.tau - s[1]).max() for f, s in zip(fast, slow))
    print(f"plan: {plan.path}, {len(plan.cases)} cases, {n} samples at {rate:g} Hz")
    print(f"vectorised translate_plan : {n / best:12,.0f} samples/s  ({best * 1e3:.1f} ms)")
    print(f"per-sample loop           : {n / t_slow:12,.0f} samples/s  ({t_slow * 1e3:.1f} ms)")
    print(f"ratio                     : {t_slow / best:12.1f} x")
    print(f"largest difference        : q {dq:.2e} rad, tau {dtau:.2e} N m")


if __name__ == "__main__":
    main()
