"""The checker: every limit at every sample of a case, the two QPs, segments, verdict, ranking.

    check_case(traj, robot, settings) -> CaseReview
    check_plan(trajs, robot, settings) -> tuple[CaseReview, ...]
    rank_cases(reviews) -> tuple[CaseRank, ...]      (worst case first)

Fail closed: a NaN anywhere in a limit's utilisation, a sample the mapping flagged, a QP that is not
solved to optimality and a sample the force QP finds infeasible by itself are findings; a case with
findings has not passed.
"""

from __future__ import annotations

import numpy as np

from legbridge.mapping.joint_trajectory import FLAG_NAMES

from . import thermal as thermal_model
from .checks import CHECKS, CheckContext
from .checks.regen_energy import step_regen_energy_j
from .checks.supply_power import total_power_w
from .qp import force_feasibility, nearest_motion
from .results import (
    CASE_EXCEEDS,
    CASE_NEAR,
    CASE_NOT_EVALUATED,
    CASE_WITHIN,
    SEVERITY_EXCEEDS,
    SEVERITY_NEAR,
    CaseRank,
    CaseReview,
    CheckSettings,
)
from .segments import trace_segments


def _times(traj, mask) -> str:
    t = np.asarray(traj.time_s)[mask]
    return f"{int(mask.sum())} samples, first at t = {t[0]:.4f} s" if t.size else "0 samples"


def _flag_findings(traj) -> list[str]:
    flags = np.asarray(traj.flags).astype(np.int64)
    out = []
    for bit, name in FLAG_NAMES.items():
        mask = (flags & bit) != 0
        if mask.any():
            out.append(f"mapping: {name} ({_times(traj, mask)})")
    other = flags & ~np.int64(sum(FLAG_NAMES))
    if np.any(other):
        out.append(f"mapping: unknown flag bits ({_times(traj, other != 0)})")
    return out


def check_case(traj, robot, settings: CheckSettings | None = None) -> CaseReview:
    """Check one JointTrajectory against the robot's modelled limits (see limits.checks, limits.qp)."""
    settings = settings or CheckSettings()
    for name in traj.joint_names:
        robot.joint(name)  # unknown joint: LegbridgeError listing the valid ones
    mu = float(settings.friction if settings.friction is not None else robot.ground_friction)
    th = thermal_model.simulate(traj, robot, settings.duration_s)
    ctx = CheckContext(traj, robot, settings, mu, th)
    traces = tuple(t for mod in CHECKS for t in mod.evaluate(ctx))
    findings = _flag_findings(traj)
    segments = []
    worst: dict[str, float] = {}
    for tr in traces:
        u = np.asarray(tr.utilisation, dtype=float)
        nan = np.isnan(u)
        if nan.any():
            findings.append(f"{tr.limit}{' of ' + tr.joint if tr.joint else ''}: value not finite, not evaluated "
                            f"({_times(traj, nan)})")
        w = float(np.max(np.where(nan, np.inf, u), initial=0.0))
        worst[tr.limit] = max(worst.get(tr.limit, 0.0), w)
        segments.extend(trace_segments(traj.case, tr, traj.time_s, settings.margin))
    force_sol = motion_sol = None
    if settings.run_qps:
        _, force_sol = force_feasibility(traj, robot, mu, settings.solver)
        _, motion_sol = nearest_motion(traj, robot, settings, settings.solver)
        for sol in (force_sol, motion_sol):
            if not sol.ok:
                findings.append(f"QP {sol.name}: solver {sol.solver} returned status '{sol.status}' (no verified solution)")
        if force_sol.ok:
            bad = np.asarray(force_sol.values["infeasible"])
            if bad.any():
                findings.append(f"QP force_feasibility: no ground force within the torque-speed envelope and "
                                f"friction cone ({_times(traj, bad)}); torque slack up to "
                                f"{float(np.max(force_sol.values['torque_slack_nm'])):.3g} N m")
    if any(s.severity == SEVERITY_EXCEEDS for s in segments):
        verdict = CASE_EXCEEDS
    elif findings:
        verdict = CASE_NOT_EVALUATED
    elif any(s.severity == SEVERITY_NEAR for s in segments):
        verdict = CASE_NEAR
    else:
        verdict = CASE_WITHIN
    regen = step_regen_energy_j(traj)
    regen.setflags(write=False)
    p_tot = total_power_w(traj)
    power = {"peak_motor_w": {n: float(np.max(traj.electrical_power_w[:, i], initial=-np.inf)) for i, n in enumerate(traj.joint_names)},
             "peak_total_w": float(np.max(p_tot, initial=-np.inf)), "min_total_w": float(np.min(p_tot, initial=np.inf))}
    segments.sort(key=lambda s: (s.t_start_s, s.limit, s.joint))
    return CaseReview(case=traj.case, ground_height_m=float(traj.ground_height_m), verdict=verdict, worst=worst,
                      segments=tuple(segments), traces=traces, findings=tuple(findings), trajectory=traj,
                      thermal_time_s=th.time_s, winding_temp_c=th.winding_temp_c,
                      time_to_temp_limit_s=dict(th.time_to_limit_s), force_qp=force_sol, motion_qp=motion_sol,
                      thermal=th, regen_energy_j=regen, power_w=power)


def check_plan(trajs, robot, settings: CheckSettings | None = None) -> tuple[CaseReview, ...]:
    """check_case for each JointTrajectory of a plan, in order."""
    return tuple(check_case(t, robot, settings) for t in trajs)


_VERDICT_RANK = {CASE_EXCEEDS: 3, CASE_NOT_EVALUATED: 2, CASE_NEAR: 1, CASE_WITHIN: 0}


def rank_cases(reviews) -> tuple[CaseRank, ...]:
    """Cases ordered worst first: by verdict (exceeds, not evaluated, near, within), then by the
    highest utilisation of any limit. Answers 'which disturbance cases exceed motor limits'."""
    ranks = []
    for r in reviews:
        if r.worst:
            limit = max(r.worst, key=lambda k: r.worst[k])
            u = r.worst[limit]
            joints = [t.joint for t in r.traces if t.limit == limit
                      and float(np.max(np.where(np.isnan(t.utilisation), np.inf, t.utilisation), initial=0.0)) == u]
            joint = joints[0] if joints else ""
        else:
            limit, u, joint = "", float("nan"), ""
        ranks.append(CaseRank(r.case, r.verdict, limit, joint, u,
                              sum(s.severity == SEVERITY_EXCEEDS for s in r.segments),
                              sum(s.severity == SEVERITY_NEAR for s in r.segments)))
    ranks.sort(key=lambda c: (_VERDICT_RANK.get(c.verdict, 3), c.worst_utilisation), reverse=True)
    return tuple(ranks)
