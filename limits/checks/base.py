"""What every limit module shares: the Limit declaration, the evaluation context and small
vectorised helpers.

A limit module declares ``LIMITS``, a tuple of :class:`Limit`: name, display name, unit, scope, the
report panel it is drawn in, its place in every listing, and ``evaluate(ctx) -> tuple[LimitTrace,
...]``. legbridge.limits.checks finds the modules by themselves; nothing else lists limit names.
Every trace is shape (n_samples,), SI units, read-only.
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass, replace

import numpy as np

from legbridge.limits.checks.results import CheckSettings, LimitTrace, ThermalResult
from legbridge.robots.robot import Robot

# Limit.scope: what one trace of the limit covers
SCOPE_JOINT = "joint"   # one trace per joint
SCOPE_LEG = "leg"       # one trace for the foot / leg (ground force)
SCOPE_ROBOT = "robot"   # one trace for the whole robot (supply power, regenerated energy)
SCOPES = (SCOPE_JOINT, SCOPE_LEG, SCOPE_ROBOT)

# Limit.panel: where the report draws the limit's flagged spans (None: tables only)
PANEL_ANGLE, PANEL_SPEED, PANEL_TORQUE, PANEL_GROUND = "angle", "speed", "torque", "ground"
PANELS = (PANEL_ANGLE, PANEL_SPEED, PANEL_TORQUE, PANEL_GROUND, None)


@dataclass(frozen=True, eq=False)
class CheckContext:
    """Inputs of one case's checks.

    traj: legbridge.mapping.joint_trajectory.JointTrajectory; robot; settings
    friction: the friction coefficient in force (settings.friction, else the robot's) [-]
    thermal: the winding thermal simulation of this case (limits.checks.thermal), computed once
    """

    traj: object
    robot: Robot
    settings: CheckSettings
    friction: float
    thermal: ThermalResult | None = None

    @property
    def dt_s(self) -> float:
        return 1.0 / float(self.traj.rate_hz)

    def joints(self):
        """(column index, Joint) for each trajectory joint, matched by name."""
        return [(i, self.robot.joint(name)) for i, name in enumerate(self.traj.joint_names)]


@dataclass(frozen=True, eq=False)
class Limit:
    """One modelled limit, declared by the module that evaluates it.

    name: the code written to files ('peak_torque'); display: what people read ('peak torque')
    unit: unit of the value and the allowed value; scope: SCOPE_JOINT, SCOPE_LEG or SCOPE_ROBOT
    panel: report panel of its flagged spans (PANEL_*), None for tables only
    order: position in every listing (smaller first); caution: how the caution text names it
    evaluate(ctx) -> tuple of LimitTrace (empty when the limit is not asked for, e.g. no supply cap)
    instantaneous: each sample is judged on its own (a value at an instant, not a history); such
        limits are also judged at the phase ends (mapping.resample, "Phase ends"): see fold_phase_ends
    """

    name: str
    display: str
    unit: str
    scope: str
    panel: str | None
    order: int
    evaluate: Callable
    caution: str = ""
    instantaneous: bool = True

    def __post_init__(self):
        if self.scope not in SCOPES or self.panel not in PANELS:
            raise ValueError(f"limit {self.name!r}: scope {self.scope!r} / panel {self.panel!r} not in {SCOPES} / {PANELS}")


def frozen(a) -> np.ndarray:
    """A read-only float copy of ``a``."""
    out = np.array(a, dtype=float, copy=True)
    out.setflags(write=False)
    return out


def ratio(value, allowed) -> np.ndarray:
    """value / allowed with a zero limit handled: 0/0 -> 0, x/0 -> inf (x > 0); NaN stays NaN."""
    v = np.asarray(value, dtype=float)
    a = np.asarray(allowed, dtype=float)
    v, a = np.broadcast_arrays(v, a)
    out = np.full(v.shape, np.inf)
    nz = a != 0
    np.divide(v, a, out=out, where=nz)
    out = np.where(~nz & (v <= 0), 0.0, out)
    return np.where(np.isnan(v) | np.isnan(a), np.nan, out)


def signed_ratio(value, lo, hi) -> np.ndarray:
    """Utilisation of a two-sided bound lo <= value <= hi with lo < 0 < hi normally.

    value >= 0 is measured against hi, value < 0 against lo. A bound on the wrong side of zero (hi
    <= 0 for a value >= 0) gives 1 when the value sits on it and inf when it is beyond it.
    """
    v = np.asarray(value, dtype=float)
    lo = np.asarray(lo, dtype=float)
    hi = np.asarray(hi, dtype=float)
    v, lo, hi = np.broadcast_arrays(v, lo, hi)
    pos = v >= 0
    bound = np.where(pos, hi, -lo)
    mag = np.where(pos, v, -v)
    good = bound > 0
    out = np.where(mag > bound, np.inf, 1.0)
    np.divide(mag, bound, out=out, where=good)
    return np.where(np.isnan(v) | np.isnan(lo) | np.isnan(hi), np.nan, out)


def trace(limit: str, joint: str, unit: str, value, allowed, utilisation, *, near_from=None, source="") -> LimitTrace:
    """A read-only LimitTrace; allowed is broadcast to the value's shape."""
    value = np.asarray(value, dtype=float)
    return LimitTrace(limit, joint, unit, frozen(value), frozen(np.broadcast_to(allowed, value.shape)),
                      frozen(np.broadcast_to(utilisation, value.shape)), near_from, source)


def fold_phase_ends(grid: tuple[LimitTrace, ...], ends: tuple[LimitTrace, ...], index) -> tuple[LimitTrace, ...]:
    """Grid traces with each phase end's sample folded into the grid sample before it (``index``)
    where the phase end's utilisation is the higher (NaN counts as higher: fail closed). Traces are
    matched by (limit, joint); a grid trace without a phase-end twin is returned as it is."""
    by_key = {(t.limit, t.joint): t for t in ends}
    index = np.asarray(index, dtype=int)
    out = []
    for g in grid:
        e = by_key.get((g.limit, g.joint))
        if e is None or index.size == 0:
            out.append(g)
            continue
        u_g = np.asarray(g.utilisation, dtype=float)[index]
        u_e = np.asarray(e.utilisation, dtype=float)
        worse = (u_e > u_g) | (np.isnan(u_e) & ~np.isnan(u_g))
        if not worse.any():
            out.append(g)
            continue
        arrays = []
        for name in ("value", "allowed", "utilisation"):
            a = np.array(getattr(g, name), dtype=float, copy=True)
            a[index[worse]] = np.asarray(getattr(e, name), dtype=float)[worse]
            a.setflags(write=False)
            arrays.append(a)
        out.append(replace(g, value=arrays[0], allowed=arrays[1], utilisation=arrays[2]))
    return tuple(out)
