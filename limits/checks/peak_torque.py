"""Peak joint torque: tau against the drive's peak current through Kt, gear ratio and efficiency
(robots.actuator_limits.joint_torque_bounds_nm with voltage=False, rotor inertia included) and the
joint's effort limit when given. value: tau [N m] (signed); allowed: the bound on tau's side."""

from __future__ import annotations

import numpy as np

from legbridge.robots.actuator_limits import joint_torque_bounds_nm

from .base import CheckContext, signed_ratio, trace

LIMITS = ("peak_torque",)


def evaluate(ctx: CheckContext):
    """This limit's LimitTraces for one case (value, allowed and utilisation per sample)."""
    out = []
    for i, joint in ctx.joints():
        tau = ctx.traj.tau[:, i]
        lo, hi = joint_torque_bounds_nm(joint.actuator, ctx.traj.qd[:, i], ctx.traj.qdd[:, i], voltage=False)
        source = "drive peak current"
        if joint.effort_limit_nm is not None:
            e = joint.effort_limit_nm
            if np.any(hi > e) or np.any(lo < -e):
                source = "drive peak current and joint effort limit"
            hi, lo = np.minimum(hi, e), np.maximum(lo, -e)
        allowed = np.where(tau >= 0, hi, lo)
        out.append(trace("peak_torque", joint.name, "N m", tau, allowed, signed_ratio(tau, lo, hi), source=source))
    return tuple(out)
