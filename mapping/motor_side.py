"""Motor-side targets for every joint, vectorised over samples (robots.actuator_limits does the physics).

Series-elastic joints (joint.spring not None). The spring sits between the gearbox output (the
motor side, angle theta_m in joint coordinates) and the joint (angle q); it transmits
tau = k (theta_m - q), positive about +y like the joint torque. Hence

    theta_m = q + tau / k            (positive torque winds the motor side ahead of the joint)

and the motor shaft angle is motor_position_rad = N theta_m (N: gear ratio). The spring damping is
neglected in theta_m. The torque through a spring is a state: it cannot step. Within each phase
(a run of stance or of flight samples, a gap between them, a piece between kinks) tau is smooth, and
its rate and acceleration come from one C2 cubic spline per run, fitted by least squares with the
plan's own sample times as knots (:func:`phase_rates`; so they do not depend on the export rate): the motor side
moves at theta_m_dot = qd + tau_dot / k and accelerates at theta_m_ddot = qdd + tau_ddot / k. Nothing
is differenced across a touchdown or liftoff, where a spring-mass plan's force (and so the torque it
asks of the joint) may jump: those jumps are reported by :func:`spring_torque_steps` as what they
are (the step, the wind-up it needs and the least time the motor needs for it), never turned into a
current. Rigid joints have theta_m = q.

Per joint (act = joint.actuator), on the motor-side joint coordinate:
    motor_speed_rad_s   = N theta_m_dot                                 (actuator_limits.motor_speed_rad_s)
    motor_accel_rad_s2  = N theta_m_ddot
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
    """Arrays (n, j), one column per joint in robot.limb_joints order (units in the module docstring)."""

    motor_position_rad: np.ndarray
    motor_speed_rad_s: np.ndarray
    motor_accel_rad_s2: np.ndarray
    motor_torque_nm: np.ndarray
    current_a: np.ndarray
    voltage_v: np.ndarray
    electrical_power_w: np.ndarray
    mechanical_power_w: np.ndarray


def phase_runs(stance) -> list[tuple[int, int]]:
    """(first, last + 1) sample index of every run of a constant label (stance / flight flags, or
    interpolation pieces), in time order."""
    s = np.asarray(stance)
    if s.size == 0:
        return []
    edges = np.flatnonzero(s[1:] != s[:-1]) + 1
    bounds = np.concatenate([[0], edges, [s.size]])
    return list(zip(bounds[:-1].tolist(), bounds[1:].tolist()))


def _run_spline(t: np.ndarray, y: np.ndarray):
    """The interpolant of one phase: a not-a-knot cubic spline (4+ samples), else the line or the
    constant through the samples (as a callable f(t, nu) like CubicSpline's)."""
    from scipy.interpolate import CubicSpline

    if t.size >= 4:
        return CubicSpline(t, y, bc_type="not-a-knot", extrapolate=True)
    if t.size >= 2:
        slope = (y[-1] - y[0]) / (t[-1] - t[0])
        return lambda x, nu=0: (y[0] + slope * (np.asarray(x) - t[0]) if nu == 0 else
                                np.full(np.shape(x), slope if nu == 1 else 0.0))
    return lambda x, nu=0: np.full(np.shape(x), y[0] if nu == 0 else 0.0)


def _run_lsq_spline(t: np.ndarray, y: np.ndarray, knots: np.ndarray):
    """A C2 cubic spline with interior knots at the plan's own sample times inside the run, fitted to
    the run's samples by least squares (scipy.interpolate.make_lsq_spline), or None when the run is
    too short for one. Knots closer than two sample intervals are thinned (every knot interval keeps
    two samples, so the fit is determined: Schoenberg-Whitney)."""
    from scipy.interpolate import make_lsq_spline

    if t.size < 6:
        return None
    h = float(np.median(np.diff(t)))
    inner = knots[(knots > t[0] + 1.5 * h) & (knots < t[-1] - 1.5 * h)]
    kept, last = [], t[0]
    for u in inner.tolist():  # knots of one run: tens, not samples
        if u - last >= 2.0 * h - 1e-9 * h:
            kept.append(u)
            last = u
    if kept and t[-1] - kept[-1] < 2.0 * h - 1e-9 * h:
        kept.pop()
    full = np.concatenate([[t[0]] * 4, kept, [t[-1]] * 4])
    try:
        return make_lsq_spline(t, y, full, k=3)
    except (ValueError, np.linalg.LinAlgError):
        return None


def phase_rates(time_s, values, stance, knots=None) -> tuple[np.ndarray, np.ndarray]:
    """(rate, second rate) of a sampled quantity, from one spline per run of ``stance`` (phase flags or
    piece labels; never across an edge).

    ``knots``: the plan's own sample times. The torque through a series spring comes from inverse
    dynamics on the plan's C2 interpolant, so it has kinks of slope at every plan sample, and its
    second rate (the motor side's acceleration) spikes there; a spline run through every export
    sample resolves those spikes the finer the export rate (motor acceleration, hence the rotor's
    torque and the current, grew with the rate). With ``knots`` each run gets a least-squares C2
    spline whose knots are the plan's sample times (the plan's own resolution), whatever the export
    rate; without, or for a run too short for one, the spline through the samples.
    """
    t = np.asarray(time_s, dtype=float)
    y = np.asarray(values, dtype=float)
    kn = None if knots is None else np.sort(np.asarray(knots, dtype=float))
    d1 = np.zeros_like(y)
    d2 = np.zeros_like(y)
    for a, b in phase_runs(stance):  # one spline per phase (tens per plan), not per sample
        f = _run_lsq_spline(t[a:b], y[a:b], kn) if kn is not None else None
        if f is None:
            f = _run_spline(t[a:b], y[a:b])
        d1[a:b] = f(t[a:b], 1)
        d2[a:b] = f(t[a:b], 2)
    return d1, d2


@dataclass(frozen=True)
class SpringStep:
    """A jump of the torque a plan asks through a series spring, at a touchdown or liftoff.

    joint; time_s: the edge (midway between the last sample of one phase and the first of the next)
    [s]; kind: 'touchdown' or 'liftoff'; step_nm: the torque after minus before, each phase's spline
    taken to the edge [N m]; windup_rad: the motor-side angle the spring needs for it, step / k [rad]
    (joint units); min_time_s: the least time the motor needs to wind it up at its speed limit [s]
    """

    joint: str
    time_s: float
    kind: str
    step_nm: float
    windup_rad: float
    min_time_s: float


def spring_torque_steps(robot: Robot, joint_names, time_s, tau, stance) -> tuple[SpringStep, ...]:
    """Every torque step a plan asks of a series-elastic joint at its phase edges (see SpringStep).

    Each side's value comes from its phase's spline evaluated at the edge, so the step does not
    depend on the export rate (to the spline's accuracy).
    """
    t = np.asarray(time_s, dtype=float)
    s = np.asarray(stance, dtype=bool)
    runs = phase_runs(s)
    out: list[SpringStep] = []
    for j, name in enumerate(joint_names):
        joint = robot.joint(name)
        if joint.spring is None or len(runs) < 2:
            continue
        k = joint.spring.stiffness_nm_per_rad
        v_max = al.max_motor_side_speed_rad_s(joint.actuator)
        y = np.asarray(tau[:, j], dtype=float)
        splines = [_run_spline(t[a:b], y[a:b]) for a, b in runs]
        for (a0, b0), (a1, _), f0, f1 in zip(runs[:-1], runs[1:], splines[:-1], splines[1:]):
            t_edge = 0.5 * (t[b0 - 1] + t[a1])
            step = float(f1(t_edge) - f0(t_edge))
            windup = step / k
            out.append(SpringStep(name, t_edge, "touchdown" if s[a1] else "liftoff", step, windup,
                                  abs(windup) / v_max if v_max > 0 else float("inf")))
    out.sort(key=lambda x: (x.time_s, x.joint))
    return tuple(out)


def motor_side(robot: Robot, time_s: np.ndarray, q: np.ndarray, qd: np.ndarray, qdd: np.ndarray,
               tau: np.ndarray, stance=None, pieces=None, knots=None) -> MotorSide:
    """Motor-side quantities for joint targets q, qd, qdd (n, j) [rad, rad/s, rad/s^2] and tau (n, j)
    [N m]. ``pieces`` (n,) labels the runs whose spring-torque rates come from one spline each
    (mapping.resample.ResampledCase.pieces: each phase, and each gap between phases, where the force
    is a straight line); default the phases of ``stance`` (n,) bool, or one run. ``knots``: the plan's
    sample times, the knots of the spring torque's splines (phase_rates)."""
    n = q.shape[0]
    stance = np.ones(n, bool) if stance is None else np.asarray(stance, dtype=bool)
    pieces = stance if pieces is None else np.asarray(pieces)
    cols = {k: np.empty_like(q) for k in MotorSide.__dataclass_fields__}
    for j, joint in enumerate(robot.limb_joints):
        act = joint.actuator
        theta, theta_d, theta_dd = q[:, j], qd[:, j], qdd[:, j]
        if joint.spring is not None and n >= 2:
            k = joint.spring.stiffness_nm_per_rad
            tau_d, tau_dd = phase_rates(time_s, tau[:, j], pieces, knots)
            theta = theta + tau[:, j] / k
            theta_d = theta_d + tau_d / k
            theta_dd = theta_dd + tau_dd / k
        cur = al.current_a(act, tau[:, j], theta_d, theta_dd)
        volt = al.terminal_voltage_v(act, cur, theta_d)
        cols["motor_position_rad"][:, j] = act.gear_ratio * theta
        cols["motor_speed_rad_s"][:, j] = al.motor_speed_rad_s(act, theta_d)
        cols["motor_accel_rad_s2"][:, j] = act.gear_ratio * theta_dd
        cols["motor_torque_nm"][:, j] = act.torque_constant_nm_per_a * cur
        cols["current_a"][:, j] = cur
        cols["voltage_v"][:, j] = volt
        cols["electrical_power_w"][:, j] = volt * cur
        cols["mechanical_power_w"][:, j] = tau[:, j] * qd[:, j]
    for a in cols.values():
        a.setflags(write=False)
    return MotorSide(**cols)
