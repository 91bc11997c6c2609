"""Motor-side targets for every joint, vectorised over samples (robots.actuator_limits does the physics).

Series-elastic joints (joint.spring not None). The spring sits between the gearbox output (the
motor side, angle theta_m in joint coordinates) and the joint (angle q); it transmits
tau = k (theta_m - q), positive about +y like the joint torque. Hence

    theta_m = q + tau / k            (positive torque winds the motor side ahead of the joint)

and the motor shaft angle is motor_position_rad = N theta_m (N: gear ratio). The spring damping is
neglected in theta_m. For series-elastic joints the motor side moves at theta_m_dot = qd + tau_dot / k
and accelerates at theta_m_ddot = qdd + tau_ddot / k, with tau_dot, tau_ddot finite differences of
the sampled torque (numpy.gradient): the only numerical derivatives in the mapping. Rigid joints
have theta_m = q.

Per joint (act = joint.actuator), on the motor-side joint coordinate:
    motor_speed_rad_s   = N theta_m_dot                                 (actuator_limits.motor_speed_rad_s)
    current_a           = actuator_limits.current_a(act, tau, theta_m_dot, theta_m_ddot)
                          (gear ratio, efficiency by power direction, rotor inertia N J_r theta_m_ddot)
    motor_torque_nm     = Kt current_a: the electromagnetic torque the motor makes (shaft torque
                          plus the torque that accelerates the rotor)
    voltage_v           = actuator_limits.terminal_voltage_v(act, current_a, theta_m_dot)
    electrical_power_w  = voltage_v current_a;  mechanical_power_w = tau qd (joint side)
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from legbridge.robots import actuator_limits as al
from legbridge.robots.robot import Robot


@dataclass(frozen=True, eq=False)
class MotorSide:
    """Arrays (n, j), one column per joint in robot.joints order (units in the module docstring)."""

    motor_position_rad: np.ndarray
    motor_speed_rad_s: np.ndarray
    motor_torque_nm: np.ndarray
    current_a: np.ndarray
    voltage_v: np.ndarray
    electrical_power_w: np.ndarray
    mechanical_power_w: np.ndarray


def motor_side(robot: Robot, time_s: np.ndarray, q: np.ndarray, qd: np.ndarray, qdd: np.ndarray,
               tau: np.ndarray) -> MotorSide:
    """Motor-side quantities for joint targets q, qd, qdd (n, j) [rad, rad/s, rad/s^2] and tau (n, j) [N m]."""
    cols = {k: np.empty_like(q) for k in MotorSide.__dataclass_fields__}
    for j, joint in enumerate(robot.joints):
        act = joint.actuator
        theta, theta_d, theta_dd = q[:, j], qd[:, j], qdd[:, j]
        if joint.spring is not None and q.shape[0] >= 2:
            k = joint.spring.stiffness_nm_per_rad
            tau_d = np.gradient(tau[:, j], time_s)
            tau_dd = np.gradient(tau_d, time_s)
            theta = theta + tau[:, j] / k
            theta_d = theta_d + tau_d / k
            theta_dd = theta_dd + tau_dd / k
        cur = al.current_a(act, tau[:, j], theta_d, theta_dd)
        volt = al.terminal_voltage_v(act, cur, theta_d)
        cols["motor_position_rad"][:, j] = act.gear_ratio * theta
        cols["motor_speed_rad_s"][:, j] = al.motor_speed_rad_s(act, theta_d)
        cols["motor_torque_nm"][:, j] = act.torque_constant_nm_per_a * cur
        cols["current_a"][:, j] = cur
        cols["voltage_v"][:, j] = volt
        cols["electrical_power_w"][:, j] = volt * cur
        cols["mechanical_power_w"][:, j] = tau[:, j] * qd[:, j]
    for a in cols.values():
        a.setflags(write=False)
    return MotorSide(**cols)
