"""A readable text summary of a loaded robot and the limits derived from its actuator data.

``robot_summary(robot) -> str`` lists segments (or the URDF chain), joints and ranges, and per joint
the derived limits of robots.actuator_limits: peak and continuous torque, no-load speed, the
tightest joint speed and torque with their source, stall torque, reflected inertia N^2 J, the
corners of the voltage-limited torque-speed envelope in all four quadrants, the thermal model and
the spring; then the loader's warnings. The caller adds the caution text (robots does not import
limits).
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np
import pinocchio as pin

from . import actuator_limits as al
from .leg_model import build_leg_model
from .robot import Actuator, Robot


@dataclass(frozen=True)
class EnvelopeCorner:
    """A corner of the joint-side torque-speed envelope (zero acceleration).

    quadrant: 'Q1'..'Q4' (Q1: speed > 0, torque > 0 motoring; Q2: speed < 0, torque > 0 braking;
    Q3: both negative, motoring; Q4: speed > 0, torque < 0 braking); label says what ends there.
    """

    quadrant: str
    label: str
    joint_speed_rad_s: float
    joint_torque_nm: float


def envelope_corners(act: Actuator) -> tuple[EnvelopeCorner, ...]:
    """Corners of the DC-equivalent envelope |I| <= I_pk, |R I + Ke w| <= V_max, |w| <= w_max.

    Motor-side break speeds: peak current meets the voltage line at w_c = (V_max - R I_pk) / Ke
    (0 if the voltage cannot drive peak current at standstill), no-load speed w_0 = V_max / Ke,
    and the end of the envelope w_lim = min(w_max, (V_max + R I_pk) / Ke) beyond which no current
    is feasible. Torques are evaluated by robots.actuator_limits.joint_torque_bounds_nm.
    """
    n, r, ke, vmax, ipk = (act.gear_ratio, act.winding_resistance_ohm, act.back_emf_v_s_per_rad,
                           act.max_voltage_v, act.peak_current_a)
    w_lim = min(act.max_motor_speed_rad_s, (vmax + r * ipk) / ke)
    w_c = min(max((vmax - r * ipk) / ke, 0.0), w_lim)
    w_0 = min(vmax / ke, w_lim)
    speeds = np.array([w_c, w_0, -w_lim, -w_c, -w_0, w_lim]) / n
    lo, hi = al.joint_torque_bounds_nm(act, speeds)
    end0 = "no-load speed" if vmax / ke <= w_lim else "motor speed limit"
    return (
        EnvelopeCorner("Q1", "peak torque ends (voltage limit)", speeds[0], float(hi[0])),
        EnvelopeCorner("Q1", end0, speeds[1], float(hi[1])),
        EnvelopeCorner("Q2", "braking torque at the speed limit", speeds[2], float(hi[2])),
        EnvelopeCorner("Q3", "peak torque ends (voltage limit)", speeds[3], float(lo[3])),
        EnvelopeCorner("Q3", end0, speeds[4], float(lo[4])),
        EnvelopeCorner("Q4", "braking torque at the speed limit", speeds[5], float(lo[5])),
    )


def _deg(x: float) -> str:
    return f"{math.degrees(x):.1f} deg"


def _actuator_lines(act: Actuator) -> list[str]:
    n, eta = act.gear_ratio, act.gearbox_efficiency
    out = [
        f"    motor: {act.motor_type}, DC-equivalent Kt {act.torque_constant_nm_per_a:.4g} N m/A, "
        f"Ke {act.back_emf_v_s_per_rad:.4g} V s/rad, R {act.winding_resistance_ohm:.4g} ohm, "
        f"V_max {act.max_voltage_v:.4g} V (bus {act.bus_voltage_v:.4g} V)",
        f"    gear ratio {n:g}, efficiency {eta:g}; current peak {act.peak_current_a:.4g} A, "
        f"continuous {act.continuous_current_a:.4g} A (DC-equivalent)",
        f"    peak joint torque {al.peak_joint_torque_nm(act):.1f} N m, continuous {al.continuous_joint_torque_nm(act):.1f} N m",
        f"    no-load joint speed {al.no_load_motor_speed_rad_s(act) / n:.2f} rad/s "
        f"(motor {al.no_load_motor_speed_rad_s(act):.1f} rad/s); motor speed limit {act.max_motor_speed_rad_s / n:.2f} rad/s at the joint",
        f"    stall torque (whole voltage at standstill) motor {al.stall_motor_torque_nm(act):.3g} N m, "
        f"joint {eta * n * al.stall_motor_torque_nm(act):.1f} N m",
        f"    reflected rotor inertia N^2 J {al.reflected_inertia_kgm2(act):.4g} kg m^2",
        "    torque-speed envelope corners (joint side, zero acceleration):",
    ]
    for c in envelope_corners(act):
        out.append(f"      {c.quadrant} {c.joint_speed_rad_s:+8.2f} rad/s {c.joint_torque_nm:+8.1f} N m  {c.label}")
    th = act.thermal
    if th.two_node:
        out.append(f"    thermal: two-node, winding-housing {th.winding_resistance_k_per_w:g} K/W / {th.winding_time_constant_s:g} s, "
                   f"housing-ambient {th.housing_resistance_k_per_w:g} K/W / {th.housing_time_constant_s:g} s")
    else:
        out.append(f"    thermal: one-node, {th.winding_resistance_k_per_w:g} K/W, {th.winding_time_constant_s:g} s")
    loss = act.winding_resistance_ohm * act.continuous_current_a**2
    out.append(f"      max winding {th.max_winding_temp_c:g} C, ambient {th.ambient_temp_c:g} C; steady rise at continuous "
               f"current {loss * th.total_resistance_k_per_w:.0f} K (copper loss {loss:.1f} W)")
    return out


def robot_summary(robot: Robot) -> str:
    """Multi-line summary of a robot and its derived limits (SI units; degrees labelled)."""
    leg = build_leg_model(robot)
    leg_mass = pin.computeTotalMass(leg.model) - robot.body_mass_kg
    lines = [
        f"robot {robot.name}",
        f"  source {robot.source} (sha256 {robot.sha256[:16]}...)",
        f"  body {robot.body_mass_kg:.3g} kg, pitch inertia {robot.body_pitch_inertia_kgm2:.3g} kg m^2; leg {leg_mass:.3g} kg; "
        f"total {robot.body_mass_kg + leg_mass:.3g} kg",
        f"  knee {robot.knee}; ground friction {robot.ground_friction:g}; hip offset (x, z) "
        f"({robot.hip_offset_m[0]:.3g}, {robot.hip_offset_m[1]:.3g}) m; nominal leg length "
        + (f"{robot.nominal_leg_length_m:g} m" if robot.nominal_leg_length_m else "not given")
        + f"; max reach {leg.max_reach_m:.3f} m",
    ]
    if robot.urdf is not None:
        u = robot.urdf
        lines.append(f"  URDF {u.urdf_path}: chain {u.hip_link} -> {u.foot_frame}, joints {list(u.leg_joints)}")
        lines.append("  locked: " + (", ".join(f"{n} = {v:g}" for n, v in u.locked_joints) or "none"))
        lines.append("  link lengths (zero pose): " + ", ".join(f"{x:.3f} m" for x in leg.link_lengths_m))
    else:
        lines.append("  segments (hip to foot):")
        for s in robot.segments:
            lines.append(f"    {s.name}: length {s.length_m:g} m, mass {s.mass_kg:g} kg, com {s.com_m:g} m, "
                         f"inertia {s.inertia_kgm2:g} kg m^2")
    if len(robot.joints) == 3:
        lines.append(f"  foot pitch rule {robot.foot_pitch_rad:g} rad")
    lines.append("  joints:")
    for j in robot.joints:
        sp, tq = al.max_joint_speed(j), al.max_joint_torque(j)
        lines.append(f"  {j.name}: range [{j.lower_rad:g}, {j.upper_rad:g}] rad ([{_deg(j.lower_rad)}, {_deg(j.upper_rad)}])")
        lines.append(f"    max joint speed {sp.value:.2f} rad/s ({sp.source}); max joint torque {tq.value:.1f} N m ({tq.source})")
        lines.extend(_actuator_lines(j.actuator))
        if j.spring is not None:
            lines.append(f"    series spring {j.spring.stiffness_nm_per_rad:g} N m/rad, damping {j.spring.damping_nms_per_rad:g} N m s/rad")
    lines.append("  warnings:" if robot.warnings else "  warnings: none")
    lines.extend(f"    {w}" for w in robot.warnings)
    return "\n".join(lines)
