"""Voltage envelope: the terminal voltage the winding needs, V = R_hot I + Ke w_m (DC-equivalent), against
the voltage the drive can apply, Actuator.max_voltage_v. R_hot is the winding resistance at the
winding's temperature limit (robots.actuator_limits.hot_winding_resistance_ohm): the winding may be
that hot at any moment of the test, and a hotter winding needs more voltage for the same current. |V| covers all four torque-speed quadrants
(motoring and braking, both directions). I and w_m come from the trajectory's motor side, so a
series spring's deflection rate is included. value: V [V] (signed); allowed: V_max [V]."""

from __future__ import annotations

import numpy as np

from legbridge.robots.actuator_limits import hot_winding_resistance_ohm

from .base import CheckContext, Limit, PANEL_TORQUE, SCOPE_JOINT, ratio, trace



def evaluate(ctx: CheckContext):
    """This limit's LimitTraces for one case (value, allowed and utilisation per sample)."""
    out = []
    for i, joint in ctx.joints():
        act = joint.actuator
        r_hot = hot_winding_resistance_ohm(act)
        v = r_hot * ctx.traj.current_a[:, i] + act.back_emf_v_s_per_rad * ctx.traj.motor_speed_rad_s[:, i]
        out.append(trace("voltage", joint.name, "V", v, act.max_voltage_v, ratio(np.abs(v), act.max_voltage_v),
                         source=f"drive voltage (bus x modulation); winding resistance {r_hot:.4g} ohm at "
                                f"{act.thermal.max_winding_temp_c:g} degC"))
    return tuple(out)


LIMITS = (Limit("voltage", "voltage", "V", SCOPE_JOINT, PANEL_TORQUE, 40, evaluate, caution="the motor voltage envelope"),)
