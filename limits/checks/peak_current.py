"""Drive peak current: |I| (DC-equivalent, the trajectory's motor side) against the drive's peak
current. value: I [A] (signed); allowed: I_peak [A]."""

from __future__ import annotations

import numpy as np

from .base import CheckContext, Limit, PANEL_TORQUE, SCOPE_JOINT, ratio, trace



def evaluate(ctx: CheckContext):
    """This limit's LimitTraces for one case (value, allowed and utilisation per sample)."""
    out = []
    for i, joint in ctx.joints():
        cur = ctx.traj.current_a[:, i]
        ipk = joint.actuator.peak_current_a
        out.append(trace("peak_current", joint.name, "A", cur, ipk, ratio(np.abs(cur), ipk), source="drive peak current"))
    return tuple(out)


LIMITS = (Limit("peak_current", "peak current", "A", SCOPE_JOINT, PANEL_TORQUE, 50, evaluate, caution="drive current"),)
