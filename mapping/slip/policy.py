"""The open-loop policy: leg angle and actuator length over the time since the most recent apex.

A policy is stored as :class:`legbridge.mapping.plan.Policy` (sampled arrays). The simulator reads
it through :class:`PolicyCurves`: monotone piecewise-cubic (PCHIP) interpolation of the samples,
which is continuous with a continuous first derivative, and held at the end values outside the
sampled time range. Simulating from a plan file's policy therefore reproduces the plan's cases.
"""

from __future__ import annotations
from legbridge.robots.errors import Described

import math
from bisect import bisect_right
from typing import Callable

import numpy as np
from scipy.interpolate import PchipInterpolator

from legbridge.mapping.plan import Policy, frozen_array
from legbridge.robots.errors import SlipInputError


def make_policy(time_s, actuator_length_m, touchdown_angle_rad) -> Policy:
    """A validated, read-only :class:`Policy` from sampled arrays.

    time_s: time since the most recent apex [s], strictly increasing, starting at 0, >= 2 samples
    actuator_length_m: actuator length (spring rest length) [m], > 0
    touchdown_angle_rad: leg angle held during flight [rad], |angle| < pi/2
    """
    t = np.asarray(time_s, dtype=float)
    lact = np.asarray(actuator_length_m, dtype=float)
    ang = np.asarray(touchdown_angle_rad, dtype=float)
    for name, a in (("time_s", t), ("actuator_length_m", lact), ("touchdown_angle_rad", ang)):
        if a.ndim != 1 or a.shape[0] < 2:
            raise SlipInputError(key=f"policy.{name}", expected="a 1-D array of at least 2 samples", found=Described(f"shape {a.shape}"))
        if not np.all(np.isfinite(a)):
            raise SlipInputError(key=f"policy.{name}", expected="finite values", found=Described("NaN or inf"))
    if not (lact.shape == t.shape and ang.shape == t.shape):
        raise SlipInputError(
            key="policy",
            expected=f"arrays of equal length ({t.shape[0]} time samples)",
            found=Described(f"actuator_length_m {lact.shape[0]}, touchdown_angle_rad {ang.shape[0]}"),
        )
    if t[0] != 0.0:
        raise SlipInputError(key="policy.time_s[0]", expected="0 (time since apex)", found=float(t[0]))
    bad = np.flatnonzero(np.diff(t) <= 0.0)
    if bad.size:
        i = int(bad[0]) + 1
        raise SlipInputError(key=f"policy.time_s[{i}]", expected=f"greater than {t[i - 1]:g}", found=float(t[i]))
    if np.any(lact <= 0.0):
        i = int(np.flatnonzero(lact <= 0.0)[0])
        raise SlipInputError(key=f"policy.actuator_length_m[{i}]", expected="> 0", found=float(lact[i]))
    if np.any(np.abs(ang) >= math.pi / 2):
        i = int(np.flatnonzero(np.abs(ang) >= math.pi / 2)[0])
        raise SlipInputError(key=f"policy.touchdown_angle_rad[{i}]", expected="|angle| < pi/2", found=float(ang[i]))
    return Policy(time_s=frozen_array(t), actuator_length_m=frozen_array(lact), touchdown_angle_rad=frozen_array(ang))


def policy_from_functions(
    actuator_length: Callable[[np.ndarray], np.ndarray],
    touchdown_angle: Callable[[np.ndarray], np.ndarray],
    horizon_s: float,
    step_s: float,
) -> Policy:
    """Sample analytic policy functions of the time since apex on ``[0, horizon_s]`` every ``step_s`` [s]."""
    if not (horizon_s > 0 and step_s > 0 and step_s <= horizon_s):
        raise SlipInputError(key="horizon_s/step_s", expected="0 < step_s <= horizon_s", found=Described(f"{horizon_s:g}/{step_s:g}"))
    n = int(round(horizon_s / step_s))
    t = np.linspace(0.0, n * step_s, n + 1)
    return make_policy(t, actuator_length(t), touchdown_angle(t))


class _Pchip:
    """PCHIP of samples with a fast scalar evaluation (plain Python floats, for ODE right-hand sides)."""

    def __init__(self, t: np.ndarray, y: np.ndarray) -> None:
        self._pp = PchipInterpolator(t, y, extrapolate=False)
        self._dpp = self._pp.derivative()
        self._x = [float(v) for v in t]
        self._c = [tuple(float(v) for v in col) for col in self._pp.c.T]
        self._t0 = self._x[0]
        self._t1 = self._x[-1]
        self._y0 = float(y[0])
        self._y1 = float(y[-1])
        self._last = len(self._x) - 2

    def scalar(self, t: float) -> float:
        if t <= self._t0:
            return self._y0
        if t >= self._t1:
            return self._y1
        i = bisect_right(self._x, t) - 1
        if i > self._last:
            i = self._last
        c0, c1, c2, c3 = self._c[i]
        d = t - self._x[i]
        return ((c0 * d + c1) * d + c2) * d + c3

    def array(self, t: np.ndarray) -> np.ndarray:
        tc = np.clip(np.asarray(t, dtype=float), self._t0, self._t1)
        return self._pp(tc)

    def rate(self, t: np.ndarray | float) -> np.ndarray:
        """Derivative [unit/s]; zero outside the sampled range (the value is held there)."""
        ta = np.asarray(t, dtype=float)
        inside = (ta >= self._t0) & (ta <= self._t1)
        out = np.where(inside, self._dpp(np.clip(ta, self._t0, self._t1)), 0.0)
        return out


class PolicyCurves:
    """Continuous reading of a :class:`Policy` (PCHIP of its samples, end values held).

    ``actuator_length(t)`` [m] and ``angle(t)`` [rad] take the time since apex ``t`` [s] as a float
    (fast, for ODE right-hand sides); the ``*_array`` variants take arrays; ``angle_rate`` [rad/s].
    """

    def __init__(self, policy: Policy) -> None:
        p = make_policy(policy.time_s, policy.actuator_length_m, policy.touchdown_angle_rad)
        self.policy = p
        self._lact = _Pchip(p.time_s, p.actuator_length_m)
        self._ang = _Pchip(p.time_s, p.touchdown_angle_rad)

    def actuator_length(self, t: float) -> float:
        return self._lact.scalar(t)

    def angle(self, t: float) -> float:
        return self._ang.scalar(t)

    def actuator_length_array(self, t: np.ndarray) -> np.ndarray:
        return self._lact.array(t)

    def angle_array(self, t: np.ndarray) -> np.ndarray:
        return self._ang.array(t)

    def angle_rate(self, t) -> np.ndarray:
        return self._ang.rate(t)

    def actuator_rate(self, t) -> np.ndarray:
        return self._lact.rate(t)


def smoothstep(u: np.ndarray) -> np.ndarray:
    """3u^2 - 2u^3 on [0, 1], 0 below, 1 above (C1 ramp)."""
    u = np.clip(np.asarray(u, dtype=float), 0.0, 1.0)
    return u * u * (3.0 - 2.0 * u)


def stroke_profile(rest_length_m: float, stroke_m: float, start_s: float, rise_s: float, hold_s: float, fall_s: float):
    """Actuator length function: rest, smooth rise by ``stroke_m`` from ``start_s`` over ``rise_s``,
    hold for ``hold_s``, smooth return over ``fall_s`` [m, s]. Returns ``f(t) -> length [m]``."""

    def f(t):
        t = np.asarray(t, dtype=float)
        up = smoothstep((t - start_s) / rise_s)
        down = smoothstep((t - start_s - rise_s - hold_s) / fall_s)
        return rest_length_m + stroke_m * (up - down)

    return f


def linear_retraction(angle_at_apex_rad: float, retraction_rate_rad_s: float, min_angle_rad: float):
    """Leg angle function: ``angle_at_apex - rate * t``, not below ``min_angle_rad`` [rad, rad/s].

    A positive rate swings the foot backward while the body falls (swing-leg retraction), so a
    later touchdown (lower ground) lands at a steeper leg angle. Returns ``f(t) -> angle [rad]``.
    """

    def f(t):
        t = np.asarray(t, dtype=float)
        return np.maximum(angle_at_apex_rad - retraction_rate_rad_s * t, min_angle_rad)

    return f


__all__ = [
    "PolicyCurves",
    "linear_retraction",
    "make_policy",
    "policy_from_functions",
    "smoothstep",
    "stroke_profile",
]
