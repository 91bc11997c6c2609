"""Actuator limits derived from the motor, drive and gearbox data (computed, never typed).

All functions are vectorised: speeds, accelerations and torques may be NumPy arrays of any shape.
Joint side quantities carry ``joint_``, motor side ``motor_``. Model (standard DC motor model, e.g.
Hughes and Drury, *Electric Motors and Drives*, 4th ed., ch. 3, in the DC-equivalent convention of
robots.robot):

    motor speed           w_m = N qd                           [rad/s]
    shaft torque          T_s = Kt I - J_r N qdd               [N m]   (rotor inertia on the motor side)
    joint torque          tau = eta N T_s    when T_s w_m >= 0 (motoring, also at standstill)
                          tau = N T_s / eta  when T_s w_m <  0 (joint back-drives the motor)
    terminal voltage      V = R I + Ke w_m,  |V| <= V_max
    drive current         |I| <= I_peak
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from .robot import Actuator, Joint


@dataclass(frozen=True)
class BoundSource:
    """A limit value and where it came from (for reports: 'actuator', 'urdf', 'motor speed'...)."""

    value: float
    source: str


def motor_speed_rad_s(act: Actuator, joint_speed_rad_s):
    """Motor shaft speed [rad/s] for a joint speed [rad/s]."""
    return act.gear_ratio * np.asarray(joint_speed_rad_s, dtype=float)


def _joint_from_shaft(act: Actuator, shaft_torque_nm, motor_speed):
    """Joint torque from motor shaft torque, efficiency applied by power direction."""
    t = np.asarray(shaft_torque_nm, dtype=float)
    n, eta = act.gear_ratio, act.gearbox_efficiency
    back_driven = t * motor_speed < 0.0
    return np.where(back_driven, n * t / eta, eta * n * t)


def _shaft_from_joint(act: Actuator, joint_torque_nm, motor_speed):
    tau = np.asarray(joint_torque_nm, dtype=float)
    n, eta = act.gear_ratio, act.gearbox_efficiency
    back_driven = tau * motor_speed < 0.0
    return np.where(back_driven, tau * eta / n, tau / (eta * n))


def current_a(act: Actuator, joint_torque_nm, joint_speed_rad_s, joint_accel_rad_s2=0.0):
    """Drive current [A] that produces ``joint_torque_nm`` at the given joint speed and acceleration."""
    w = motor_speed_rad_s(act, joint_speed_rad_s)
    shaft = _shaft_from_joint(act, joint_torque_nm, w)
    inertial = act.rotor_inertia_kgm2 * act.gear_ratio * np.asarray(joint_accel_rad_s2, dtype=float)
    return (shaft + inertial) / act.torque_constant_nm_per_a


def terminal_voltage_v(act: Actuator, current, joint_speed_rad_s):
    """DC-equivalent terminal voltage [V] the winding needs: R I + Ke w_m."""
    w = motor_speed_rad_s(act, joint_speed_rad_s)
    return act.winding_resistance_ohm * np.asarray(current, dtype=float) + act.back_emf_v_s_per_rad * w


def winding_resistance_at_ohm(act: Actuator, temp_c) -> float:
    """Winding resistance [ohm] at a winding temperature [degC]: R_ref (1 + alpha (T - T_ref))."""
    return act.winding_resistance_ohm * act.thermal.resistance_factor(temp_c)


def hot_winding_resistance_ohm(act: Actuator) -> float:
    """Winding resistance [ohm] at the winding's temperature limit (max_winding_temp_c): the value the
    voltage checks use, since the winding may be that hot at any moment of a test."""
    return winding_resistance_at_ohm(act, act.thermal.max_winding_temp_c)


def current_bounds_a(act: Actuator, joint_speed_rad_s, *, resistance_ohm: float | None = None):
    """Current interval [A] allowed at a joint speed: drive peak current and voltage envelope, with the
    winding resistance ``resistance_ohm`` (default the file's value at its reference temperature).

    Returns (lo, hi); where lo > hi the speed is beyond what the voltage allows (no current works).
    """
    w = motor_speed_rad_s(act, joint_speed_rad_s)
    r = act.winding_resistance_ohm if resistance_ohm is None else float(resistance_ohm)
    ke, vmax, ipk = act.back_emf_v_s_per_rad, act.max_voltage_v, act.peak_current_a
    lo = np.maximum(-ipk, (-vmax - ke * w) / r)
    hi = np.minimum(ipk, (vmax - ke * w) / r)
    return lo, hi


def joint_torque_bounds_nm(act: Actuator, joint_speed_rad_s, joint_accel_rad_s2=0.0, *, voltage=True,
                           resistance_ohm: float | None = None):
    """Joint torque interval [N m] the actuator can deliver at a joint speed and acceleration.

    With ``voltage=False`` only the drive peak current bounds the torque (the 'peak torque' limit);
    with ``voltage=True`` the back-EMF envelope is applied too (all four torque-speed quadrants).
    Returns (lo, hi); lo > hi means nothing is achievable at that speed.
    """
    qd = np.asarray(joint_speed_rad_s, dtype=float)
    w = motor_speed_rad_s(act, qd)
    if voltage:
        lo_i, hi_i = current_bounds_a(act, qd, resistance_ohm=resistance_ohm)
    else:
        lo_i = np.full_like(w, -act.peak_current_a)
        hi_i = np.full_like(w, act.peak_current_a)
    inertial = act.rotor_inertia_kgm2 * act.gear_ratio * np.asarray(joint_accel_rad_s2, dtype=float)
    kt = act.torque_constant_nm_per_a
    lo = _joint_from_shaft(act, kt * lo_i - inertial, w)
    hi = _joint_from_shaft(act, kt * hi_i - inertial, w)
    return lo, hi


def joint_torque_limits_nm(joint: Joint, joint_speed_rad_s, joint_accel_rad_s2=0.0, *, voltage=True):
    """The joint's torque interval [N m]: joint_torque_bounds_nm of its actuator, tightened by the
    joint's effort limit when it has one. The one place where the effort limit meets the actuator
    bounds (checks, QPs and plots all call it).

    Returns (lo, hi, source): source names what bounds the torque ('drive peak current', plus 'and the
    voltage envelope' with voltage=True, plus 'and joint effort limit' where that is tighter somewhere).
    The voltage envelope uses the winding resistance at its temperature limit
    (hot_winding_resistance_ohm): a check must hold however warm the winding has become.
    """
    act = joint.actuator
    lo, hi = joint_torque_bounds_nm(act, joint_speed_rad_s, joint_accel_rad_s2, voltage=voltage,
                                    resistance_ohm=hot_winding_resistance_ohm(act) if voltage else None)
    source = "drive peak current" + (" and voltage envelope (winding at its temperature limit)" if voltage else "")
    e = joint.effort_limit_nm
    if e is not None:
        if np.any(hi > e) or np.any(lo < -e):
            source += " and joint effort limit"
        lo, hi = np.maximum(lo, -e), np.minimum(hi, e)
    return lo, hi, source


def peak_joint_torque_nm(act: Actuator) -> float:
    """Static joint torque at the drive's peak current, motoring [N m]."""
    return act.gearbox_efficiency * act.gear_ratio * act.torque_constant_nm_per_a * act.peak_current_a


def continuous_joint_torque_nm(act: Actuator) -> float:
    """Static joint torque at the drive's continuous current, motoring [N m]."""
    return act.gearbox_efficiency * act.gear_ratio * act.torque_constant_nm_per_a * act.continuous_current_a


def no_load_motor_speed_rad_s(act: Actuator) -> float:
    """Motor speed where the back-EMF uses the whole available voltage: V_max / Ke [rad/s]."""
    return act.max_voltage_v / act.back_emf_v_s_per_rad


def stall_motor_torque_nm(act: Actuator) -> float:
    """Motor torque at standstill with the whole voltage across the winding: Kt V_max / R [N m]."""
    return act.torque_constant_nm_per_a * act.max_voltage_v / act.winding_resistance_ohm


def reflected_inertia_kgm2(act: Actuator) -> float:
    """Rotor inertia seen at the joint: N^2 J_r [kg m^2]."""
    return act.gear_ratio**2 * act.rotor_inertia_kgm2


def max_motor_side_speed_rad_s(act: Actuator) -> float:
    """The fastest the gearbox output may turn [rad/s] (joint units): the tighter of the motor speed
    limit and the no-load speed, over the gear ratio."""
    return min(act.max_motor_speed_rad_s, no_load_motor_speed_rad_s(act)) / act.gear_ratio


def max_joint_speed(joint: Joint) -> BoundSource:
    """Tightest joint speed bound [rad/s]: motor speed limit, no-load speed, or a joint-side value."""
    act = joint.actuator
    cands = [
        BoundSource(act.max_motor_speed_rad_s / act.gear_ratio, "motor speed limit"),
        BoundSource(no_load_motor_speed_rad_s(act) / act.gear_ratio, "no-load speed (back-EMF)"),
    ]
    if joint.velocity_limit_rad_s is not None:
        cands.append(BoundSource(joint.velocity_limit_rad_s, f"joint velocity limit ({joint.velocity_limit_source})"))
    return min(cands, key=lambda b: b.value)


def max_joint_torque(joint: Joint) -> BoundSource:
    """Tightest static joint torque bound [N m]: drive peak current or a joint-side effort limit."""
    cands = [BoundSource(peak_joint_torque_nm(joint.actuator), "drive peak current")]
    if joint.effort_limit_nm is not None:
        cands.append(BoundSource(joint.effort_limit_nm, f"joint effort limit ({joint.effort_limit_source})"))
    return min(cands, key=lambda b: b.value)


def envelope_polygon(act: Actuator, n: int = 65) -> tuple[np.ndarray, np.ndarray]:
    """Closed joint-side torque-speed envelope (all four quadrants) for plots.

    Returns (joint_speed_rad_s, joint_torque_nm), each of shape (2 n + 1,), tracing the upper
    torque bound from the most negative feasible speed to the most positive one, then the lower
    bound back, and closing on the first point.
    """
    w0 = no_load_motor_speed_rad_s(act)
    wmax = min(w0 * (1 + act.peak_current_a * act.winding_resistance_ohm / act.max_voltage_v), act.max_motor_speed_rad_s)
    wmax = min(wmax, act.max_motor_speed_rad_s)
    qd = np.linspace(-wmax, wmax, n) / act.gear_ratio
    lo, hi = joint_torque_bounds_nm(act, qd)
    ok = lo <= hi
    qd, lo, hi = qd[ok], lo[ok], hi[ok]
    speeds = np.concatenate([qd, qd[::-1], qd[:1]])
    torques = np.concatenate([hi, lo[::-1], hi[:1]])
    return speeds, torques


def back_driven_joint_torque_nm(act: Actuator) -> float:
    """Static joint torque at the drive's peak current when the joint back-drives the motor [N m]:
    N Kt I_peak / eta (the gearbox losses then help the motor hold the load)."""
    return act.gear_ratio * act.torque_constant_nm_per_a * act.peak_current_a / act.gearbox_efficiency


def explain_torque_bound(joint: Joint, joint_torque_nm: float, motor_side_speed_rad_s: float,
                         motor_side_accel_rad_s2: float = 0.0, *, brief: bool = False) -> str:
    """In words, what set the peak-torque bound at one sample (the bound joint_torque_limits_nm gives
    with voltage=False): the drive's peak current through Kt and the gear ratio, the gearbox
    efficiency by power direction, the torque the rotor's acceleration takes, and the effort limit.
    Speeds and accelerations on the motor side of the gearbox, in joint units [rad/s], [rad/s^2]."""
    act = joint.actuator
    tau, w = float(joint_torque_nm), float(motor_side_speed_rad_s) * act.gear_ratio
    sign = 1.0 if tau >= 0 else -1.0
    lo, hi = joint_torque_bounds_nm(act, motor_side_speed_rad_s, motor_side_accel_rad_s2, voltage=False)
    bound = float(hi if sign > 0 else lo)
    back = sign * w < 0.0 and abs(w) > 0.0
    static = back_driven_joint_torque_nm(act) if back else peak_joint_torque_nm(act)
    kt, n, eta, ipk = act.torque_constant_nm_per_a, act.gear_ratio, act.gearbox_efficiency, act.peak_current_a
    how = (f"{static:.4g} N m = {n:g} x {kt:.4g} N m/A x {ipk:.4g} A / efficiency {eta:g} (the joint back-drives the motor)"
           if back else
           f"{static:.4g} N m = {n:g} x {kt:.4g} N m/A x {ipk:.4g} A x efficiency {eta:g} (the motor drives the joint)")
    rotor = static - abs(bound)
    if brief:  # one clause for a terminal line
        text = f"{static:.4g} N m at the drive's peak current, {'back-driven' if back else 'motor driving'}"
        if abs(rotor) >= 5e-4 * static:
            text += f", {'less' if rotor > 0 else 'plus'} {abs(rotor):.3g} N m for the rotor"
        if joint.effort_limit_nm is not None and joint.effort_limit_nm < abs(bound):
            text += f"; effort limit {joint.effort_limit_nm:.4g} N m"
        return text
    text = f"drive peak current: {how}"
    if abs(rotor) >= 5e-4 * static:
        text += (f", {'less' if rotor > 0 else 'plus'} {abs(rotor):.3g} N m for the rotor's acceleration "
                 f"({abs(float(motor_side_accel_rad_s2)) * n:.4g} rad/s^2 at the motor)")
    e = joint.effort_limit_nm
    if e is not None and e < abs(bound):
        text += f"; the joint effort limit {e:.4g} N m is tighter and applies"
    return text
