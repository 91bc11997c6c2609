"""What a spring-mass simulation returns: apex states, events, the outcome and the sampled case."""

from __future__ import annotations

import math
from dataclasses import dataclass

from legbridge.mapping.plan import ReducedTrajectory
from legbridge.robots.errors import SlipInputError

COMPLETED = "completed"
FELL = "fell"

# Event kinds recorded by the simulator.
APEX = "apex"
TOUCHDOWN = "touchdown"
LIFTOFF = "liftoff"
FALL = "fall"
END = "end"


@dataclass(frozen=True)
class ApexState:
    """Body state at an apex of flight (vertical velocity zero).

    x_m, z_m: body (hip) position [m], world frame (z up); vx_m_s: forward speed [m/s];
    time_s: time of the apex [s] (0 for an initial state).
    """

    x_m: float
    z_m: float
    vx_m_s: float
    time_s: float = 0.0

    def __post_init__(self) -> None:
        for name in ("x_m", "z_m", "vx_m_s", "time_s"):
            v = getattr(self, name)
            if isinstance(v, bool) or not isinstance(v, (int, float)) or not math.isfinite(v):
                raise SlipInputError(key=f"apex.{name}", expected="a finite number", found=v)
            object.__setattr__(self, name, float(v))

    def to_dict(self) -> dict:
        return {"x_m": self.x_m, "z_m": self.z_m, "vx_m_s": self.vx_m_s, "time_s": self.time_s}


@dataclass(frozen=True)
class Event:
    """One phase event.

    kind: 'apex', 'touchdown', 'liftoff', 'fall' or 'end'; time_s [s];
    body state at the event: x_m, z_m [m], vx_m_s, vz_m_s [m/s];
    leg_angle_rad [rad] and leg_length_m [m] at the event (foot on or above the ground);
    foot_x_m: foot contact point [m] (touchdown and liftoff; NaN otherwise)
    """

    kind: str
    time_s: float
    x_m: float
    z_m: float
    vx_m_s: float
    vz_m_s: float
    leg_angle_rad: float
    leg_length_m: float
    foot_x_m: float = math.nan


@dataclass(frozen=True)
class Outcome:
    """How the simulation ended.

    status: 'completed' (reached the requested duration) or 'fell'
    reason: None when completed; else one of 'body reached the ground', 'leg compressed below
        minimum length', 'no apex within time limit', 'body moving backward', 'no foot clearance at
        apex', 'liftoff without upward velocity'
    time_s: the time the simulation ended [s]
    """

    status: str
    reason: str | None
    time_s: float

    @property
    def completed(self) -> bool:
        return self.status == COMPLETED

    def to_dict(self) -> dict:
        return {"status": self.status, "reason": self.reason, "time_s": self.time_s}


@dataclass(frozen=True, eq=False)
class SimulationResult:
    """One simulated ground-height case.

    trajectory: the case sampled at the requested rate up to the end (or the fall)
    events: phase events in time order (the first is the initial apex)
    outcome: completed / fell, with reason and time
    apex_states: the initial apex and every apex reached
    n_rhs_evaluations: ODE right-hand-side calls (cost indicator)
    """

    trajectory: ReducedTrajectory
    events: tuple[Event, ...]
    outcome: Outcome
    apex_states: tuple[ApexState, ...]
    n_rhs_evaluations: int = 0

    def events_of(self, kind: str) -> tuple[Event, ...]:
        return tuple(e for e in self.events if e.kind == kind)


__all__ = ["ApexState", "Event", "Outcome", "SimulationResult", "COMPLETED", "FELL"]
