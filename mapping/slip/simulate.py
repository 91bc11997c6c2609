"""Forward simulation of the actuated spring-mass model over several hops (scipy solve_ivp).

Phases follow one another through terminal events:

* flight, descending (from an apex): touchdown when the foot, held at the policy's leg angle,
  reaches the ground ``z - l cos(a) = h``; the foot is then pinned where it landed;
* stance: liftoff when the axial force ``k (l_act - l) - c dl/dt`` falls through zero (the ground
  can only push; for ``c = 0`` this is the instant ``l`` reaches ``l_act`` while extending);
* flight, ascending: apex when ``vz`` falls through zero; the policy's clock restarts there.

Falls end the simulation: the body reaching the ground, the stance leg shorter than
``min_leg_length_m``, the body moving backward, no apex within ``max_time_between_apexes_s``, a
liftoff without upward velocity, or an apex where the foot is not above the ground.
The ODE is solved with RK45 (rtol 1e-8, atol 1e-9), dense output, and sampled afterwards in one
vectorised pass per phase.

Leg angle during flight, ``flight_swing='whole-flight'`` (the default; the massless leg's swing does not act on the body; only the touchdown
angle, the policy's angle at the instant of touchdown, does): when the flight ends in a touchdown,
the sampled angle is one cubic Hermite swing over the whole flight, from the liftoff angle and
angular rate to the policy's angle and rate at touchdown, so a real leg is asked for the gentlest
cubic swing that lands exactly as the policy says (the swing then uses the whole flight rather than
its ascending half). For a flight that the record cuts before touchdown, the touchdown time is
predicted from the ballistic flight and the policy (root of z - l_act cos(a) = h, with the leg at
the actuator length) and the swing aims there; if no touchdown is predicted, the swing reaches the
policy's angle and rate of time 0 at the apex and follows the policy after it. Either way the
sampled angle is continuous with its rate.

``flight_swing='policy'`` writes the flight for a biped, whose landing leg is not the leg that just
lifted off: after the apex the policy's angle itself (the plan's swing-leg retraction, exactly), before
it the policy's tangent line through its apex angle and rate, a0 + w0 (t - t_apex) (the landing leg
coming forward into the retraction). The angle then jumps at liftoff from the stance leg's to the
landing leg's; the resampling never interpolates across a phase change (mapping.resample).
"""

from __future__ import annotations

import math

import numpy as np
from scipy.integrate import solve_ivp

from legbridge.mapping.plan import Policy, ReducedTrajectory, frozen_array
from legbridge.mapping.slip import dynamics as dyn
from legbridge.robots.errors import SlipInputError
from legbridge.mapping.slip.params import SpringMassParams
from legbridge.mapping.slip.policy import PolicyCurves
from legbridge.mapping.slip.results import (
    APEX,
    COMPLETED,
    END,
    FALL,
    FELL,
    LIFTOFF,
    TOUCHDOWN,
    ApexState,
    Event,
    Outcome,
    SimulationResult,
)

RTOL = 1e-8
ATOL = 1e-9
METHOD = "RK45"

REASON_GROUND = "body reached the ground"
REASON_SHORT = "leg compressed below minimum length"
REASON_NO_APEX = "no apex within time limit"
REASON_BACKWARD = "body moving backward"
REASON_CLEARANCE = "no foot clearance at apex"
REASON_NO_FLIGHT = "liftoff without upward velocity"


FLIGHT_SWINGS = ("whole-flight", "policy")


def _check_settings(ground_height_m, duration_s, rate_hz) -> tuple[float, float, float]:
    out = []
    for name, v, positive in (("ground_height_m", ground_height_m, False), ("duration_s", duration_s, True), ("rate_hz", rate_hz, True)):
        if isinstance(v, bool) or not isinstance(v, (int, float)) or not math.isfinite(v) or (positive and v <= 0):
            raise SlipInputError(key=name, expected="a finite number" + (" > 0" if positive else ""), found=v)
        out.append(float(v))
    return out[0], out[1], out[2]


class _Segment:
    """One solved phase: kind ('down', 'stance', 'up'), span, dense solution and phase data."""

    __slots__ = ("kind", "t0", "t1", "sol", "t_apex", "foot_x", "liftoff")

    def __init__(self, kind, t0, t1, sol, t_apex, foot_x=math.nan, liftoff=None):
        self.kind, self.t0, self.t1, self.sol, self.t_apex = kind, t0, t1, sol, t_apex
        self.foot_x, self.liftoff = foot_x, liftoff


def simulate(
    params: SpringMassParams,
    policy: Policy,
    initial_apex_state: ApexState,
    ground_height_m: float,
    duration_s: float,
    rate_hz: float,
    *,
    name: str = "case",
    flight_swing: str = "whole-flight",
) -> SimulationResult:
    """Simulate one ground-height case from an apex for ``duration_s`` [s], sampled at ``rate_hz`` [Hz].

    params: spring-mass parameters; policy: open-loop policy (time since apex)
    initial_apex_state: body state at the first apex (``time_s`` is ignored: the run starts at t = 0)
    ground_height_m: height h of the flat ground [m] (the case's ground-height offset)
    name: the case name given to the trajectory
    flight_swing: how the sampled flight leg angle is written (module docstring): 'whole-flight' (one
        leg swinging from liftoff to touchdown) or 'policy' (the landing leg of a biped: the policy)
    Returns a :class:`SimulationResult`; the trajectory stops at a fall.
    """
    h, duration, rate = _check_settings(ground_height_m, duration_s, rate_hz)
    if flight_swing not in FLIGHT_SWINGS:
        raise SlipInputError(key="flight_swing", expected=f"one of {list(FLIGHT_SWINGS)}", found=flight_swing)
    if not isinstance(params, SpringMassParams):
        raise SlipInputError(key="params", expected="SpringMassParams", found=type(params).__name__)
    if not isinstance(initial_apex_state, ApexState):
        raise SlipInputError(key="initial_apex_state", expected="ApexState", found=type(initial_apex_state).__name__)
    if initial_apex_state.vx_m_s < 0.0:
        raise SlipInputError(key="initial_apex_state.vx_m_s", expected=">= 0 (forward)", found=initial_apex_state.vx_m_s)
    curves = PolicyCurves(policy)
    g = params.gravity_m_s2
    limit = params.max_time_between_apexes_s

    events: list[Event] = []
    apexes: list[ApexState] = []
    segments: list[_Segment] = []
    nfev = 0

    t = 0.0
    t_apex = 0.0
    y = [initial_apex_state.x_m, initial_apex_state.z_m, initial_apex_state.vx_m_s, 0.0, curves.actuator_length(0.0)]
    phase = "apex"
    outcome: Outcome | None = None

    def fell(reason, t_f, state, angle=math.nan, length=math.nan, foot_x=math.nan):
        events.append(Event(FALL, t_f, state[0], state[1], state[2], state[3], angle, length, foot_x))
        return Outcome(FELL, reason, float(t_f))

    while outcome is None:
        if phase == "apex":
            a0 = curves.angle(0.0)
            l_now = y[4] if dyn.relax_rate(params) is not None else curves.actuator_length(0.0)
            apexes.append(ApexState(y[0], y[1], y[2], t))
            events.append(Event(APEX, t, y[0], y[1], y[2], y[3], a0, l_now))
            if y[1] - l_now * math.cos(a0) - h <= 0.0:
                outcome = fell(REASON_CLEARANCE, t, y, a0, l_now)
                break
            t_apex = t
            phase = "down"
            continue

        t_stop = min(duration, t_apex + limit)
        if t >= t_stop:
            outcome = Outcome(COMPLETED, None, duration) if t >= duration else fell(REASON_NO_APEX, t, y)
            break

        if phase == "down":
            sol = solve_ivp(
                dyn.flight_rhs(params, curves, t_apex), (t, t_stop), y, method=METHOD, rtol=RTOL, atol=ATOL,
                dense_output=True, events=[dyn.touchdown_event(params, curves, h, t_apex), dyn.flight_ground_event(h)],
            )
            nfev += sol.nfev
            t1 = float(sol.t[-1])
            segments.append(_Segment("down", t, t1, sol.sol, t_apex))
            y1 = [float(v) for v in sol.y[:, -1]]
            if sol.status == 1 and sol.t_events[0].size:
                t = float(sol.t_events[0][0])
                y = [float(v) for v in sol.y_events[0][0]]
                a = curves.angle(t - t_apex)
                leg = dyn.flight_leg_length(params, curves, t_apex)(t, y)
                foot_x = y[0] + leg * math.sin(a)
                events.append(Event(TOUCHDOWN, t, y[0], y[1], y[2], y[3], a, leg, foot_x))
                segments[-1].t1 = t
                phase = "stance"
                continue
            if sol.status == 1:
                outcome = fell(REASON_GROUND, float(sol.t_events[1][0]), [float(v) for v in sol.y_events[1][0]])
                segments[-1].t1 = outcome.time_s
                break
            t, y = t1, y1
            continue

        if phase == "stance":
            too_short, ground, backward = dyn.stance_fall_events(params, foot_x, h)
            sol = solve_ivp(
                dyn.stance_rhs(params, curves, foot_x, h, t_apex), (t, t_stop), y[:4], method=METHOD, rtol=RTOL, atol=ATOL,
                dense_output=True,
                events=[dyn.stance_axial_force(params, curves, foot_x, h, t_apex), too_short, ground, backward],
            )
            nfev += sol.nfev
            segments.append(_Segment("stance", t, float(sol.t[-1]), sol.sol, t_apex, foot_x=foot_x))
            if sol.status == 1:
                hit = [i for i, te in enumerate(sol.t_events) if te.size]
                first = min(hit, key=lambda i: sol.t_events[i][0])
                te = float(sol.t_events[first][0])
                ye = [float(v) for v in sol.y_events[first][0]]
                segments[-1].t1 = te
                rx, rz = ye[0] - foot_x, ye[1] - h
                leg = math.hypot(rx, rz)
                ang = math.atan2(-rx, rz)
                if first == 0:
                    t = te
                    events.append(Event(LIFTOFF, t, ye[0], ye[1], ye[2], ye[3], ang, leg, foot_x))
                    if ye[3] <= 0.0:
                        outcome = fell(REASON_NO_FLIGHT, t, ye, ang, leg, foot_x)
                        break
                    # Leg angular rate at liftoff, d/dt atan2(foot_x - x, z - h) [rad/s].
                    arate = (-rz * ye[2] + rx * ye[3]) / (leg * leg)
                    liftoff = (t, ang, arate, t + ye[3] / g)
                    y = ye + [leg]
                    phase = "up"
                    continue
                reason = {1: REASON_SHORT, 2: REASON_GROUND, 3: REASON_BACKWARD}[first]
                outcome = fell(reason, te, ye, ang, leg, foot_x)
                break
            t, y = float(sol.t[-1]), [float(v) for v in sol.y[:, -1]]
            continue

        if phase == "up":
            sol = solve_ivp(
                dyn.flight_rhs(params, curves, t_apex), (t, t_stop), y, method=METHOD, rtol=RTOL, atol=ATOL,
                dense_output=True, events=[dyn.apex_event()],
            )
            nfev += sol.nfev
            segments.append(_Segment("up", t, float(sol.t[-1]), sol.sol, t_apex, liftoff=liftoff))
            if sol.status == 1:
                t = float(sol.t_events[0][0])
                y = [float(v) for v in sol.y_events[0][0]]
                segments[-1].t1 = t
                phase = "apex"
                continue
            t, y = float(sol.t[-1]), [float(v) for v in sol.y[:, -1]]
            continue

    if outcome.completed:
        last = segments[-1]
        ye = last.sol(duration)
        events.append(Event(END, duration, float(ye[0]), float(ye[1]), float(ye[2]), float(ye[3]), math.nan, math.nan))
    if not segments:  # fell at the initial apex: one sample of the apex state
        y0 = np.array(y, dtype=float)
        segments.append(_Segment("down", 0.0, 0.0, lambda ts: np.repeat(y0[:, None], np.size(ts), axis=1), 0.0))
    traj = _sample(params, curves, segments, h, outcome.time_s, rate, name, flight_swing)
    return SimulationResult(traj, tuple(events), outcome, tuple(apexes), int(nfev))


def _hermite(t, t0, p0, m0, t1, p1, m1):
    span = max(t1 - t0, 1e-12)
    u = np.clip((t - t0) / span, 0.0, 1.0)
    u2, u3 = u * u, u * u * u
    return (2 * u3 - 3 * u2 + 1) * p0 + (u3 - 2 * u2 + u) * span * m0 + (-2 * u3 + 3 * u2) * p1 + (u3 - u2) * span * m1


def _flight_swings(params, curves, segments, h) -> dict:
    """Whole-flight swings: segment index -> (t_liftoff, a, rate, t_touchdown, a, rate) for every
    ascending and descending flight segment of a flight that ends, or would end, in a touchdown."""
    out = {}
    for i, up in enumerate(segments):
        if up.kind != "up" or up.liftoff is None:
            continue
        t_lo, a_lo, w_lo, t_ap = up.liftoff
        down = segments[i + 1] if i + 1 < len(segments) and segments[i + 1].kind == "down" else None
        if down is not None and i + 2 < len(segments) and segments[i + 2].kind == "stance":
            t_td, t_apex = down.t1, down.t_apex
        else:  # the record ends in this flight: predict the touchdown
            y_lo = up.sol(t_lo)
            t_apex = down.t_apex if down is not None else t_ap
            tau = _predicted_touchdown(params, curves, h, float(y_lo[1]), float(y_lo[3]), t_apex - t_lo)
            if tau is None:
                continue
            t_td = t_apex + tau
        a_td = float(curves.angle(t_td - t_apex))
        w_td = float(curves.angle_rate(t_td - t_apex))
        out[i] = (t_lo, a_lo, w_lo, t_td, a_td, w_td)
        if down is not None:
            out[i + 1] = out[i]
    return out


def _predicted_touchdown(params, curves, h, z_lo, vz_lo, rise_s):
    """Time after the apex [s] at which a ballistic flight from liftoff height z_lo [m] and upward
    speed vz_lo [m/s] meets the ground with the leg at the policy's angle and actuator length, or
    None when it does not within the apex-to-apex time limit."""
    from scipy.optimize import brentq

    g = params.gravity_m_s2
    z_apex = z_lo + vz_lo * rise_s - 0.5 * g * rise_s**2

    def clearance(tau):
        return z_apex - 0.5 * g * tau**2 - curves.actuator_length(tau) * math.cos(curves.angle(tau)) - h

    horizon = params.max_time_between_apexes_s
    if clearance(0.0) <= 0.0 or clearance(horizon) > 0.0:
        return None
    return float(brentq(clearance, 0.0, horizon, xtol=1e-9))


def _sample(params, curves, segments, h, t_end, rate, name, flight_swing="whole-flight") -> ReducedTrajectory:
    """Sample the solved phases on ``t = i / rate`` up to ``t_end`` (vectorised per phase)."""
    n = int(math.floor(t_end * rate + 1e-9)) + 1
    t = np.arange(n) / rate
    cols = {k: np.empty(n) for k in ("x", "z", "vx", "vz", "l", "a", "lact", "fx", "fz")}
    stance = np.zeros(n, dtype=bool)
    starts = np.array([s.t0 for s in segments])
    which = np.clip(np.searchsorted(starts, t, side="right") - 1, 0, len(segments) - 1)
    k, c = params.stiffness_n_per_m, params.damping_n_s_per_m
    instant = dyn.relax_rate(params) is None
    a0 = curves.angle(0.0)
    w0 = float(curves.angle_rate(0.0))
    swings = _flight_swings(params, curves, segments, h) if flight_swing == "whole-flight" else {}
    for i, seg in enumerate(segments):
        idx = np.flatnonzero(which == i)
        if idx.size == 0:
            continue
        ts = np.clip(t[idx], seg.t0, seg.t1)
        Y = seg.sol(ts)
        x, z, vx, vz = Y[0], Y[1], Y[2], Y[3]
        lact = curves.actuator_length_array(ts - seg.t_apex)
        if seg.kind == "stance":
            rx, rz = x - seg.foot_x, z - h
            l = np.hypot(rx, rz)
            ldot = (rx * vx + rz * vz) / l
            fa = np.maximum(k * (lact - l) - c * ldot, 0.0)  # >= 0 by the liftoff event; clip round-off
            cols["fx"][idx] = fa * rx / l
            cols["fz"][idx] = fa * rz / l
            cols["a"][idx] = np.arctan2(-rx, rz)
            stance[idx] = True
        else:
            l = lact if instant else Y[4]
            cols["fx"][idx] = 0.0
            cols["fz"][idx] = 0.0
            if i in swings:
                cols["a"][idx] = _hermite(ts, *swings[i])
            elif flight_swing == "policy" and seg.kind == "up":  # the policy's line through its apex value
                cols["a"][idx] = a0 + w0 * (ts - seg.liftoff[3])
            elif seg.kind == "down":
                cols["a"][idx] = curves.angle_array(ts - seg.t_apex)
            else:
                t_lo, a_lo, w_lo, t_ap = seg.liftoff
                cols["a"][idx] = _hermite(ts, t_lo, a_lo, w_lo, t_ap, a0, w0)
        cols["x"][idx], cols["z"][idx], cols["vx"][idx], cols["vz"][idx] = x, z, vx, vz
        cols["l"][idx] = l
        cols["lact"][idx] = lact
    return ReducedTrajectory(
        name=name,
        time_s=frozen_array(t),
        leg_length_m=frozen_array(cols["l"]),
        leg_angle_rad=frozen_array(cols["a"]),
        force_x_n=frozen_array(cols["fx"]),
        force_z_n=frozen_array(cols["fz"]),
        stance=frozen_array(stance, dtype=bool),
        ground_height_m=float(h),
        body_x_m=frozen_array(cols["x"]),
        body_z_m=frozen_array(cols["z"]),
        body_vx_m_s=frozen_array(cols["vx"]),
        body_vz_m_s=frozen_array(cols["vz"]),
        actuator_length_m=frozen_array(cols["lact"]),
        spring_deflection_m=frozen_array(cols["lact"] - cols["l"]),
    )


__all__ = ["simulate", "RTOL", "ATOL", "METHOD"]
