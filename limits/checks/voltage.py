"""Voltage envelope: the terminal voltage the winding needs, V = R I + Ke w_m (DC-equivalent), against
the voltage the drive can apply, Actuator.max_voltage_v. |V| covers all four torque-speed quadrants
(motoring and braking, both directions). I and w_m come from the trajectory's motor side, so a
series spring's deflection rate is included. value: V [V] (signed); allowed: V_max [V]."""

from __future__ import annotations

import numpy as np

from .base import CheckContext, Limit, PANEL_TORQUE, SCOPE_JOINT, ratio, trace



def evaluate(ctx: CheckContext):
    """This limit's LimitTraces for one case (value, allowed and utilisation per sample)."""
    out = []
    for i, joint in ctx.joints():
        act = joint.actuator
        v = act.winding_resistance_ohm * ctx.traj.current_a[:, i] + act.back_emf_v_s_per_rad * ctx.traj.motor_speed_rad_s[:, i]
        out.append(trace("voltage", joint.name, "V", v, act.max_voltage_v, ratio(np.abs(v), act.max_voltage_v),
                         source="drive voltage (bus x modulation)"))
    return tuple(out)


LIMITS = (Limit("voltage", "voltage", "V", SCOPE_JOINT, PANEL_TORQUE, 40, evaluate, caution="the motor voltage envelope"),)
