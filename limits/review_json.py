"""The check review as a JSON document (schema ``legbridge.review/1``), written atomically.

Schema (every number SI; a number that is not finite is written as null; times in seconds):

    schema          "legbridge.review/1" (limits.results.SCHEMA_VERSION)
    tool_version    legbridge version that wrote the file
    plan_path, plan_sha256      the plan file and the SHA-256 (hex) of its bytes (null if unknown)
    robot, robot_sha256         robot name and the SHA-256 of its description file
    settings        the CheckSettings used (rate_hz, duration_s, margin, friction, supply_power_w,
                    regen_energy_j, range_margin_rad, max_joint_accel_rad_s2, run_qps, solver)
    cautions        list of caution paragraphs (limits.cautions.CAUTIONS); always present
    ranking         cases worst first: {case, verdict, worst_limit, worst_joint, worst_utilisation,
                    n_exceeds, n_near}
    cases           one object per case, in plan order:
      name, ground_height_m
      verdict       "within" | "near" | "exceeds" | "not_evaluated"; verdict_text: the words shown
      passed        true only when no limit is exceeded and nothing was left unevaluated
      worst         limit name -> highest utilisation (value / allowed) over joints and samples
      findings      list of strings: what could not be evaluated (fail closed)
      segments      list of {joint ('' = whole leg), limit, severity ("exceeds" | "near"),
                    t_start_s, t_end_s, i_start, i_end (sample indices, inclusive), peak, allowed,
                    unit, utilisation}
      thermal       {duration_s, max_winding_temp_c: joint -> highest simulated temperature [degC],
                    limit_temp_c: joint -> limit, time_to_limit_s: joint -> time or null}
      regen_energy_j_per_step   list of energies regenerated per step [J]
      power_w       {peak_motor_w: joint -> W, peak_total_w, min_total_w}
      base_residual {max_force_x_n, max_force_z_n, max_moment_nm, t_max_force_s}: the largest wrench the
                    body would need beyond what the leg gives (plan's body motion vs the leg's masses)
      qp            {force_feasibility, nearest_motion}: each null (not run) or {status, ok, solver,
                    solve_time_s, residuals: {primal_inf, stationarity_inf, complementarity_inf,
                    objective, solver_time_s}, and for the force QP max_shortfall_n,
                    max_shortfall_pct, n_infeasible_samples; for the motion QP max_deviation_rad
                    (joint -> rad), max_foot_deviation_m}

Limit names: joint_range, joint_speed, peak_torque, voltage, peak_current, winding_temperature,
supply_power, regen_energy, unilateral_force, friction_cone, mapping (limits.checks).
"""

from __future__ import annotations

import json
import math
from dataclasses import asdict
from pathlib import Path

import numpy as np

from legbridge.robots.files import write_atomic

from .cautions import CAUTIONS, VERDICT_EXCEEDS, VERDICT_NEAR, VERDICT_NOT_EVALUATED, VERDICT_WITHIN
from .check import rank_cases
from .results import CASE_EXCEEDS, CASE_NEAR, CASE_NOT_EVALUATED, CASE_WITHIN, SCHEMA_VERSION, CheckSettings

VERDICT_TEXT = {CASE_WITHIN: VERDICT_WITHIN, CASE_NEAR: VERDICT_NEAR, CASE_EXCEEDS: VERDICT_EXCEEDS,
                CASE_NOT_EVALUATED: VERDICT_NOT_EVALUATED}


def _num(x):
    if x is None:
        return None
    x = float(x)
    return x if math.isfinite(x) else None


def _clean(obj):
    """Python/NumPy values -> JSON values, non-finite numbers -> None."""
    if isinstance(obj, dict):
        return {str(k): _clean(v) for k, v in obj.items()}
    if isinstance(obj, (list, tuple)):
        return [_clean(v) for v in obj]
    if isinstance(obj, np.ndarray):
        return _clean(obj.tolist())
    if isinstance(obj, (bool, np.bool_)):
        return bool(obj)
    if isinstance(obj, (int, np.integer)):
        return int(obj)
    if isinstance(obj, (float, np.floating)):
        return _num(obj)
    return obj


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


def case_to_json(review) -> dict:
    """One case object of the document (see the module docstring)."""
    traj = review.trajectory
    th = review.thermal
    thermal = None
    if th is not None:
        thermal = {"duration_s": th.duration_s,
                   "max_winding_temp_c": {n: float(np.max(th.winding_temp_c[:, i])) for i, n in enumerate(th.joint_names)},
                   "limit_temp_c": {n: float(th.max_temp_c[i]) for i, n in enumerate(th.joint_names)},
                   "time_to_limit_s": dict(th.time_to_limit_s)}
    return {
        "name": review.case,
        "ground_height_m": review.ground_height_m,
        "verdict": review.verdict,
        "verdict_text": VERDICT_TEXT.get(review.verdict, review.verdict),
        "passed": review.passed,
        "worst": dict(review.worst),
        "findings": list(review.findings),
        "segments": [{k: getattr(s, k) for k in ("joint", "limit", "severity", "t_start_s", "t_end_s", "i_start", "i_end",
                                                   "peak", "allowed", "unit", "utilisation")} for s in review.segments],
        "thermal": thermal,
        "regen_energy_j_per_step": [] if review.regen_energy_j is None else review.regen_energy_j,
        "power_w": dict(review.power_w),
        "base_residual": traj.base_residual_summary(),
        "qp": {"force_feasibility": _qp(review.force_qp, "force", traj.joint_names),
               "nearest_motion": _qp(review.motion_qp, "motion", traj.joint_names)},
    }


def review_to_json(reviews, plan, robot, settings: CheckSettings | None) -> dict:
    """The whole review as a JSON-ready dict (non-finite numbers already None)."""
    from legbridge.robots.version import tool_version

    settings = settings or CheckSettings()
    doc = {
        "schema": SCHEMA_VERSION,
        "tool_version": tool_version(),
        "plan_path": getattr(plan, "path", None),
        "plan_sha256": getattr(plan, "sha256", None) or None,
        "robot": robot.name,
        "robot_sha256": robot.sha256 or None,
        "settings": asdict(settings),
        "cautions": list(CAUTIONS),
        "ranking": [asdict(r) for r in rank_cases(reviews)],
        "cases": [case_to_json(r) for r in reviews],
    }
    return _clean(doc)


def write_json(doc: dict, path, *, force: bool = False) -> Path:
    """Write ``doc`` to ``path`` atomically (temporary file in the same folder, then rename).
    An existing file is replaced only with ``force``; otherwise OutputExistsError."""
    text = json.dumps(doc, indent=2, allow_nan=False) + "\n"
    return write_atomic(path, text, force=force)
