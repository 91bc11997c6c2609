"""Result dataclasses of the checks: settings, traces, segments, thermal and QP results, CaseReview.

Utilisation, 'near' and 'exceeds' are defined once, in legbridge.limits.verdict. Arrays are
read-only; times in seconds; units of peak/allowed in ``unit``.

Convention for every array here: time axis first, shape (n_samples, ...), SI units.
"""

from __future__ import annotations

from legbridge.robots.reprs import short_repr

import math
from dataclasses import dataclass, field

import numpy as np

from legbridge.limits.verdict import CaseSummary, Verdict
from legbridge.robots.errors import CheckSettingsError, LegbridgeError


MAX_DURATION_S = 1e7
"""The longest test a winding-temperature check takes (about 116 days); longer is an input error."""


@dataclass(frozen=True)
class CheckSettings:
    """What the user asked for.

    rate_hz: controller / export rate [Hz]
    duration_s: test duration [s] for the thermal model, the plan repeated; None (default) = the plan
        repeated for as long as the test runs (periodic steady state, time to limit)
    margin: width of the 'near' band below each limit, as a fraction of the limit (0.1 = 10 %)
    friction: ground friction coefficient overriding the robot file's, or None
    supply_power_w: total electrical power the supply can deliver, or None (not checked)
    regen_energy_j: energy the supply can absorb per step when motors regenerate, or None
    range_margin_rad: width of the 'near' band before each hard stop [rad]; None = ``margin`` times
        half the joint's range
    max_joint_accel_rad_s2: acceleration bound for the nearest-motion QP [rad/s^2]; None = derived
        per joint and sample as peak joint torque / joint-space inertia of the unloaded leg
    max_flight_pitch_rad: how far the body may pitch in flight before the landing is flagged [rad];
        the default 0.15 rad (8.6 deg) is a stated choice, not a property of any robot: set your lab's
    min_swing_clearance_m: how high a biped's swing foot must stay above the ground over its generated
        swing [m]; the default 0.02 m is a stated choice, not a property of any robot: set your lab's
    gait: a biped's leg assignment in its text form (mapping.gait.parse_gait: 'alternating',
        'alternating:right', 'same-leg', 'same-leg:right', 'both'); None = the plan's, else alternating
    run_qps: solve the force-feasibility and nearest-motion QPs (True) or skip them (False)
    solver: cvxpy solver name for the QPs ('CLARABEL' or 'OSQP')
    """

    rate_hz: float = 1000.0
    duration_s: float | None = None
    margin: float = 0.1
    friction: float | None = None
    supply_power_w: float | None = None
    regen_energy_j: float | None = None
    range_margin_rad: float | None = None
    max_joint_accel_rad_s2: float | None = None
    max_flight_pitch_rad: float = 0.15
    min_swing_clearance_m: float = 0.02
    gait: str | None = None
    run_qps: bool = True
    solver: str = "CLARABEL"

    def __post_init__(self):
        def bad(key, expected, found):
            raise CheckSettingsError(key=key, expected=expected, found=found)

        if not (math.isfinite(self.rate_hz) and self.rate_hz > 0):
            bad("rate_hz", "a positive rate in Hz", self.rate_hz)
        if not (0.0 <= self.margin < 1.0):
            bad("margin", "a fraction in [0, 1)", self.margin)
        for key in ("duration_s", "supply_power_w", "regen_energy_j", "max_joint_accel_rad_s2", "max_flight_pitch_rad",
                    "min_swing_clearance_m"):
            v = getattr(self, key)
            if v is not None and not (math.isfinite(v) and v > 0):
                bad(key, "a positive number or None", v)
        if self.duration_s is not None and self.duration_s > MAX_DURATION_S:
            bad("duration_s", f"a test of at most {MAX_DURATION_S:g} s (about {MAX_DURATION_S / 86400:.0f} days)", self.duration_s)
        if self.friction is not None and not (math.isfinite(self.friction) and self.friction > 0):
            bad("friction", "a positive friction coefficient", self.friction)
        if self.range_margin_rad is not None and not (math.isfinite(self.range_margin_rad) and self.range_margin_rad >= 0):
            bad("range_margin_rad", "a non-negative angle in rad", self.range_margin_rad)
        if self.gait is not None:
            from legbridge.mapping.gait import parse_gait
            from legbridge.robots.errors import PlanFormatError

            try:
                parse_gait(self.gait)
            except PlanFormatError as exc:
                bad("gait", exc.expected or "a gait", self.gait)
        if self.solver.upper() not in ("CLARABEL", "OSQP"):
            bad("solver", "'CLARABEL' or 'OSQP'", self.solver)


@dataclass(frozen=True)
class LimitSegment:
    """A run of consecutive flagged samples of one case, joint and limit, all of one severity.

    joint: joint name, or '' for limits of the whole leg (ground force, total power)
    severity: Verdict.EXCEEDS or Verdict.NEAR
    i_start, i_end: first and last sample index (inclusive)
    peak: the worst value in the run, allowed: the limit at that sample (same unit)
    utilisation: peak / allowed (inf when not finite: fail closed)
    """

    case: str
    joint: str
    limit: str
    severity: Verdict
    t_start_s: float
    t_end_s: float
    i_start: int
    i_end: int
    peak: float
    allowed: float
    unit: str
    utilisation: float


@short_repr('limit', 'joint', 'unit', 'value')
@dataclass(frozen=True, eq=False)
class LimitTrace:
    """One limit evaluated at every sample: value, allowed value and utilisation, shape (n,).

    near_from: utilisation from which a sample is 'near' (None = 1 - settings.margin)
    source: where the allowed value came from (e.g. 'drive peak current', 'no-load speed')
    """

    limit: str
    joint: str
    unit: str
    value: np.ndarray
    allowed: np.ndarray
    utilisation: np.ndarray
    near_from: float | None = None
    source: str = ""


@short_repr('name', 'status', 'ok', 'solve_time_s')
@dataclass(frozen=True, eq=False)
class QPSolution:
    """Outcome of one batched QP: status, timing, residuals and the solution arrays.

    status: the solver's status string; ok: True only for an optimal solution
    solve_time_s: wall time of the cvxpy solve call, compile included [s]
    values: named solution arrays, e.g. {'force_n': (n, 2), 'shortfall_n': (n,)}
    residuals: 'primal_inf' (largest constraint violation), 'stationarity_inf' (KKT gradient
        residual), 'complementarity_inf', 'objective', 'solver_time_s' (solver alone) ...
    """

    name: str
    status: str
    ok: bool
    solve_time_s: float
    solver: str
    values: dict = field(default_factory=dict)
    residuals: dict = field(default_factory=dict)


@short_repr('joint_names', 'duration_s', 'time_to_limit_s')
@dataclass(frozen=True, eq=False)
class ThermalResult:
    """Winding temperatures over the assumed test (limits.checks.thermal).

    duration_s: the test duration [s]; inf when the plan is taken as repeated for as long as the
        test runs (periodic steady state, the default)
    time_s (m,) [s], winding_temp_c (m, j) [degC]: the winding's hottest temperature in each shown
        repetition of the plan over the whole test (for the report; m is small)
    phase_temp_c (n, j): temperature at each plan sample in its hottest repetition (the steady state,
        or the last repetition within a finite test); what the winding-temperature check judges
    ambient_c, max_temp_c (j,): ambient and the winding limit per joint [degC]
    time_to_limit_s: joint -> first time the winding reaches its limit [s], None when it does not
        (within the test)
    runaway: joint -> True when no steady state exists (the loss grows faster with temperature than
        the cooling removes it); steady_peak_c: joint -> hottest periodic steady-state temperature
        [degC] (inf with runaway); rms_current_a (j,): RMS current over one plan period [A];
        period_s: the plan period [s]
    """

    joint_names: tuple[str, ...]
    time_s: np.ndarray
    winding_temp_c: np.ndarray
    ambient_c: np.ndarray
    max_temp_c: np.ndarray
    phase_temp_c: np.ndarray
    duration_s: float
    time_to_limit_s: dict = field(default_factory=dict)
    runaway: dict = field(default_factory=dict)
    steady_peak_c: dict = field(default_factory=dict)
    rms_current_a: np.ndarray | None = None
    period_s: float = 0.0

    @property
    def periodic(self) -> bool:
        """True when the plan is taken as repeated for as long as the test runs (no --duration)."""
        return math.isinf(self.duration_s)

    def describe(self) -> str:
        """Which test the thermal check assumed, in words."""
        if self.periodic:
            return (f"plan ({self.period_s:g} s) repeated for as long as the test runs (periodic steady state; "
                    f"--duration S for a finite test)")
        return f"a {self.duration_s:g} s test, the {self.period_s:g} s plan repeated"


@short_repr('case', 'summary', 'segments')
@dataclass(frozen=True, eq=False)
class CaseReview:
    """Everything the checks found for one case.

    summary: verdict, worst utilisation per limit and joint, segment counts (limits.verdict.summarise,
        computed once by the checker); verdict, passed and worst below read from it
    segments: flagged runs, in time order; traces: every limit evaluated at every sample
    findings: things that could not be evaluated (fail closed), in words
    thermal: the winding thermal simulation; force_qp, motion_qp: QP results or None (not run)
    regen_energy_j: energy regenerated per step [J] (always computed); power_w: summary figures
    spring_steps: torque steps the plan asks through series springs at touchdown and liftoff
        (mapping.motor_side.SpringStep): reported as what they are, never differenced into currents
    corrected: the summary of the nearest-motion QP's corrected targets checked again (what they
        still exceed), or None when the QP was not run or did not solve
    """

    case: str
    ground_height_m: float
    summary: CaseSummary
    segments: tuple[LimitSegment, ...]
    traces: tuple[LimitTrace, ...]
    findings: tuple[str, ...]
    trajectory: object  # legbridge.mapping.JointTrajectory
    thermal: ThermalResult
    force_qp: QPSolution | None = None
    motion_qp: QPSolution | None = None
    regen_energy_j: np.ndarray | None = None
    power_w: dict = field(default_factory=dict)
    spring_steps: tuple = ()
    corrected: CaseSummary | None = None

    @property
    def verdict(self) -> Verdict:
        return self.summary.verdict

    @property
    def passed(self) -> bool:
        return self.summary.passes

    @property
    def worst(self) -> dict[str, float]:
        """limit -> highest utilisation over joints and samples."""
        return self.summary.per_limit

    def trace(self, limit: str, joint: str = "") -> LimitTrace:
        """The trace of one limit and joint ('' for whole-leg limits)."""
        for t in self.traces:
            if t.limit == limit and t.joint == joint:
                return t
        raise LegbridgeError(f"case '{self.case}' has no trace for limit '{limit}', joint '{joint}'",
                             expected=f"one of {sorted({(t.limit, t.joint) for t in self.traces})}", found=(limit, joint))

    def __repr__(self) -> str:
        return (f"CaseReview(case={self.case!r}, verdict={self.verdict.value!r}, segments={len(self.segments)}, "
                f"findings={len(self.findings)}, samples={self.trajectory.n_samples})")
