"""Winding thermal model: copper loss in, temperature out, exact discretisation, vectorised.

One node:  C dT/dt = P - (T - T_amb) / R_th,  tau = R_th C,  P = R I^2 (DC-equivalent R and I,
           robots.robot; for a three-phase motor this is the total copper loss).
Two nodes (ThermalModel.two_node): winding w and housing h,
           C_w dT_w/dt = P - (T_w - T_h) / R_w
           C_h dT_h/dt = (T_w - T_h) / R_w - (T_h - T_amb) / R_h,   C_w = tau_w / R_w, C_h = tau_h / R_h.
The loss is held constant over each sample (zero-order hold) and the state update is the exact
matrix exponential of that hold (first order: T[k+1] = a T[k] + (1 - a) R_th P[k], a = exp(-dt/tau)),
run with scipy.signal.lfilter over the whole test duration with the plan's loss repeated
periodically. Temperatures start at ambient. Times [s], temperatures [degC], powers [W].
"""

from __future__ import annotations

import math

import numpy as np
import scipy.linalg
import scipy.signal

from legbridge.robots.robot import ThermalModel

from .results import ThermalResult


def discrete_filter(th: ThermalModel, dt_s: float) -> tuple[np.ndarray, np.ndarray]:
    """(b, a) of the exact zero-order-hold discretisation from loss [W] to winding rise [K].

    y[k] is the rise at time k dt after the losses P[0..k-1] (so y[0] = 0).
    """
    rw, tw = th.winding_resistance_k_per_w, th.winding_time_constant_s
    if not th.two_node:
        a = math.exp(-dt_s / tw)
        return np.array([0.0, (1.0 - a) * rw]), np.array([1.0, -a])
    rh, thh = th.housing_resistance_k_per_w, th.housing_time_constant_s
    cw, ch = tw / rw, thh / rh
    A = np.array([[-1.0 / (rw * cw), 1.0 / (rw * cw)],
                  [1.0 / (rw * ch), -(1.0 / rw + 1.0 / rh) / ch]])
    B = np.array([[1.0 / cw], [0.0]])
    M = np.zeros((3, 3))
    M[:2, :2], M[:2, 2:] = A * dt_s, B * dt_s
    E = scipy.linalg.expm(M)
    Ad, Bd = E[:2, :2], E[:2, 2:]
    b, a = scipy.signal.ss2tf(Ad, Bd, np.array([[1.0, 0.0]]), np.zeros((1, 1)))
    return np.asarray(b[0], dtype=float), np.asarray(a, dtype=float)


def temperature_rise_k(th: ThermalModel, loss_w, dt_s: float) -> np.ndarray:
    """Winding rise above ambient [K] at times 0, dt, ..., len(loss) dt for a loss sequence [W]."""
    b, a = discrete_filter(th, dt_s)
    p = np.concatenate([np.asarray(loss_w, dtype=float), [0.0]])
    return scipy.signal.lfilter(b, a, p)


def copper_loss_w(resistance_ohm, current_a) -> np.ndarray:
    """Copper loss P = R I^2 [W]."""
    return np.asarray(resistance_ohm, dtype=float) * np.square(np.asarray(current_a, dtype=float))


def simulate(traj, robot, duration_s: float | None = None) -> ThermalResult:
    """Simulate every joint's winding over ``duration_s`` (None or shorter than the plan: one plan
    period) with the plan's copper loss repeated periodically."""
    n = traj.n_samples
    dt = 1.0 / float(traj.rate_hz)
    period = n * dt
    duration = period if duration_s is None else max(float(duration_s), period)
    m = int(math.ceil(duration / dt - 1e-9))
    reps = int(math.ceil(m / n))
    joints = [robot.joint(name) for name in traj.joint_names]
    temps = np.empty((m + 1, len(joints)))
    amb = np.array([j.actuator.thermal.ambient_temp_c for j in joints])
    tmax = np.array([j.actuator.thermal.max_winding_temp_c for j in joints])
    for k, joint in enumerate(joints):  # one filter per joint (coefficients differ), not per sample
        loss = copper_loss_w(joint.actuator.winding_resistance_ohm, traj.current_a[:, k])
        loss = np.tile(loss, reps)[:m]
        temps[:, k] = amb[k] + temperature_rise_k(joint.actuator.thermal, loss, dt)
    time = np.arange(m + 1) * dt
    # Sample p of the plan is last run at index p + n * floor((m - 1 - p) / n) (heating is monotone
    # in the repetition for these positive-response networks, so that is the hottest pass).
    p = np.arange(n)
    last = p + n * ((m - 1 - p) // n)
    phase = temps[last]
    ttl = {}
    for k, joint in enumerate(joints):
        hit = np.flatnonzero(~(temps[:, k] < tmax[k]))  # NaN counts as reached (fail closed)
        ttl[joint.name] = float(time[hit[0]]) if hit.size else None
    for a in (time, temps, phase, amb, tmax):
        a.setflags(write=False)
    return ThermalResult(tuple(traj.joint_names), time, temps, amb, tmax, phase, duration, ttl)
