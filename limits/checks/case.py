"""The checker: every limit at every sample of a case, the two QPs, segments and the case summary.

    check_case(traj, robot, settings) -> CaseReview
    check_plan(trajs, robot, settings) -> tuple[CaseReview, ...]

Fail closed: a NaN anywhere in a limit's utilisation, a sample the mapping flagged, a QP that is not
solved to optimality and a sample the force QP finds infeasible by itself are findings; a case with
findings has not passed (legbridge.limits.verdict).
"""

from __future__ import annotations

import numpy as np

from legbridge.limits.verdict import summarise
from legbridge.mapping.joint_trajectory import FLAG_NAMES
from legbridge.mapping.motor_side import spring_torque_steps

from legbridge.limits import checks as registry
from . import thermal as thermal_model
from .base import CheckContext, fold_phase_ends
from .regen_energy import step_regen_energy_j
from .results import CaseReview, CheckSettings
from .segments import trace_segments
from .supply_power import total_power_w


def _times(traj, mask) -> str:
    t = np.asarray(traj.time_s)[mask]
    return f"{int(mask.sum())} samples, first at t = {t[0]:.4f} s" if t.size else "0 samples"


def _flag_findings(traj) -> list[str]:
    """Samples the mapping flagged (out of reach, IK not converged, singular, non-finite): findings."""
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
    """Check one JointTrajectory against the robot's modelled limits (every Limit of limits.checks,
    then the QPs of limits.qp when settings.run_qps)."""
    from legbridge.limits.qp import force_feasibility, nearest_motion

    settings = settings or CheckSettings()
    for name in traj.joint_names:
        robot.joint(name)  # unknown joint: LegbridgeError listing the valid ones
    mu = float(settings.friction if settings.friction is not None else robot.ground_friction)
    th = thermal_model.simulate(traj, robot, settings.duration_s)
    ctx = CheckContext(traj, robot, settings, mu, th)
    traces = tuple(t for lim in registry.all_limits() for t in lim.evaluate(ctx))
    ends = getattr(traj, "phase_ends", None)
    if ends is not None and ends.n_samples:  # peaks judged at each phase's end too (mapping.resample)
        end_ctx = CheckContext(ends, robot, settings, mu, None)
        end_traces = tuple(t for lim in registry.all_limits() if lim.instantaneous for t in lim.evaluate(end_ctx))
        traces = fold_phase_ends(traces, end_traces, traj.phase_end_index)
    findings = _flag_findings(traj)
    segments = []
    for tr in traces:
        nan = np.isnan(np.asarray(tr.utilisation, dtype=float))
        if nan.any():
            findings.append(f"{tr.limit}{' of ' + tr.joint if tr.joint else ''}: value not finite, not evaluated "
                            f"({_times(traj, nan)})")
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
    corrected = None
    if motion_sol is not None and motion_sol.ok:
        corrected = recheck_corrected(traj, robot, settings, motion_sol)
    segments.sort(key=lambda s: (s.t_start_s, s.limit, s.joint))
    summary = summarise(traj.case, traces, segments, findings)
    regen = step_regen_energy_j(traj)
    regen.setflags(write=False)
    p_tot = total_power_w(traj)
    power = {"peak_motor_w": {n: float(np.max(traj.electrical_power_w[:, i], initial=-np.inf)) for i, n in enumerate(traj.joint_names)},
             "peak_total_w": float(np.max(p_tot, initial=-np.inf)), "min_total_w": float(np.min(p_tot, initial=np.inf))}
    steps = spring_torque_steps(robot, traj.joint_names, traj.time_s, traj.tau, traj.stance)
    return CaseReview(case=traj.case, ground_height_m=float(traj.ground_height_m), summary=summary,
                      segments=tuple(segments), traces=traces, findings=tuple(findings), trajectory=traj,
                      thermal=th, force_qp=force_sol, motion_qp=motion_sol, regen_energy_j=regen, power_w=power,
                      spring_steps=steps, corrected=corrected)


def recheck_corrected(traj, robot, settings: CheckSettings, motion_sol):
    """The nearest-motion QP's corrected targets checked again with every check (no QPs): the
    CaseSummary of what the corrected motion still exceeds (mapping.retarget rebuilds its rates,
    torques and motor side)."""
    from dataclasses import replace

    from legbridge.mapping.retarget import with_joint_motion

    moved = with_joint_motion(traj, robot, motion_sol.values["q_corrected_rad"])
    return check_case(moved, robot, replace(settings, run_qps=False)).summary


def check_plan(trajs, robot, settings: CheckSettings | None = None) -> tuple[CaseReview, ...]:
    """check_case for each JointTrajectory of a plan, in order."""
    return tuple(check_case(t, robot, settings) for t in trajs)
