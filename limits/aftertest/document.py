"""The after-test comparison as JSON (schema 'legbridge.after-test/1') and as terminal lines.

JSON keys::

    schema, tool_version, created, cautions
    review_path, review_sha256, plan_path, plan_sha256, robot, robot_sha256, case
    log: path, sha256, samples, duration_s, channels
    alignment: offset_s, method, confidence, detail, residual_rms_rad; lags_s: joint -> s
    verdict, verdict_text: what the measured samples show against the modelled limits
    measured_segments: [{joint, limit, severity, t_start_s, t_end_s, peak, allowed, unit, utilisation}], worst first
    margin: [{joint, limit, reviewed, measured, share_used}]
    tracking, currents, temperatures: per joint (compare.Tracking, CurrentComparison, TemperatureComparison)
    identified: [{joint, parameter, unit, value, ci_low, ci_high, file_value, relative_change, identified,
                  differs_from_file, method}]
    corrected_robot: {path, sha256, changes} or null; notes
"""

from __future__ import annotations

from dataclasses import asdict

from legbridge.limits.cautions import CAUTIONS, caution_lines
from legbridge.limits.verdict import joint_label, limit_label, utilisation_text

SCHEMA = "legbridge.after-test/1"


PARAMETER_LABELS = {
    "torque_constant_nm_per_a": "torque constant", "gearbox_efficiency": "gearbox efficiency",
    "friction_coulomb_nm": "Coulomb friction", "friction_viscous_nms_per_rad": "viscous friction",
    "winding_resistance_k_per_w": "winding thermal resistance", "winding_time_constant_s": "winding time constant",
    "housing_resistance_k_per_w": "housing thermal resistance", "housing_time_constant_s": "housing time constant",
}


def parameter_label(name: str) -> str:
    """What people read for an identified parameter ('torque constant'); JSON keeps the code name."""
    return PARAMETER_LABELS.get(name, name.replace("_", " "))


def estimates(result):
    """(joint, Estimate) of every identified or held parameter, drive first."""
    out = []
    for joint, fit in result.drive_fits.items():
        for e in (fit.torque_constant_nm_per_a, fit.gearbox_efficiency, fit.friction_coulomb_nm,
                  fit.friction_viscous_nms_per_rad):
            if e is not None:
                out.append((joint, e))
    for joint, fit in result.thermal_fits.items():
        for e in (fit.winding_resistance_k_per_w, fit.winding_time_constant_s, fit.housing_resistance_k_per_w,
                  fit.housing_time_constant_s):
            if e is not None:
                out.append((joint, e))
    return out


MIN_RELATIVE_CHANGE = 0.02
"""An identified value replaces the file's only when it differs by at least this fraction (2 %, a stated
choice: smaller differences are within what a datasheet, a temperature or a unit-to-unit spread
changes, and rewriting them would churn the robot file for nothing)."""


def differs(e) -> bool:
    """The log tells the value from the file's, by enough to matter: identified, the file's value outside
    the 95 % interval, and at least MIN_RELATIVE_CHANGE away."""
    return bool(e.identified and e.file_value is not None and not e.within_ci(e.file_value)
                and abs(e.relative_change or 0.0) >= MIN_RELATIVE_CHANGE)


def after_test_to_json(result, corrected=None) -> dict:
    """The comparison as a JSON-ready dict (keys in the module docstring)."""
    from legbridge.robots.version import tool_version

    from legbridge.limits.review.review import now_iso

    log, al, s = result.log, result.alignment, result.summary
    return {
        "schema": SCHEMA,
        "tool_version": tool_version(),
        "created": now_iso(),
        "cautions": list(CAUTIONS),
        "review_path": result.review_path, "review_sha256": result.review_sha256,
        "plan_path": result.plan_path, "plan_sha256": result.plan_sha256,
        "robot": result.robot.name, "robot_sha256": result.robot.sha256,
        "case": result.case,
        "log": {"path": log.path, "sha256": log.sha256, "samples": int(log.time_s.size),
                "duration_s": float(log.time_s[-1] - log.time_s[0]),
                "channels": [f"{c.owner}.{c.quantity} ({c.column})" for c in log.channels]},
        "alignment": asdict(al), "lags_s": dict(result.lags_s),
        "verdict": s.verdict.value, "verdict_text": s.verdict.words,
        "measured_segments": [{"joint": g.joint, "limit": g.limit, "severity": g.severity.value,
                               "t_start_s": g.t_start_s, "t_end_s": g.t_end_s, "peak": g.peak, "allowed": g.allowed,
                               "unit": g.unit, "utilisation": g.utilisation} for g in result.segments],
        "margin": [asdict(m) for m in result.margin],
        "tracking": [asdict(x) for x in result.tracking],
        "currents": [asdict(x) for x in result.currents],
        "temperatures": [asdict(x) for x in result.temperatures],
        "identified": [{"joint": j, "parameter": e.name, "unit": e.unit, "value": e.value, "ci_low": e.ci_low,
                        "ci_high": e.ci_high, "file_value": e.file_value, "relative_change": e.relative_change,
                        "identified": e.identified, "differs_from_file": differs(e), "method": e.method}
                       for j, e in estimates(result)],
        "corrected_robot": None if corrected is None else {
            "path": str(corrected.path), "sha256": corrected.sha256,
            "changes": [asdict(c) for c in corrected.changes_applied], "notes": list(corrected.notes)},
        "notes": list(result.notes),
    }


SHOWN = 5


def grouped_segments(result) -> list[dict]:
    """The measured segments grouped by joint, limit and severity, worst first: how many runs, the worst
    one (peak, allowed, utilisation, when), the first and last time and the time spent in them [s]."""
    groups: dict = {}
    for g in result.segments:  # worst first already
        k = (g.joint, g.limit, g.severity)
        if k not in groups:
            groups[k] = {"joint": g.joint, "limit": g.limit, "severity": g.severity, "worst": g, "count": 0,
                         "first_s": g.t_start_s, "last_s": g.t_end_s, "time_s": 0.0}
        d = groups[k]
        d["count"] += 1
        d["first_s"], d["last_s"] = min(d["first_s"], g.t_start_s), max(d["last_s"], g.t_end_s)
        d["time_s"] += g.t_end_s - g.t_start_s
    return list(groups.values())


def after_test_lines(result, corrected=None, *, paths=None, rereview: str = "") -> list[str]:
    """The terminal summary: alignment, what the measured samples show, the margin used, what differs
    from the robot file, where the outputs are, and the caution."""
    log, al, s = result.log, result.alignment, result.summary
    out = [f"legbridge after-test: log {log.path} (SHA-256 {log.sha256[:12]}..., {log.time_s.size} samples over "
           f"{log.time_s[-1] - log.time_s[0]:.1f} s) against case {result.case} of the review {result.review_path}",
           f"  aligned by {al.method}: plan time 0 at log time {al.offset_s:.4f} s, confidence {al.confidence:.3f}; {al.detail}",
           "  tracking lag beyond that: " + ", ".join(f"{j} {1e3 * v:.1f} ms" for j, v in result.lags_s.items()),
           "",
           f"Measured: {s.verdict.words}" + (f"; worst {s.worst.text}" if s.worst else "")]
    groups = grouped_segments(result)
    for d in groups[:SHOWN]:
        g = d["worst"]
        out.append(f"  {joint_label(g.joint)} / {limit_label(g.limit)}: {g.severity.value} in {d['count']} run(s) from log "
                   f"{d['first_s']:.1f} s to {d['last_s']:.1f} s; worst at {g.t_start_s:.3f} s, peak {g.peak:.4g} {g.unit} "
                   f"against {g.allowed:.4g} {g.unit}, utilisation {utilisation_text(g.utilisation)}")
    if len(groups) > SHOWN:
        out.append(f"  +{len(groups) - SHOWN} more joint and limit pair(s) (after-test.json lists every run)")
    used = [m for m in result.margin if m.share_used is not None and m.reviewed is not None and m.reviewed > 0.5]
    if used:
        out.append("Reviewed against measured utilisation (share of the reviewed margin used):")
        for m in used[:SHOWN]:
            out.append(f"  {joint_label(m.joint)} / {limit_label(m.limit)}: reviewed {utilisation_text(m.reviewed)}, measured "
                       f"{utilisation_text(m.measured)} ({100 * m.share_used:+.0f} % of the margin)")
    diff = [(j, e) for j, e in estimates(result) if differs(e)]
    out.append(f"What the log says the robot file gets wrong (95 % intervals; differences of {100 * MIN_RELATIVE_CHANGE:g} % "
               "or more):" if diff else
               "No identified parameter differs from the robot file beyond its 95 % interval and by "
               f"{100 * MIN_RELATIVE_CHANGE:g} % or more.")
    for j, e in diff:
        out.append(f"  {j} / {parameter_label(e.name)}: {e.value:.4g} {e.unit} [{e.ci_low:.4g}, {e.ci_high:.4g}], file {e.file_value:.4g} "
                   f"({100 * e.relative_change:+.1f} %)")
    out.extend(f"  Note: {n}" for n in result.notes if "not identified" in n)
    out.append("")
    for label, p in (paths or {}).items():
        out.append(f"{label + ':':<17}{p}")
    if corrected is not None:
        out.append(f"{'Corrected robot:':<17}{corrected.path} (identified values; the original is unchanged)")
    if rereview:
        out.append(f"Review the plan again with it: {rereview}")
    out.append("")
    out.extend(caution_lines())
    return out
