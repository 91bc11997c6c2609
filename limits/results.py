"""Result dataclasses of the limits layer: settings, segments, per-case reviews, the whole review.

Utilisation is value / allowed (1.0 = exactly at the limit; at the limit is within it). A sample is
'near' when utilisation >= 1 - margin and <= 1, 'exceeds' when utilisation > 1. Arrays are
read-only; times in seconds; units of peak/allowed in ``unit``.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

SCHEMA_VERSION = "legbridge.review/1"

SEVERITY_EXCEEDS = "exceeds"
SEVERITY_NEAR = "near"


@dataclass(frozen=True)
class CheckSettings:
    """What the user asked for.

    rate_hz: controller / export rate [Hz]
    duration_s: test duration for the thermal model, plan repeated periodically; None = one period
    margin: width of the 'near' band below each limit, as a fraction of the limit (0.1 = 10 %)
    friction: ground friction coefficient overriding the robot file's, or None
    supply_power_w: total electrical power the supply can deliver, or None (not checked)
    regen_energy_j: energy the supply can absorb per step when motors regenerate, or None
    """

    rate_hz: float = 1000.0
    duration_s: float | None = None
    margin: float = 0.1
    friction: float | None = None
    supply_power_w: float | None = None
    regen_energy_j: float | None = None


@dataclass(frozen=True)
class LimitSegment:
    """A run of consecutive flagged samples of one case, joint and limit.

    joint: joint name, or '' for limits of the whole leg (ground force, total power)
    i_start, i_end: first and last sample index (inclusive)
    peak: the worst value in the run, allowed: the limit at that sample (same unit)
    utilisation: peak / allowed
    """

    case: str
    joint: str
    limit: str
    severity: str
    t_start_s: float
    t_end_s: float
    i_start: int
    i_end: int
    peak: float
    allowed: float
    unit: str
    utilisation: float


@dataclass(frozen=True, eq=False)
class LimitTrace:
    """One limit evaluated at every sample: value, allowed value and utilisation, shape (n,)."""

    limit: str
    joint: str
    unit: str
    value: np.ndarray
    allowed: np.ndarray
    utilisation: np.ndarray


@dataclass(frozen=True, eq=False)
class QPSolution:
    """Outcome of one batched QP: status, timing, residuals and the solution arrays.

    status: the solver's status string; ok: True only for an optimal solution
    values: named solution arrays, e.g. {'force_n': (n, 2), 'shortfall_n': (n,)}
    """

    name: str
    status: str
    ok: bool
    solve_time_s: float
    solver: str
    values: dict = field(default_factory=dict)
    residuals: dict = field(default_factory=dict)


@dataclass(frozen=True, eq=False)
class CaseReview:
    """Everything the checks found for one case."""

    case: str
    ground_height_m: float
    verdict: str
    worst: dict
    segments: tuple[LimitSegment, ...]
    traces: tuple[LimitTrace, ...]
    findings: tuple[str, ...]
    trajectory: object  # legbridge.mapping.JointTrajectory
    thermal_time_s: np.ndarray | None = None
    winding_temp_c: np.ndarray | None = None
    time_to_temp_limit_s: dict = field(default_factory=dict)
    force_qp: QPSolution | None = None
    motion_qp: QPSolution | None = None

    @property
    def passed(self) -> bool:
        return self.verdict != SEVERITY_EXCEEDS and not self.findings
