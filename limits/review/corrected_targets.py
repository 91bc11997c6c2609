"""Export of the nearest feasible joint motion (the motion QP's result) as MODIFIED targets.

The file is never the reviewed plan: its first line says MODIFIED, its metadata names the plan and
robot it was derived from and says how it was checked, and its file name must contain
"modified" so that it cannot pass for the original targets on the way to the hardware.

Layout (CSV): a first line ``# legbridge-MODIFIED-targets {json metadata}``, a header row, then one
row per sample: ``case``, ``time_s``, and per joint ``<joint>_position_rad`` (the QP's positions),
``<joint>_velocity_rad_s`` (forward differences of those positions at the export rate, the same
differences the QP bounds by the speed limit; the last sample repeats the one before) and
``<joint>_deviation_rad`` (modified minus planned). The review checked the modified motion again
(limits.checks.case.recheck_corrected); review it as a plan of its own before any use.
"""

from __future__ import annotations
from legbridge.robots.errors import Described

import io
import json
from pathlib import Path

import numpy as np

from legbridge.robots.errors import CorrectedTargetsError
from legbridge.robots.files import check_outputs, write_atomic
from legbridge.robots.version import tool_version

CSV_PREFIX = "# legbridge-MODIFIED-targets "



def modified_motion(review) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """(positions, velocities, deviations), each (n, j) [rad, rad/s, rad], of one case's motion QP."""
    sol = review.motion_qp
    if sol is None:
        raise CorrectedTargetsError(f"case '{review.case}': the nearest-motion QP was not run", key="run_qps",
                                    expected="the QPs run (the default)", found=Described("not run"))
    if not sol.ok:
        raise CorrectedTargetsError(f"case '{review.case}': the nearest-motion QP did not solve",
                                    expected="an optimal solution", found=sol.status)
    q = np.asarray(sol.values["q_corrected_rad"], dtype=float)
    rate = float(review.trajectory.rate_hz)
    v = np.empty_like(q)
    v[:-1] = np.diff(q, axis=0) * rate
    v[-1:] = v[-2:-1] if q.shape[0] > 1 else 0.0
    return q, v, np.asarray(sol.values["deviation_rad"], dtype=float)


def check_marked_name(path) -> Path:
    """Refuse a file name for modified targets that does not say so (CorrectedTargetsError)."""
    p = Path(path)
    if "modified" not in p.name.lower() or p.suffix.lower() != ".csv":
        raise CorrectedTargetsError("modified targets need a marked CSV file name", path=str(p),
                                    expected="a name containing 'modified' ending in .csv (e.g. targets-modified.csv)",
                                    found=p.name)
    return p


def write_corrected_targets(review, path, *, force: bool = False):
    """Write every case's modified motion of a limits.review.Review to ``path`` (CSV; the name must
    contain 'modified'; never the plan or robot file)."""
    plan, robot, reviews = review.plan, review.robot, review.cases
    p = check_marked_name(path)
    check_outputs([p], inputs=[getattr(plan, "path", None), getattr(robot, "source", None) or None], force=force)
    motions = [modified_motion(r) for r in reviews]  # every case solved, or nothing is written
    joints = list(robot.limb_joint_names)
    cols = ["case", "time_s"] + [f"{j}_{s}" for j in joints for s in ("position_rad", "velocity_rad_s", "deviation_rad")]
    meta = {
        "content": "MODIFIED joint targets: the nearest motion within the hard stops, speed limits and the actuators' "
                   "torque (linearised about the plan), stance foot held (nearest-motion QP). NOT the reviewed plan. "
                   "The review checked it again (corrected_recheck in review.json); review it as a plan of its own "
                   "before any use.",
        "tool_version": tool_version(),
        "provenance": dict(review.provenance),
        "derived_from": {"plan": {"path": str(plan.path), "sha256": plan.sha256},
                         "robot": {"name": robot.name, "path": robot.source, "sha256": robot.sha256}},
        "rate_hz": float(reviews[0].trajectory.rate_hz) if reviews else None,
        "columns": cols,
        "qp": {r.case: {"status": r.motion_qp.status, "solver": r.motion_qp.solver} for r in reviews},
        "max_deviation_rad": {r.case: float(np.max(np.abs(m[2]), initial=0.0)) for r, m in zip(reviews, motions)},
    }
    buf = io.StringIO()
    buf.write(CSV_PREFIX + json.dumps(meta, separators=(",", ":")) + "\n")
    buf.write(",".join(cols) + "\n")
    for r, (q, v, dq) in zip(reviews, motions):
        name = r.case if not any(c in r.case for c in ',"\n\r') else '"' + r.case.replace('"', '""') + '"'
        block = np.column_stack([r.trajectory.time_s] + [a[:, i] for i in range(len(joints)) for a in (q, v, dq)])
        np.savetxt(buf, block, fmt=name.replace("%", "%%") + "," + ",".join(["%.12g"] * block.shape[1]), delimiter=",")
    return write_atomic(p, buf.getvalue(), force=force)
