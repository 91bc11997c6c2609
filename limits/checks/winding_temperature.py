"""Winding temperature through the thermal model (limits.checks.thermal): the rise above ambient at
each plan sample in its hottest repetition over the assumed test (periodic steady state by default,
or the last repetition within --duration), against the allowed rise (max winding temperature -
ambient). Thermal runaway gives an infinite rise (exceeds). value and allowed: rise [K]."""

from __future__ import annotations


from .base import CheckContext, Limit, PANEL_TORQUE, SCOPE_JOINT, ratio, trace



def evaluate(ctx: CheckContext):
    """This limit's LimitTraces for one case (value, allowed and utilisation per sample)."""
    th = ctx.thermal
    out = []
    for i, joint in ctx.joints():
        k = th.joint_names.index(joint.name)
        rise = th.phase_temp_c[:, k] - th.ambient_c[k]
        allowed = th.max_temp_c[k] - th.ambient_c[k]
        out.append(trace("winding_temperature", joint.name, "K", rise, allowed, ratio(rise, allowed),
                         source="winding thermal model: " + th.describe()
                                + ("; thermal runaway (no steady state)" if th.runaway.get(joint.name) else "")))
    return tuple(out)


LIMITS = (Limit("winding_temperature", "winding temperature", "K", SCOPE_JOINT, PANEL_TORQUE, 60, evaluate, caution="winding temperature",
                instantaneous=False),)
