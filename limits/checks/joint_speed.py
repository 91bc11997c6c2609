"""Joint speed: the motor side against the motor's speed limits, the joint against a joint-side limit.

The gearbox output (for a series-elastic joint the motor side of the spring, theta_m_dot; for a rigid
joint the joint itself) against robots.actuator_limits.max_motor_side_speed_rad_s (motor speed limit
or no-load speed over the gear ratio), and the joint speed |qd| against a tighter joint-side value
(URDF or robot file) when given. One trace per joint whose utilisation is the larger of the two.
value: the speed judged [rad/s]; allowed: its bound [rad/s].
"""

from __future__ import annotations

import numpy as np

from legbridge.robots.actuator_limits import max_joint_speed, max_motor_side_speed_rad_s

from .base import PANEL_SPEED, SCOPE_JOINT, CheckContext, Limit, ratio, trace


def evaluate(ctx: CheckContext):
    """This limit's LimitTraces for one case (value, allowed and utilisation per sample)."""
    out = []
    for i, joint in ctx.joints():
        act = joint.actuator
        motor_speed, _ = ctx.traj.motor_side_rates(i, act.gear_ratio)
        v_m, b_m = np.abs(motor_speed), max_motor_side_speed_rad_s(act)
        u_m = ratio(v_m, b_m)
        bound = max_joint_speed(joint)
        if joint.velocity_limit_rad_s is not None:
            v_j, b_j = np.abs(ctx.traj.qd[:, i]), joint.velocity_limit_rad_s
            u_j = ratio(v_j, b_j)
            joint_wins = u_j > u_m
            value, allowed, util = np.where(joint_wins, v_j, v_m), np.where(joint_wins, b_j, b_m), np.maximum(u_m, u_j)
        else:
            value, allowed, util = v_m, b_m, u_m
        source = bound.source if joint.spring is None else f"{bound.source}; motor side of the series spring"
        out.append(trace("joint_speed", joint.name, "rad/s", value, allowed, util, source=source))
    return tuple(out)


LIMITS = (Limit("joint_speed", "joint speed", "rad/s", SCOPE_JOINT, PANEL_SPEED, 20, evaluate, caution="joint speed"),)
