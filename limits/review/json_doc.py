"""The Review as a JSON document (schema ``legbridge.review/1``), written atomically.

Schema (every number SI; a number that is not finite is written as null; times in seconds):

    schema          "legbridge.review/1" (SCHEMA_VERSION below)
    tool_version    legbridge version that wrote the file
    provenance      versions of legbridge, Python, NumPy, SciPy, Pinocchio (pin), cvxpy, Clarabel,
                    OSQP and the QP solver used (legbridge.robots.version.provenance)
    created         when the review was made (ISO 8601)
    plan_path, plan_sha256      the plan file and the SHA-256 (hex) of its bytes (null if unknown)
    robot, robot_sha256         robot name and the SHA-256 of its description file
    robot_path                  the robot description file reviewed (what `legbridge after-test` re-reads)
    legs, gait                  a biped's legs (['left', 'right'], [] for one leg) and its gait in words (null)
    settings        the CheckSettings used (rate_hz, duration_s, margin, friction, supply_power_w,
                    regen_energy_j, range_margin_rad, max_joint_accel_rad_s2, run_qps, solver)
    cautions        list of caution paragraphs (limits.cautions.CAUTIONS); always present
    limits          every modelled limit: {name, display, unit, scope}
    ranking         cases worst first: {case, verdict, worst_limit, worst_joint, worst_utilisation,
                    n_exceeds, n_near}
    sweep           null, or {window: {lo_m, hi_m, n_within}, offsets: n, note} (sweep.json has the rest)
    sweep_note      why no ground-height sweep was run, or ''
    warnings        what the plan and the robot disagree on without a refusal (leg length, mass)

    cases           one object per case, in plan order:
      name, ground_height_m
      verdict       "within" | "near" | "exceeds" | "not_evaluated"; verdict_text: the words shown
      passed        true only when no limit is exceeded and nothing was left unevaluated
      worst         limit name -> highest utilisation (value / allowed) over joints and samples
      worst_by_joint  list of {limit, joint, utilisation}, worst first
      findings      list of strings: what could not be evaluated (fail closed)
      segments      list of {joint ('' = whole leg), limit, severity ("exceeds" | "near"),
                    t_start_s, t_end_s, i_start, i_end (sample indices, inclusive), peak, allowed,
                    unit, utilisation}
      thermal       {duration_s (null: the plan repeated for as long as the test runs), periodic,
                    assumed_test (in words), max_winding_temp_c: joint -> hottest temperature in the
                    assumed test [degC], steady_state_peak_c, runaway: joint -> bool, rms_current_a,
                    limit_temp_c: joint -> limit, time_to_limit_s: joint -> time or null}
      regen_energy_j_per_step   list of energies regenerated per step [J]
      power_w       {peak_motor_w: joint -> W, peak_total_w, min_total_w}
      spring_steps  list of {joint, time_s, kind ("touchdown" | "liftoff"), step_nm, windup_rad,
                    min_time_s}: torque steps the plan asks through series springs (never turned
                    into currents); windup_rad = step / k, min_time_s = |windup| / motor-side speed limit
      base_residual {max_force_x_n, max_force_z_n, max_moment_nm, t_max_force_s}: the largest wrench the
                    body would need beyond what the leg gives (plan's body motion vs the leg's masses)
      qp            {force_feasibility, nearest_motion}: each null (not run) or {status, ok, solver,
                    solve_time_s, residuals: {primal_inf, stationarity_inf, complementarity_inf,
                    objective, solver_time_s}, and for the force QP max_shortfall_n,
                    max_shortfall_pct, n_infeasible_samples; for the motion QP max_deviation_rad
                    (joint -> rad), max_foot_deviation_m}
      corrected_recheck  null, or {verdict, still_exceeds: [{limit, joint, utilisation}]}: the
                    nearest-motion QP's corrected targets checked again with every check

Limit names: limits.checks.limit_names() (the 'limits' list of the document).
"""

from __future__ import annotations

from pathlib import Path

import numpy as np

from legbridge.robots.files import json_ready, write_json as _write_json

from ..cautions import CAUTIONS
from .. import checks as registry
from .review import Review

SCHEMA_VERSION = "legbridge.review/1"


def _qp(sol, kind: str, joint_names):
    if sol is None:
        return None
    out = {"status": sol.status, "ok": sol.ok, "solver": sol.solver, "solve_time_s": sol.solve_time_s,
           "residuals": dict(sol.residuals)}
    v = sol.values
    if kind == "force" and v:
        out["max_shortfall_n"] = float(np.max(v["shortfall_n"], initial=0.0))
        out["max_shortfall_pct"] = float(np.max(v["shortfall_pct"], initial=0.0))
        out["n_infeasible_samples"] = int(np.sum(v["infeasible"]))
    if kind == "motion" and v:
        dev = np.abs(v["deviation_rad"])
        out["max_deviation_rad"] = {n: float(np.max(dev[:, i], initial=0.0)) for i, n in enumerate(joint_names)}
        out["max_foot_deviation_m"] = float(np.max(v["foot_deviation_norm_m"], initial=0.0))
    return out


def case_to_json(case) -> dict:
    """One case object of the document (see the module docstring)."""
    traj = case.trajectory
    th = case.thermal
    s = case.summary
    return {
        "name": case.case,
        "ground_height_m": case.ground_height_m,
        "verdict": s.verdict.value,
        "verdict_text": s.verdict.words,
        "passed": s.passes,
        "worst": s.per_limit,
        "worst_by_joint": [{"limit": w.limit, "joint": w.joint, "utilisation": w.utilisation} for w in s.by_limit],
        "findings": list(case.findings),
        "segments": [{k: getattr(g, k) for k in ("joint", "limit", "severity", "t_start_s", "t_end_s", "i_start", "i_end",
                                                   "peak", "allowed", "unit", "utilisation")} for g in case.segments],
        "thermal": {"duration_s": th.duration_s, "periodic": th.periodic, "assumed_test": th.describe(),
                    "max_winding_temp_c": {n: float(np.max(th.phase_temp_c[:, i])) for i, n in enumerate(th.joint_names)},
                    "steady_state_peak_c": dict(th.steady_peak_c), "runaway": dict(th.runaway),
                    "rms_current_a": {n: float(th.rms_current_a[i]) for i, n in enumerate(th.joint_names)},
                    "limit_temp_c": {n: float(th.max_temp_c[i]) for i, n in enumerate(th.joint_names)},
                    "time_to_limit_s": dict(th.time_to_limit_s)},
        "regen_energy_j_per_step": [] if case.regen_energy_j is None else case.regen_energy_j,
        "power_w": dict(case.power_w),
        "spring_steps": [{"joint": x.joint, "time_s": x.time_s, "kind": x.kind, "step_nm": x.step_nm,
                          "windup_rad": x.windup_rad, "min_time_s": x.min_time_s} for x in case.spring_steps],
        "base_residual": traj.base_residual_summary(),
        "qp": {"force_feasibility": _qp(case.force_qp, "force", traj.joint_names),
               "nearest_motion": _qp(case.motion_qp, "motion", traj.joint_names)},
        "corrected_recheck": None if case.corrected is None else {
            "verdict": case.corrected.verdict.value,
            "still_exceeds": [{"limit": w.limit, "joint": w.joint, "utilisation": w.utilisation}
                              for w in case.corrected.by_limit if w.utilisation > 1.0]},
    }


def _ranking(review: Review) -> list[dict]:
    out = []
    for c in review.ranked:
        s = c.summary
        w = s.worst
        out.append({"case": c.case, "verdict": s.verdict.value, "worst_limit": w.limit if w else "",
                    "worst_joint": w.joint if w else "", "worst_utilisation": w.utilisation if w else None,
                    "n_exceeds": s.n_exceeds, "n_near": s.n_near})
    return out


def _sweep(review: Review):
    sw = review.sweep
    if sw is None:
        return None
    w = sw.window
    return {"offsets": len(sw.offsets), "window": {"lo_m": w.lo_m, "hi_m": w.hi_m, "n_within": w.n_within},
            "below": w.below.text, "above": w.above.text}


def review_to_json(review: Review) -> dict:
    """The whole review as a JSON-ready dict (non-finite numbers already None)."""
    from dataclasses import asdict

    plan, robot = review.plan, review.robot
    doc = {
        "schema": SCHEMA_VERSION,
        "tool_version": review.provenance.get("legbridge"),
        "provenance": dict(review.provenance),
        "created": review.created,
        "plan_path": getattr(plan, "path", None),
        "plan_sha256": getattr(plan, "sha256", None) or None,
        "robot": robot.name,
        "robot_sha256": robot.sha256 or None,
        "robot_path": str(robot.source) if getattr(robot, "source", None) else None,
        "legs": list(robot.legs),
        "gait": review.gait or None,
        "settings": asdict(review.settings),
        "cautions": list(CAUTIONS),
        "limits": [{"name": lim.name, "display": lim.display, "unit": lim.unit, "scope": lim.scope} for lim in registry.all_limits()],
        "ranking": _ranking(review),
        "cases": [case_to_json(c) for c in review.cases],
        "sweep": _sweep(review),
        "sweep_note": review.sweep_note,
        "warnings": list(review.warnings),
    }
    return json_ready(doc)


def write_json(doc: dict, path, *, force: bool = False) -> Path:
    """Write ``doc`` to ``path`` atomically; an existing file is replaced only with ``force``
    (otherwise OutputExistsError)."""
    return _write_json(doc, path, force=force)
