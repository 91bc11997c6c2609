"""Peak joint torque: tau against the drive's peak current through Kt, gear ratio and efficiency
and the joint's effort limit when given (robots.actuator_limits.joint_torque_limits_nm with
voltage=False, rotor inertia included). value: tau [N m] (signed); allowed: the bound on tau's side."""

from __future__ import annotations

import numpy as np

from legbridge.robots.actuator_limits import joint_torque_limits_nm

from .base import CheckContext, Limit, PANEL_TORQUE, SCOPE_JOINT, signed_ratio, trace



def evaluate(ctx: CheckContext):
    """This limit's LimitTraces for one case (value, allowed and utilisation per sample)."""
    out = []
    for i, joint in ctx.joints():
        tau = ctx.traj.tau[:, i]
        lo, hi, source = joint_torque_limits_nm(joint, ctx.traj.qd[:, i], ctx.traj.qdd[:, i], voltage=False)
        allowed = np.where(tau >= 0, hi, lo)
        out.append(trace("peak_torque", joint.name, "N m", tau, allowed, signed_ratio(tau, lo, hi), source=source))
    return tuple(out)


LIMITS = (Limit("peak_torque", "peak torque", "N m", SCOPE_JOINT, PANEL_TORQUE, 30, evaluate, caution="peak torque"),)
