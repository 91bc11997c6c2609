"""Equations of motion and event functions of the actuated spring-mass model (one phase each).

Stance state ``y = [x, z, vx, vz]`` (body at the hip, foot pinned at ``(foot_x, h)``):
    r = hip - foot, l = |r|, dl/dt = r.v / l,
    F_axial = k (l_act(t - t_apex) - l) - c dl/dt,
    m a = F_axial r / l - m g e_z.
The damper acts on the leg length rate (between hip and foot); the actuator, in series with the
spring, carries the spring force ``k (l_act - l)`` and delivers the power ``k (l_act - l) dl_act/dt``.
Flight state ``y = [x, z, vx, vz, l]``: ballistic body; the massless leg carries no force, so its
length relaxes towards the actuator length,
    dl/dt = (k / c) (l_act - l)          (c > 0),
and ``l = l_act`` at once when the damper's time constant c/k is below ``INSTANT_RELAX_S``. This
keeps the leg length continuous at liftoff, where the force (not the deflection) reaches zero.
"""

from __future__ import annotations

import math

from legbridge.mapping.slip.params import SpringMassParams
from legbridge.mapping.slip.policy import PolicyCurves

# Below this damper time constant c/k [s] the flight leg is taken as relaxed at once (l = l_act).
INSTANT_RELAX_S = 1e-4
# The body counts as moving backward below this forward speed [m/s] (so hopping in place is allowed).
BACKWARD_SPEED_M_S = -1e-6


def relax_rate(params: SpringMassParams) -> float | None:
    """k / c [1/s] of the flight leg, or None when it relaxes at once."""
    c, k = params.damping_n_s_per_m, params.stiffness_n_per_m
    if c <= 0.0 or c / k < INSTANT_RELAX_S:
        return None
    return k / c


def stance_rhs(params: SpringMassParams, curves: PolicyCurves, foot_x: float, h: float, t_apex: float):
    """Right-hand side f(t, y) of the stance phase."""
    m, k, c, g = params.mass_kg, params.stiffness_n_per_m, params.damping_n_s_per_m, params.gravity_m_s2
    lact = curves.actuator_length
    sqrt = math.sqrt

    def f(t, y):
        x, z, vx, vz = y[0], y[1], y[2], y[3]
        rx = x - foot_x
        rz = z - h
        l = sqrt(rx * rx + rz * rz)
        ldot = (rx * vx + rz * vz) / l
        fa = k * (lact(t - t_apex) - l) - c * ldot
        s = fa / (m * l)
        return [vx, vz, s * rx, s * rz - g]

    return f


def stance_axial_force(params: SpringMassParams, curves: PolicyCurves, foot_x: float, h: float, t_apex: float):
    """Event: F_axial(t, y) [N]; liftoff when it falls through zero."""
    k, c = params.stiffness_n_per_m, params.damping_n_s_per_m
    lact = curves.actuator_length

    def ev(t, y):
        rx = y[0] - foot_x
        rz = y[1] - h
        l = math.sqrt(rx * rx + rz * rz)
        return k * (lact(t - t_apex) - l) - c * (rx * y[2] + rz * y[3]) / l

    ev.terminal = True
    ev.direction = -1
    return ev


def stance_fall_events(params: SpringMassParams, foot_x: float, h: float):
    """Events that end stance in a fall: (leg below minimum length, body at the ground, moving backward)."""
    lmin = params.min_leg_length_m

    def too_short(t, y):
        return math.hypot(y[0] - foot_x, y[1] - h) - lmin

    def ground(t, y):
        return y[1] - h

    def backward(t, y):
        return y[2] - BACKWARD_SPEED_M_S

    for ev in (too_short, ground, backward):
        ev.terminal = True
        ev.direction = -1
    return too_short, ground, backward


def flight_rhs(params: SpringMassParams, curves: PolicyCurves, t_apex: float):
    """Right-hand side f(t, y) of flight (ballistic body, relaxing leg length)."""
    g = params.gravity_m_s2
    rate = relax_rate(params)
    lact = curves.actuator_length

    if rate is None:

        def f(t, y):
            return [y[2], y[3], 0.0, -g, 0.0]

    else:

        def f(t, y):
            return [y[2], y[3], 0.0, -g, rate * (lact(t - t_apex) - y[4])]

    return f


def flight_leg_length(params: SpringMassParams, curves: PolicyCurves, t_apex: float):
    """l(t, y) [m] of the flight leg."""
    if relax_rate(params) is None:
        lact = curves.actuator_length
        return lambda t, y: lact(t - t_apex)
    return lambda t, y: y[4]


def touchdown_event(params: SpringMassParams, curves: PolicyCurves, h: float, t_apex: float):
    """Event: foot height above the ground, z - l cos(a(t - t_apex)) - h [m]; falls through zero."""
    leg = flight_leg_length(params, curves, t_apex)
    ang = curves.angle
    cos = math.cos

    def ev(t, y):
        return y[1] - leg(t, y) * cos(ang(t - t_apex)) - h

    ev.terminal = True
    ev.direction = -1
    return ev


def flight_ground_event(h: float):
    """Event: body (hip) height above the ground [m]."""

    def ev(t, y):
        return y[1] - h

    ev.terminal = True
    ev.direction = -1
    return ev


def apex_event():
    """Event: vertical velocity falling through zero (apex of flight)."""

    def ev(t, y):
        return y[3]

    ev.terminal = True
    ev.direction = -1
    return ev


__all__ = [
    "INSTANT_RELAX_S",
    "apex_event",
    "flight_ground_event",
    "flight_leg_length",
    "flight_rhs",
    "relax_rate",
    "stance_axial_force",
    "stance_fall_events",
    "stance_rhs",
    "touchdown_event",
]
