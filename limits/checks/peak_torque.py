"""Peak joint torque: tau against the drive's peak current through Kt, gear ratio and efficiency
and the joint's effort limit when given (robots.actuator_limits.joint_torque_limits_nm with
voltage=False, rotor inertia included), at the motor side's speed and acceleration (for a series-elastic
joint the gearbox output moves with the spring's wind-up: efficiency direction and rotor inertia follow it). value: tau [N m] (signed); allowed: the bound on tau's side."""

from __future__ import annotations

import numpy as np

from legbridge.robots.actuator_limits import joint_torque_limits_nm

from .base import CheckContext, Limit, PANEL_TORQUE, SCOPE_JOINT, signed_ratio, trace



def evaluate(ctx: CheckContext):
    """This limit's LimitTraces for one case (value, allowed and utilisation per sample)."""
    out = []
    for i, joint in ctx.joints():
        tau = ctx.traj.tau[:, i]
        speed, accel = ctx.traj.motor_side_rates(i, joint.actuator.gear_ratio)  # the gearbox's own motion
        lo, hi, source = joint_torque_limits_nm(joint, speed, accel, voltage=False)
        allowed = np.where(tau >= 0, hi, lo)
        out.append(trace("peak_torque", joint.name, "N m", tau, allowed, signed_ratio(tau, lo, hi), source=source))
    return tuple(out)


LIMITS = (Limit("peak_torque", "peak torque", "N m", SCOPE_JOINT, PANEL_TORQUE, 30, evaluate, caution="peak torque"),)
