"""Joint targets at the controller rate as CSV, NPZ or JSON (format from the file extension).

Layout: ONE file for all cases, with a ``case`` column naming the case of each row (rows grouped
by case, in the order given, time increasing within a case). Columns:

    case, time_s, then per joint (robot order) <joint>_position_rad, <joint>_velocity_rad_s,
    <joint>_torque_nm, <joint>_motor_position_rad, <joint>_current_a, for a biped then
    <leg>_phase per leg (LEG_PHASES: 1 stance, 0 swing as the plan says, 2 generated swing), and
    last ``flags`` (the mapping's FLAG_* bits, 0 = nothing flagged). A biped's joints are
    <leg>_<joint> (left_hip_position_rad ...); the metadata names its gait.

Metadata (CSV: the first line, ``# legbridge-targets `` followed by one JSON object; NPZ: the array
``metadata_json``; JSON: the ``metadata`` object): SHA-256 of the plan and robot files
(plan.sha256, robot.sha256), rate, units per column, the tool version
(importlib.metadata.version("legbridge")), case names, ground heights, flag counts per case and
reason, and the plan's scaling when it was nondimensional. JSON writes non-finite numbers as null.

Writing is atomic (a temporary file beside the target, then os.replace); an existing file is not
overwritten unless ``force=True`` (otherwise legbridge.robots.errors.OutputExistsError).
"""

from __future__ import annotations

import io
import json
from pathlib import Path

import numpy as np

from legbridge.robots.errors import TargetsExportError
from legbridge.robots.files import check_outputs, write_atomic
from legbridge.robots.robot import Robot
from legbridge.robots.version import provenance as version_provenance
from legbridge.robots.version import tool_version

from .joint_trajectory import FLAG_NAMES, JointTrajectory
from .plan import Plan

CSV_METADATA_PREFIX = "# legbridge-targets "
FORMATS = (".csv", ".npz", ".json")
JOINT_COLUMNS = (
    ("position_rad", "q", "rad"),
    ("velocity_rad_s", "qd", "rad/s"),
    ("torque_nm", "tau", "N m"),
    ("motor_position_rad", "motor_position_rad", "rad (motor shaft)"),
    ("current_a", "current_a", "A (DC-equivalent)"),
)

LEG_PHASES = {0: "swing, the plan's motion (the flight that ends in this leg's touchdown)", 1: "stance",
              2: "swing, generated (mapping.swing)"}


def column_names(joint_names, legs=()) -> list[str]:
    """The exported columns in order (see the module docstring)."""
    cols = ["case", "time_s"]
    for j in joint_names:
        cols.extend(f"{j}_{suffix}" for suffix, _, _ in JOINT_COLUMNS)
    cols.extend(f"{leg}_phase" for leg in legs)
    return cols + ["flags"]


def leg_phase_codes(traj: JointTrajectory) -> np.ndarray:
    """(n, legs) LEG_PHASES code of each leg per sample; (n, 0) for one leg."""
    if not traj.legs or traj.leg_contact is None:
        return np.zeros((traj.n_samples, 0))
    contact = np.asarray(traj.leg_contact, dtype=bool)
    gen = np.asarray(traj.leg_generated, dtype=bool)
    return np.where(contact, 1.0, np.where(gen, 2.0, 0.0))


def flag_counts(traj: JointTrajectory) -> dict:
    """Flagged samples per FLAG_* reason, plus 'any' (samples with at least one flag)."""
    out = {name: int(np.count_nonzero(traj.flags & bit)) for bit, name in FLAG_NAMES.items()}
    out["any"] = int(np.count_nonzero(traj.flags))
    return out


def _numeric_block(traj: JointTrajectory) -> np.ndarray:
    """(n, 1 + 5 j) float block: time, then the joint columns."""
    parts = [traj.time_s[:, None]]
    for j in range(traj.n_joints):
        parts.extend(getattr(traj, attr)[:, j:j + 1] for _, attr, _ in JOINT_COLUMNS)
    parts.append(leg_phase_codes(traj))
    return np.hstack(parts)


def build_metadata(trajs, *, plan: Plan, robot: Robot, rate_hz: float, provenance: dict | None = None) -> dict:
    """The metadata dictionary written with the targets (provenance: legbridge.robots.version.provenance()
    unless given)."""
    units = {"time_s": "s", "flags": "bit flags (legbridge.mapping.joint_trajectory.FLAG_*)"}
    for j in robot.limb_joint_names:
        units.update({f"{j}_{suffix}": unit for suffix, _, unit in JOINT_COLUMNS})
    units.update({f"{leg}_phase": "code (metadata leg_phases)" for leg in robot.legs})
    meta = {
        "content": "legbridge joint targets",
        "tool_version": tool_version(),
        "provenance": dict(provenance) if provenance is not None else version_provenance(),
        "plan": {"path": str(plan.path), "sha256": plan.sha256},
        "robot": {"name": robot.name, "path": robot.source, "sha256": robot.sha256},
        "rate_hz": float(rate_hz),
        "layout": "one file, a 'case' column names the case of each row",
        "columns": column_names(robot.limb_joint_names, robot.legs),
        "units": units,
        "joint_names": list(robot.limb_joint_names),
        "cases": [t.case for t in trajs],
        "ground_height_m": {t.case: t.ground_height_m for t in trajs},
        "samples": {t.case: t.n_samples for t in trajs},
        "flag_counts": {t.case: flag_counts(t) for t in trajs},
        "base_residual": {t.case: t.base_residual_summary() for t in trajs},
        "flag_bits": {str(bit): name for bit, name in FLAG_NAMES.items()},
        "conventions": "SI units; x forward, z up; joint angles zero hanging straight down, positive about +y; "
                       "joint torque applied by the actuator to the child segment, positive about +y",
    }
    if robot.legs:
        meta["legs"] = list(robot.legs)
        meta["gait"] = {t.case: t.gait for t in trajs}
        meta["leg_phases"] = {str(k): v for k, v in LEG_PHASES.items()}
    if plan.scaling is not None:
        s = plan.scaling
        meta["scaling"] = {"length_m": s.length_m, "mass_kg": s.mass_kg, "gravity_m_s2": s.gravity_m_s2, "source": s.source}
    return meta


def _csv_text(trajs, meta: dict) -> str:
    buf = io.StringIO()
    buf.write(CSV_METADATA_PREFIX + json.dumps(meta, separators=(",", ":")) + "\n")
    buf.write(",".join(meta["columns"]) + "\n")
    for t in trajs:
        name = t.case
        if any(c in name for c in ',"\n\r'):
            name = '"' + name.replace('"', '""') + '"'
        name = name.replace("%", "%%")
        block = _numeric_block(t)
        fmt = name + "," + ",".join(["%.12g"] * block.shape[1]) + ",%d"
        data = np.hstack([block, t.flags[:, None].astype(float)])
        np.savetxt(buf, data, fmt=fmt, delimiter=",")
    return buf.getvalue()


def _npz_arrays(trajs, meta: dict) -> dict:
    cols = meta["columns"]
    blocks = np.vstack([_numeric_block(t) for t in trajs]) if trajs else np.zeros((0, len(cols) - 2))
    arrays = {"case": np.array([t.case for t in trajs for _ in range(t.n_samples)], dtype=str)}
    for k, name in enumerate(cols[1:-1]):
        arrays[name] = blocks[:, k]
    arrays["flags"] = np.concatenate([t.flags for t in trajs]).astype(np.int64) if trajs else np.zeros(0, np.int64)
    arrays["metadata_json"] = np.array(json.dumps(meta))
    return arrays


def _json_list(a: np.ndarray) -> list:
    a = np.asarray(a, dtype=float)
    out = a.tolist()
    if not np.all(np.isfinite(a)):
        out = [v if np.isfinite(v) else None for v in out]
    return out


def _json_doc(trajs, meta: dict) -> dict:
    cols = meta["columns"]
    cases = []
    for t in trajs:
        block = _numeric_block(t)
        data = {name: _json_list(block[:, k]) for k, name in enumerate(cols[1:-1])}
        data["flags"] = [int(v) for v in t.flags]
        cases.append({"case": t.case, "ground_height_m": t.ground_height_m, "data": data})
    return {"metadata": meta, "cases": cases}


def targets_bytes(trajs, name: str, *, plan: Plan, robot: Robot, rate_hz: float, provenance: dict | None = None) -> bytes:
    """The content of a targets file called ``name`` (its extension picks .csv, .npz or .json)."""
    ext = Path(name).suffix.lower()
    trajs = tuple(trajs)
    if ext not in FORMATS:
        raise TargetsExportError("unknown targets format", path=str(name), expected=f"an extension in {list(FORMATS)}",
                                 found=Path(name).suffix)
    for t in trajs:
        if not np.isclose(t.rate_hz, rate_hz, rtol=1e-12, atol=0.0):
            raise TargetsExportError(f"case '{t.case}' was translated at another rate", key="rate_hz",
                                     expected=f"{rate_hz:g} Hz", found=t.rate_hz)
        if tuple(t.joint_names) != tuple(robot.limb_joint_names):
            raise TargetsExportError(f"case '{t.case}' has other joints than robot '{robot.name}'", key="joint_names",
                                     expected=list(robot.limb_joint_names), found=list(t.joint_names))
    meta = build_metadata(trajs, plan=plan, robot=robot, rate_hz=rate_hz, provenance=provenance)
    if ext == ".csv":
        return _csv_text(trajs, meta).encode("utf-8")
    if ext == ".npz":
        buf = io.BytesIO()
        np.savez_compressed(buf, **_npz_arrays(trajs, meta))
        return buf.getvalue()
    return json.dumps(_json_doc(trajs, meta), allow_nan=False).encode("utf-8")


def write_targets(trajs, path, *, plan: Plan, robot: Robot, rate_hz: float, force: bool = False) -> Path:
    """Write the joint targets of ``trajs`` (JointTrajectory, one per case) to ``path``; returns the path.

    The format follows the extension (.csv, .npz, .json). Raises OutputExistsError when the file
    exists and ``force`` is False or when ``path`` is the plan or robot file, OutputFolderError for
    a missing folder, TargetsExportError for an unknown extension or a trajectory whose rate is not
    ``rate_hz`` [Hz].
    """
    p = Path(path)
    if p.suffix.lower() not in FORMATS:
        raise TargetsExportError("unknown targets format", path=str(p), expected=f"an extension in {list(FORMATS)}",
                                 found=p.suffix)
    check_outputs([p], inputs=[getattr(plan, "path", None), getattr(robot, "source", None) or None], force=force)
    return write_atomic(p, targets_bytes(trajs, p.name, plan=plan, robot=robot, rate_hz=rate_hz), force=force)


def read_targets_metadata(path) -> dict:
    """The metadata of a targets file written by write_targets (any of the three formats)."""
    p = Path(path)
    ext = p.suffix.lower()
    if ext == ".csv":
        with open(p, encoding="utf-8") as fh:
            first = fh.readline()
        if not first.startswith(CSV_METADATA_PREFIX):
            raise TargetsExportError("not a legbridge targets file", path=str(p), key="line 1",
                                     expected=repr(CSV_METADATA_PREFIX.strip()), found=first[:40])
        return json.loads(first[len(CSV_METADATA_PREFIX):])
    if ext == ".npz":
        with np.load(p, allow_pickle=False) as z:
            return json.loads(str(z["metadata_json"]))
    if ext == ".json":
        return json.loads(p.read_text(encoding="utf-8"))["metadata"]
    raise TargetsExportError("unknown targets format", path=str(p), expected=f"an extension in {list(FORMATS)}", found=p.suffix)
