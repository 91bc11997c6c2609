"""Joint speed: |qd| against robots.actuator_limits.max_joint_speed (motor speed limit / gear
ratio, no-load speed, or a tighter joint-side value). value |qd| [rad/s]."""

from __future__ import annotations

import numpy as np

from legbridge.robots.actuator_limits import max_joint_speed

from .base import CheckContext, Limit, PANEL_SPEED, SCOPE_JOINT, ratio, trace



def evaluate(ctx: CheckContext):
    """This limit's LimitTraces for one case (value, allowed and utilisation per sample)."""
    out = []
    for i, joint in ctx.joints():
        bound = max_joint_speed(joint)
        v = np.abs(ctx.traj.qd[:, i])
        out.append(trace("joint_speed", joint.name, "rad/s", v, bound.value, ratio(v, bound.value), source=bound.source))
    return tuple(out)


LIMITS = (Limit("joint_speed", "joint speed", "rad/s", SCOPE_JOINT, PANEL_SPEED, 20, evaluate, caution="joint speed"),)
