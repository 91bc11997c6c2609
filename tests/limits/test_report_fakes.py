"""A small fake builder of JointTrajectory / CaseReview objects for the report and review tests.

The fakes stand in for translate() and check() so the report can be tested on its own: a sinusoidal
two-joint motion of the invented example leg, with a hip torque peak chosen to exceed the drive's peak
torque in the case named 'bump'. Other test files load this module by path (``load_fakes()``).
"""

from __future__ import annotations

import importlib.util
import math
from pathlib import Path

import numpy as np

from legbridge.limits.results import CASE_WITHIN, SEVERITY_EXCEEDS, SEVERITY_NEAR, CaseReview, LimitSegment, LimitTrace, QPSolution
from legbridge.mapping.joint_trajectory import JointTrajectory
from legbridge.mapping.plan import Plan, ReducedTrajectory, frozen_array
from legbridge.robots.actuator_limits import peak_joint_torque_nm
from legbridge.robots.library import library_path
from legbridge.robots.toml_reader import load_robot


def load_fakes():
    """This module, importable from the other test files (pytest runs with --import-mode=importlib)."""
    spec = importlib.util.spec_from_file_location("legbridge_report_fakes", Path(__file__))
    mod = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(mod)
    return mod


def robot():
    return load_robot(library_path("example-leg.toml"))


def trajectory(case: str, hip_torque_peak_nm: float, *, rate_hz: float = 200.0, duration_s: float = 0.4,
               ground_height_m: float = 0.0) -> JointTrajectory:
    """A smooth two-joint motion; hip torque = hip_torque_peak_nm sin(pi t / T) (one stance hump)."""
    n = int(round(duration_s * rate_hz)) + 1
    t = np.arange(n) / rate_hz
    w = 2 * math.pi / duration_s
    q = np.column_stack([0.3 * np.sin(w * t), -1.0 + 0.4 * np.sin(w * t)])
    qd = np.column_stack([0.3 * w * np.cos(w * t), 0.4 * w * np.cos(w * t)])
    qdd = np.column_stack([-0.3 * w**2 * np.sin(w * t), -0.4 * w**2 * np.sin(w * t)])
    hump = np.sin(math.pi * t / duration_s)
    tau = np.column_stack([hip_torque_peak_nm * hump, -20.0 * hump])
    force = np.column_stack([30.0 * np.cos(w * t), 400.0 * hump])
    z = np.zeros((n, 2))
    jac = np.zeros((n, 2, 2))
    f = lambda a: frozen_array(a)  # noqa: E731
    return JointTrajectory(
        case=case, ground_height_m=ground_height_m, joint_names=("hip", "knee"), rate_hz=rate_hz,
        time_s=f(t), stance=frozen_array(hump > 0.05, bool), q=f(q), qd=f(qd), qdd=f(qdd), tau=f(tau), tau_free=f(z),
        jacobian=f(jac), foot_force_n=f(force), base_residual=f(np.zeros((n, 3))), motor_position_rad=f(10 * q),
        motor_speed_rad_s=f(10 * qd), motor_torque_nm=f(tau / 9), current_a=f(tau / 1.08), voltage_v=f(z),
        electrical_power_w=f(z), mechanical_power_w=f(tau * qd), flags=frozen_array(np.zeros(n), int))


def segments_from(trace: LimitTrace, traj: JointTrajectory, margin: float) -> tuple[LimitSegment, ...]:
    """Runs of consecutive samples with utilisation >= 1 - margin (vectorised run detection)."""
    u = trace.utilisation
    sev = np.where(u > 1.0, 2, np.where(u >= 1.0 - margin, 1, 0))
    edges = np.flatnonzero(np.diff(np.concatenate([[0], sev, [0]])) != 0)
    out = []
    for a, b in zip(edges[:-1], edges[1:]):
        if sev[a] == 0:
            continue
        i = a + int(np.argmax(u[a:b]))
        out.append(LimitSegment(traj.case, trace.joint, trace.limit, SEVERITY_EXCEEDS if sev[a] == 2 else SEVERITY_NEAR,
                                float(traj.time_s[a]), float(traj.time_s[b - 1]), int(a), int(b - 1),
                                float(trace.value[i]), float(trace.allowed[i]), trace.unit, float(u[i])))
    return tuple(out)


def case_review(traj: JointTrajectory, rob, margin: float = 0.1, *, findings=(), thermal=True) -> CaseReview:
    """A CaseReview with one 'peak_torque' trace per joint (|tau| against the drive peak torque)."""
    traces, segs = [], []
    for j, name in enumerate(traj.joint_names):
        allowed = np.full(traj.n_samples, peak_joint_torque_nm(rob.joint(name).actuator))
        val = np.abs(traj.tau[:, j])
        tr = LimitTrace("peak_torque", name, "N m", frozen_array(val), frozen_array(allowed), frozen_array(val / allowed))
        traces.append(tr)
        segs.extend(segments_from(tr, traj, margin))
    verdict = SEVERITY_EXCEEDS if any(s.severity == SEVERITY_EXCEEDS for s in segs) else (
        SEVERITY_NEAR if segs else CASE_WITHIN)
    worst = {"peak_torque": max(float(tr.utilisation.max()) for tr in traces)}  # limit -> highest utilisation
    kw = {}
    if thermal:
        tt = np.linspace(0.0, 120.0, 50)
        th = rob.joints[0].actuator.thermal
        temp = th.ambient_temp_c + 30.0 * (1 - np.exp(-tt / th.winding_time_constant_s))
        kw = dict(thermal_time_s=frozen_array(tt), winding_temp_c=frozen_array(np.column_stack([temp, 0.5 * temp])),
                  time_to_temp_limit_s={"hip": math.inf, "knee": math.inf})
    fq = QPSolution("force feasibility", "optimal", True, 0.01, "CLARABEL",
                    values={"force_n": frozen_array(np.asarray(traj.foot_force_n) * 0.9)})
    return CaseReview(case=traj.case, ground_height_m=traj.ground_height_m, verdict=verdict, worst=worst,
                      segments=tuple(segs), traces=tuple(traces), findings=tuple(findings), trajectory=traj,
                      force_qp=fq, **kw)


def plan_for(trajs, path: str = "/tmp/fake-plan.json") -> Plan:
    cases = tuple(ReducedTrajectory(tr.case, tr.time_s, np.full(tr.n_samples, 0.8), np.zeros(tr.n_samples),
                                    tr.foot_force_n[:, 0], tr.foot_force_n[:, 1], tr.stance, tr.ground_height_m)
                  for tr in trajs)
    return Plan(path=path, sha256="0" * 64, cases=cases, metadata={"description": "invented test plan"})


def reviews_with_violation(rob, margin: float = 0.1):
    """Three cases: 'nominal' within (hip peak 30 N m), 'step' near (41 N m), 'bump' exceeds (50 N m)."""
    trajs = (trajectory("nominal", 30.0), trajectory("step", 41.0, ground_height_m=0.02),
             trajectory("bump", 50.0, ground_height_m=-0.03))
    return trajs, tuple(case_review(tr, rob, margin) for tr in trajs)


def test_fake_bump_case_exceeds_the_hand_computed_peak_torque():
    # Peak joint torque = eta N Kt I_peak (DC motor model, Hughes and Drury, Electric Motors and Drives,
    # 4th ed., ch. 3): 0.9 * 10 * 0.12 N m/A * 40 A = 43.2 N m for the example hip (values from its file).
    rob = robot()
    _, reviews = reviews_with_violation(rob)
    bump = reviews[2]
    seg = [s for s in bump.segments if s.severity == SEVERITY_EXCEEDS]
    assert len(seg) == 1 and seg[0].joint == "hip"
    assert math.isclose(seg[0].allowed, 43.2, rel_tol=1e-12)
    assert math.isclose(seg[0].peak, 50.0, rel_tol=1e-9)  # sin(pi t/T) reaches 1 at the sample t = T/2
    # 50 sin(pi t / 0.4) > 43.2 for t in (0.4/pi) (asin(0.864), pi - asin(0.864)) = (0.1327 s, 0.2673 s)
    lo = 0.4 / math.pi * math.asin(43.2 / 50.0)
    assert lo <= seg[0].t_start_s < lo + 1 / 200.0
    assert 0.4 - lo - 1 / 200.0 < seg[0].t_end_s <= 0.4 - lo
