"""Joint range: joint angle against the hard stops, with a warning band before each stop.

Utilisation = 1 - (distance to the nearer stop) / (half the range): 0 at mid-range, exactly 1 on a
stop, above 1 beyond it. value: joint angle [rad]; allowed: the nearer stop [rad]. The 'near' band
is ``settings.range_margin_rad`` before the stop when given (else ``margin`` of the half range).
"""

from __future__ import annotations

import numpy as np

from .base import CheckContext, Limit, PANEL_ANGLE, SCOPE_JOINT, trace



def range_utilisation(q, lower_rad: float, upper_rad: float) -> tuple[np.ndarray, np.ndarray]:
    """(utilisation, the nearer stop) of joint angles ``q`` [rad] between two hard stops."""
    q = np.asarray(q, dtype=float)
    half = 0.5 * (upper_rad - lower_rad)
    to_hi, to_lo = upper_rad - q, q - lower_rad
    return 1.0 - np.minimum(to_hi, to_lo) / half, np.where(to_hi <= to_lo, upper_rad, lower_rad)


def evaluate(ctx: CheckContext):
    """This limit's LimitTraces for one case (value, allowed and utilisation per sample)."""
    out = []
    for i, joint in ctx.joints():
        q = ctx.traj.q[:, i]
        lo, hi = joint.lower_rad, joint.upper_rad
        half = 0.5 * (hi - lo)
        util, allowed = range_utilisation(q, lo, hi)
        near = None if ctx.settings.range_margin_rad is None else 1.0 - ctx.settings.range_margin_rad / half
        out.append(trace("joint_range", joint.name, "rad", q, allowed, util, near_from=near, source="hard stops"))
    return tuple(out)


LIMITS = (Limit("joint_range", "joint range", "rad", SCOPE_JOINT, PANEL_ANGLE, 10, evaluate, caution="joint range"),)
