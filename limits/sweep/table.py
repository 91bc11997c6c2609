"""Sweep results as a table: CSV (one row per plan, robot and offset) and a JSON document
(schema ``legbridge.sweep/1``), both written atomically (temporary file in the same folder, then
rename); an existing file is replaced only with ``force``.

CSV columns (units in the names): plan, plan_sha256, robot, robot_sha256, offset_m, case, outcome
('completed' / 'fell' / 'tripped': a biped's swing foot reached the ground before its touchdown), fall_reason, end_time_s, n_apex, apex_rms_dz_m, apex_rms_dvx_m_s,
apex_final_dz_m, apex_final_dvx_m_s, verdict ('within', 'near', 'exceeds', 'not_evaluated',
'not_checked'), within (completed within the modelled limits: 1/0), in_window (1/0), worst_limit,
worst_joint, worst_utilisation, n_exceeds, n_near, n_findings, qps_run (1/0), then
``utilisation_<limit>`` for every limit met in the sweep (highest over joints and samples).
Missing or non-finite numbers are empty cells in CSV ('inf' for an infinite utilisation) and null in JSON.
"""

from __future__ import annotations

import csv
import io
import math
from pathlib import Path

from legbridge.limits.cautions import CAUTIONS
from legbridge.limits.checks import limit_names as all_limit_names
from legbridge.limits.sweep.model import SCHEMA_VERSION
from legbridge.robots.files import json_ready, json_text, write_atomic

BASE_COLUMNS = (
    "plan", "plan_sha256", "robot", "robot_sha256", "offset_m", "case", "outcome", "fall_reason", "end_time_s",
    "n_apex", "apex_rms_dz_m", "apex_rms_dvx_m_s", "apex_final_dz_m", "apex_final_dvx_m_s", "verdict", "within",
    "in_window", "worst_limit", "worst_joint", "worst_utilisation", "n_exceeds", "n_near", "n_findings", "qps_run",
)


def _in_window(sweep, r) -> bool:
    w = sweep.window
    return (not w.empty) and w.lo_m <= r.offset_m <= w.hi_m


def limit_names(sweeps) -> tuple[str, ...]:
    """Every limit that appears in any offset's utilisation, in the checks' listing order."""
    met = {k for s in sweeps for r in s.offsets for k, _ in r.worst}
    known = [n for n in all_limit_names() if n in met]
    return tuple(known + sorted(met - set(known)))


def rows(sweeps) -> list[dict]:
    """One dict per (pair, offset) with BASE_COLUMNS and utilisation_<limit> keys (floats may be nan/inf)."""
    limits = limit_names(sweeps)
    out = []
    for s in sweeps:
        for r, e in zip(s.offsets, s.apex_errors):
            row = {
                "plan": s.plan_path, "plan_sha256": s.plan_sha256, "robot": s.robot_name, "robot_sha256": s.robot_sha256,
                "offset_m": r.offset_m, "case": r.case, "outcome": r.status, "fall_reason": r.fall_reason or "",
                "end_time_s": r.end_time_s, "n_apex": e.n_apex, "apex_rms_dz_m": e.rms_dz_m,
                "apex_rms_dvx_m_s": e.rms_dvx_m_s, "apex_final_dz_m": e.final_dz_m, "apex_final_dvx_m_s": e.final_dvx_m_s,
                "verdict": str(r.verdict), "within": int(r.within), "in_window": int(_in_window(s, r)),
                "worst_limit": r.worst_limit, "worst_joint": r.worst_joint, "worst_utilisation": r.worst_utilisation,
                "n_exceeds": r.n_exceeds, "n_near": r.n_near, "n_findings": len(r.findings), "qps_run": int(r.qps_run),
            }
            w = r.worst_dict
            for lim in limits:
                row[f"utilisation_{lim}"] = w.get(lim, math.nan)
            out.append(row)
    return out


def _cell(v) -> str:
    if isinstance(v, float):
        if math.isnan(v):
            return ""
        return "inf" if v == math.inf else ("-inf" if v == -math.inf else repr(v))
    return str(v)


def to_csv_text(sweeps) -> str:
    """The CSV table (header row, then one row per offset)."""
    rs = rows(sweeps)
    cols = list(BASE_COLUMNS) + [f"utilisation_{lim}" for lim in limit_names(sweeps)]
    buf = io.StringIO()
    w = csv.writer(buf, lineterminator="\n")
    w.writerow(cols)
    for row in rs:
        w.writerow([_cell(row[c]) for c in cols])
    return buf.getvalue()




def _end(e) -> dict:
    return {"kind": e.kind, "first_out_m": e.first_out_m, "limit": e.limit, "joint": e.joint,
            "utilisation": e.utilisation, "text": e.text}


def to_json_doc(sweeps, provenance: dict | None = None) -> dict:
    """The JSON document: schema, tool and dependency versions (legbridge.robots.version.provenance
    unless given), cautions, and per (plan, robot) pair its settings, window and offsets."""
    from legbridge.robots.version import provenance as version_provenance

    prov = dict(provenance) if provenance is not None else version_provenance()
    docs = []
    for s in sweeps:
        offs = []
        for r, e in zip(s.offsets, s.apex_errors):
            offs.append({
                "offset_m": r.offset_m, "case": r.case, "outcome": r.status, "fall_reason": r.fall_reason,
                "end_time_s": r.end_time_s, "verdict": str(r.verdict), "within": r.within, "in_window": _in_window(s, r),
                "worst": dict(r.worst), "worst_limit": r.worst_limit, "worst_joint": r.worst_joint,
                "worst_utilisation": r.worst_utilisation, "n_exceeds": r.n_exceeds, "n_near": r.n_near,
                "findings": list(r.findings), "qps_run": r.qps_run,
                "apex": {"time_s": list(r.apex_time_s), "z_m": list(r.apex_z_m), "vx_m_s": list(r.apex_vx_m_s)},
                "apex_error": {"n_paired": e.n_paired, "dz_m": list(e.dz_m), "dvx_m_s": list(e.dvx_m_s),
                               "rms_dz_m": e.rms_dz_m, "rms_dvx_m_s": e.rms_dvx_m_s, "final_dz_m": e.final_dz_m,
                               "final_dvx_m_s": e.final_dvx_m_s},
            })
        st = s.settings
        w = s.window
        docs.append({
            "plan": s.plan_path, "plan_sha256": s.plan_sha256, "robot": s.robot_name, "robot_path": s.robot_path,
            "robot_sha256": s.robot_sha256, "nominal_leg_length_m": s.nominal_leg_length_m,
            "duration_s": s.duration_s, "sim_rate_hz": s.sim_rate_hz, "qps": s.qps,
            "settings": {"rate_hz": st.rate_hz, "duration_s": st.duration_s, "margin": st.margin, "friction": st.friction},
            "all_within": s.all_within,
            "window": {"lo_m": w.lo_m, "hi_m": w.hi_m, "n_within": w.n_within, "below": _end(w.below), "above": _end(w.above)},
            "offsets": offs,
        })
    return json_ready({"schema": SCHEMA_VERSION, "tool_version": prov.get("legbridge"), "provenance": prov,
                       "cautions": list(CAUTIONS), "sweeps": docs})


def write_csv(sweeps, path, *, force: bool = False) -> Path:
    """Write the CSV table atomically."""
    return write_atomic(path, to_csv_text(sweeps), force=force)


def write_json(sweeps, path, *, force: bool = False, provenance: dict | None = None) -> Path:
    """Write the JSON document atomically."""
    return write_atomic(path, json_text(to_json_doc(sweeps, provenance)), force=force)


__all__ = ["BASE_COLUMNS", "limit_names", "rows", "to_csv_text", "to_json_doc", "write_csv", "write_json"]
