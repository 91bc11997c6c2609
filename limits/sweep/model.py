"""Disturbance sweeps: the plan's open-loop policy re-simulated on many ground heights, each case
translated and checked like ``legbridge check``. Pure logic and result dataclasses only; running the
work units (locally or on Dask) lives in :mod:`legbridge.limits.sweep.runner`.

Work unit: one ground-height offset of one (plan, robot) pair, described by a small
:class:`OffsetTask` (plain data: model parameters, policy samples, initial apex, settings and the
robot file's path and SHA-256) and answered by an :class:`OffsetResult` (plain data: outcome, apex
states, hardware verdict, worst utilisation per limit). Offsets are in metres: the height of the
flat ground relative to the plan's nominal ground (z up), the same initial apex for every offset.

An offset is *within* when the reduced model completes the plan's duration and the check passes
(no limit exceeded, nothing left unevaluated; 'near' passes). The window is the contiguous run of
within offsets containing the offset nearest to 0 (fail closed: a nominal case that does not pass
gives an empty window).

Apex errors compare the k-th apex of a case with the k-th apex of the nominal (zero-offset) case
(the initial apex, identical by construction, is skipped): height difference in the world frame
``dz_m`` [m] (the hip's apex height, not its height above that case's ground) and forward speed
difference ``dvx_m_s`` [m/s]; RMS over the paired apexes and the last paired one.
"""

from __future__ import annotations

from legbridge.robots.reprs import short_repr
from legbridge.robots.errors import Described

import math
from dataclasses import dataclass, field

import numpy as np

from legbridge.limits.checks.results import CheckSettings
from legbridge.limits.verdict import Verdict, limit_label, utilisation_text
from legbridge.mapping.plan import Plan, Policy, ReducedTrajectory
from legbridge.mapping.slip import (
    ApexState,
    SlipInputError,
    SpringMassParams,
    initial_apex_from_plan,
    params_from_plan,
    policy_from_plan,
)
from legbridge.robots.errors import SweepInputError

SCHEMA_VERSION = "legbridge.sweep/1"

DEFAULT_SPAN_FRACTION = 0.1  # default offsets: -0.1 l0 ... +0.1 l0 (common practice for such studies)
DEFAULT_COUNT = 11

# OffsetResult.verdict for cases the reduced model did not complete (never translated or checked).
NOT_CHECKED = "not_checked"

QPS_ALL = "all"          # both QPs on every completed offset, exactly as `legbridge check`
QPS_VERDICT = "verdict"  # QPs skipped where the sample checks already exceed a limit (verdict unchanged)
QP_MODES = (QPS_ALL, QPS_VERDICT)

# WindowEnd.kind
END_FALL = "fall"
END_LIMIT = "limit"
END_NOT_EVALUATED = "not_evaluated"
END_OPEN = "open"



# --------------------------------------------------------------------------------------------- inputs

def parse_offsets(text: str) -> tuple[float, ...]:
    """Offsets from 'LO:HI:N' [m]: N evenly spaced values from LO to HI inclusive (N >= 1; N = 1 needs LO = HI).

    Values within 1e-12 of 0 become exactly 0 (so the nominal case is in the grid when it should be).
    """
    parts = str(text).split(":")
    expected = "LO:HI:N with LO <= HI in metres and N a whole number >= 1 (e.g. -0.07:0.07:11)"
    if len(parts) != 3:
        raise SweepInputError(key="--ground-offsets", expected=expected, found=text)
    try:
        lo, hi = float(parts[0]), float(parts[1])
        n = int(parts[2])
    except ValueError as exc:
        raise SweepInputError(key="--ground-offsets", expected=expected, found=text) from exc
    if not (math.isfinite(lo) and math.isfinite(hi)) or lo > hi or n < 1 or (n == 1 and lo != hi):
        raise SweepInputError(key="--ground-offsets", expected=expected, found=text)
    if n > MAX_OFFSETS or max(abs(lo), abs(hi)) > MAX_OFFSET_M:
        raise SweepInputError(key="--ground-offsets", expected=f"at most {MAX_OFFSETS} offsets within +-{MAX_OFFSET_M:g} m",
                              found=text, hint="a finer grid over the window found by a coarse one")
    return offsets_between(lo, hi, n)


MAX_OFFSETS = 10_001
"""The most offsets one sweep takes (each simulates, translates and checks a whole case)."""
MAX_OFFSET_M = 10.0
"""Ground offsets beyond this [m] are not a disturbance of a leg's stride."""


def offsets_between(lo_m: float, hi_m: float, n: int) -> tuple[float, ...]:
    """n evenly spaced offsets [m] from lo_m to hi_m, values within 1e-12 m of 0 snapped to 0."""
    v = np.linspace(lo_m, hi_m, n) if n > 1 else np.array([lo_m])
    v = np.where(np.abs(v) < 1e-12, 0.0, v)
    return tuple(float(x) for x in v)


def default_offsets(nominal_leg_length_m: float) -> tuple[float, ...]:
    """The default grid: 11 offsets from -0.1 l0 to +0.1 l0 [m] (common practice for such studies)."""
    s = DEFAULT_SPAN_FRACTION * float(nominal_leg_length_m)
    return offsets_between(-s, s, DEFAULT_COUNT)


@dataclass(frozen=True)
class SimSetup:
    """What the sweep simulates, read from a plan: model, policy, initial apex, duration [s], rate [Hz]."""

    params: SpringMassParams
    policy: Policy
    apex: ApexState
    duration_s: float
    rate_hz: float
    flight_swing: str = "whole-flight"
    gait: str | None = None


def setup_from_plan(plan: Plan) -> SimSetup:
    """The simulation set-up of a plan; refuses a plan without a policy or a model (SweepInputError)."""
    if plan.policy is None:
        raise SweepInputError(key="policy", path=plan.path,
                              expected="an open-loop policy (time_s, actuator_length_m, touchdown_angle_rad)",
                              found=Described("none"), hint="a sweep re-simulates the plan's policy; CSV plans carry none, use a JSON, NPZ or MAT plan")
    try:
        params, policy, apex = params_from_plan(plan), policy_from_plan(plan), initial_apex_from_plan(plan)
    except SlipInputError as exc:
        raise SweepInputError(str(exc)) from exc
    meta = plan.metadata if isinstance(plan.metadata, dict) else {}
    duration = meta.get("duration_s")
    rate = meta.get("rate_hz")
    if not isinstance(duration, (int, float)) or not duration > 0:
        duration = max(c.duration_s for c in plan.cases) if plan.cases else None
    if not isinstance(rate, (int, float)) or not rate > 0:
        t = plan.cases[0].time_s if plan.cases else np.zeros(1)
        rate = 1.0 / float(t[1] - t[0]) if t.shape[0] > 1 else None
    if duration is None or rate is None or not (duration > 0 and rate > 0):
        raise SweepInputError(key="metadata.duration_s/rate_hz", path=plan.path,
                              expected="a positive duration and sample rate (or cases to take them from)",
                              found=Described(f"{duration}/{rate}"))
    swing = meta.get("flight_swing", "whole-flight")
    from legbridge.mapping.slip.simulate import FLIGHT_SWINGS

    if swing not in FLIGHT_SWINGS:
        raise SweepInputError(key="metadata.flight_swing", path=plan.path, expected=f"one of {list(FLIGHT_SWINGS)}",
                              found=swing)
    gait = meta.get("gait")
    return SimSetup(params, policy, apex, float(duration), float(rate), swing, None if gait is None else str(gait))


@dataclass(frozen=True)
class OffsetTask:
    """One work unit: simulate one offset, translate and check it. Plain, small, picklable data.

    index: position of the task in the whole sweep; pair: index of the (plan, robot) pair
    offset_m: ground height [m]; name: case name; setup: the simulation set-up
    robot: the Robot (local workers); None on Dask, where workers load ``robot_path`` and verify
        ``robot_sha256``
    settings: the check settings; qps: one of QP_MODES
    keep_trajectory: return the simulated reduced trajectory too (tests, small sweeps)
    reuse_compiled_qps: let the worker reuse one compiled QP for same-length cases (set by
        run_tasks when a worker gets enough offsets for it to pay; results are the same)
    """

    index: int
    pair: int
    offset_m: float
    name: str
    setup: SimSetup
    robot: object
    robot_path: str
    robot_sha256: str
    settings: CheckSettings
    qps: str = QPS_ALL
    keep_trajectory: bool = False
    reuse_compiled_qps: bool = False


# -------------------------------------------------------------------------------------------- results

@dataclass(frozen=True, eq=False)
class OffsetResult:
    """What one offset gave. Equality ignores the trajectory and the timings (results are deterministic).

    status: 'completed', 'fell' or (a biped) 'tripped': a swing foot reached the ground before its
        touchdown (limits.sweep.runner.trip_of; the offset is still checked); fall_reason: the
        simulator's reason, or the trip's, or None; end_time_s [s]
    apex_time_s, apex_z_m, apex_vx_m_s: every apex, the initial one first [s, m, m/s]
    verdict: a limits.verdict.Verdict, or NOT_CHECKED when the reduced model fell
    worst: ((limit, highest utilisation over joints and samples), ...) sorted by limit name
    worst_limit, worst_joint, worst_utilisation: the highest of them ('' / nan when not checked)
    n_exceeds, n_near: segment counts; findings: what could not be evaluated (fail closed)
    qps_run: whether the two QPs were solved for this offset
    timing_s: (simulate, translate, check) wall times [s]
    """

    offset_m: float
    case: str
    status: str
    fall_reason: str | None
    end_time_s: float
    apex_time_s: tuple[float, ...]
    apex_z_m: tuple[float, ...]
    apex_vx_m_s: tuple[float, ...]
    verdict: str = NOT_CHECKED
    worst: tuple[tuple[str, float], ...] = ()
    worst_limit: str = ""
    worst_joint: str = ""
    worst_utilisation: float = math.nan
    n_exceeds: int = 0
    n_near: int = 0
    findings: tuple[str, ...] = ()
    qps_run: bool = False
    trajectory: ReducedTrajectory | None = field(default=None, compare=False, repr=False)
    timing_s: tuple[float, float, float] = field(default=(0.0, 0.0, 0.0), compare=False, repr=False)

    @property
    def completed(self) -> bool:
        return self.status == "completed"

    @property
    def checked(self) -> bool:
        return self.verdict != NOT_CHECKED

    @property
    def within(self) -> bool:
        """Completed, checked, and its verdict passes (limits.verdict; 'near' is within). A result that
        carries findings never does (fail closed, even if built by hand with a passing verdict)."""
        return self.completed and self.checked and Verdict(self.verdict).passes and not self.findings

    @property
    def worst_dict(self) -> dict:
        return dict(self.worst)

    def __eq__(self, other):  # NaN-aware: two unchecked results have worst_utilisation nan
        if not isinstance(other, OffsetResult):
            return NotImplemented
        keys = ("offset_m", "case", "status", "fall_reason", "end_time_s", "apex_time_s", "apex_z_m", "apex_vx_m_s",
                "verdict", "worst", "worst_limit", "worst_joint", "n_exceeds", "n_near", "findings", "qps_run")
        same_u = (self.worst_utilisation == other.worst_utilisation
                  or (math.isnan(self.worst_utilisation) and math.isnan(other.worst_utilisation)))
        return same_u and all(getattr(self, k) == getattr(other, k) for k in keys)

    __hash__ = None


@dataclass(frozen=True)
class ApexError:
    """Apex state error of one offset against the nominal case (see the module docstring).

    n_paired: apexes compared (initial apex excluded); dz_m, dvx_m_s: per paired apex [m, m/s]
    rms_dz_m, rms_dvx_m_s, final_dz_m, final_dvx_m_s: nan when no apex could be paired
    n_apex, n_apex_nominal: apexes reached after the initial one, by this case and by the nominal
    """

    n_paired: int
    dz_m: tuple[float, ...]
    dvx_m_s: tuple[float, ...]
    rms_dz_m: float
    rms_dvx_m_s: float
    final_dz_m: float
    final_dvx_m_s: float
    n_apex: int
    n_apex_nominal: int


def apex_error(result: OffsetResult, nominal: OffsetResult) -> ApexError:
    """Pair the apexes after the initial one, k-th with k-th, and take differences (case - nominal)."""
    z, vx = np.asarray(result.apex_z_m[1:], float), np.asarray(result.apex_vx_m_s[1:], float)
    zr, vr = np.asarray(nominal.apex_z_m[1:], float), np.asarray(nominal.apex_vx_m_s[1:], float)
    k = min(z.size, zr.size)
    dz, dv = z[:k] - zr[:k], vx[:k] - vr[:k]
    nan = math.nan
    return ApexError(
        n_paired=int(k), dz_m=tuple(float(v) for v in dz), dvx_m_s=tuple(float(v) for v in dv),
        rms_dz_m=float(np.sqrt(np.mean(dz * dz))) if k else nan,
        rms_dvx_m_s=float(np.sqrt(np.mean(dv * dv))) if k else nan,
        final_dz_m=float(dz[-1]) if k else nan, final_dvx_m_s=float(dv[-1]) if k else nan,
        n_apex=int(z.size), n_apex_nominal=int(zr.size),
    )


@dataclass(frozen=True)
class WindowEnd:
    """One end of the window: what closes it.

    kind: END_FALL, END_LIMIT, END_NOT_EVALUATED or END_OPEN (no failing offset beyond, within the swept range)
    first_out_m: the first offset beyond the window that is not within [m] (None when open)
    limit: the limit that closes it (END_LIMIT), joint: its joint ('' for whole-leg limits)
    utilisation: that limit's utilisation there; text: one line in words
    """

    kind: str
    first_out_m: float | None
    limit: str
    joint: str
    utilisation: float
    text: str


@dataclass(frozen=True)
class SweepWindow:
    """The contiguous run of within offsets containing the offset nearest 0; lo_m/hi_m None when empty."""

    lo_m: float | None
    hi_m: float | None
    below: WindowEnd
    above: WindowEnd
    n_within: int

    @property
    def empty(self) -> bool:
        return self.lo_m is None


def closing_end(r: OffsetResult) -> WindowEnd:
    """Why an offset is not within: a fall, a limit (the highest utilisation), or a finding."""
    if r.status == "tripped":
        return WindowEnd(END_FALL, r.offset_m, "", "", math.nan, f"tripped at {r.offset_m:+.4f} m ({r.fall_reason})")
    if not r.completed:
        return WindowEnd(END_FALL, r.offset_m, "", "", math.nan,
                         f"fell at {r.offset_m:+.4f} m ({r.fall_reason or 'no reason given'}, t = {r.end_time_s:.3f} s)")
    if r.verdict == Verdict.EXCEEDS:
        where = f" ({r.worst_joint})" if r.worst_joint else ""
        return WindowEnd(END_LIMIT, r.offset_m, r.worst_limit, r.worst_joint, r.worst_utilisation,
                         f"{limit_label(r.worst_limit)}{where} at {utilisation_text(r.worst_utilisation)} at {r.offset_m:+.4f} m")
    first = r.findings[0] if r.findings else "not checked"
    return WindowEnd(END_NOT_EVALUATED, r.offset_m, "", "", math.nan,
                     f"could not be evaluated at {r.offset_m:+.4f} m ({first})")


def _open(side: str) -> WindowEnd:
    return WindowEnd(END_OPEN, None, "", "", math.nan, "not closed within the swept range")


def sweep_window(results) -> SweepWindow:
    """The window of a sweep's offsets (any order in, sorted by offset inside); pure function."""
    rs = sorted(results, key=lambda r: r.offset_m)
    if not rs:
        raise SweepInputError(key="results", expected="at least one offset", found=Described("none"))
    ok = [r.within for r in rs]
    a = min(range(len(rs)), key=lambda i: (abs(rs[i].offset_m), rs[i].offset_m))
    if not ok[a]:
        end = closing_end(rs[a])
        return SweepWindow(None, None, end, end, 0)
    i, j = a, a
    while i > 0 and ok[i - 1]:
        i -= 1
    while j < len(rs) - 1 and ok[j + 1]:
        j += 1
    below = closing_end(rs[i - 1]) if i > 0 else _open("below")
    above = closing_end(rs[j + 1]) if j < len(rs) - 1 else _open("above")
    return SweepWindow(rs[i].offset_m, rs[j].offset_m, below, above, j - i + 1)


@short_repr('plan_path', 'robot_name', 'offsets', 'window')
@dataclass(frozen=True)
class SweepResult:
    """The sweep of one (plan, robot) pair, offsets sorted ascending.

    nominal: the zero-offset reference (simulated only, always; its apexes are the reference)
    apex_errors: one per offset, same order; window: see :func:`sweep_window`
    nominal_leg_length_m: l0 [m] (the default grid's scale)
    """

    plan_path: str
    plan_sha256: str
    robot_name: str
    robot_path: str
    robot_sha256: str
    nominal_leg_length_m: float
    settings: CheckSettings
    duration_s: float
    sim_rate_hz: float
    offsets: tuple[OffsetResult, ...]
    nominal: OffsetResult
    apex_errors: tuple[ApexError, ...]
    window: SweepWindow
    qps: str = QPS_ALL

    @property
    def all_within(self) -> bool:
        return all(r.within for r in self.offsets)

    @property
    def offsets_m(self) -> tuple[float, ...]:
        return tuple(r.offset_m for r in self.offsets)


def assemble(pair_info: dict, settings: CheckSettings, setup: SimSetup, results, nominal: OffsetResult,
             qps: str = QPS_ALL) -> SweepResult:
    """A SweepResult from one pair's offset results (any order) and its nominal reference.

    pair_info: plan_path, plan_sha256, robot_name, robot_path, robot_sha256, nominal_leg_length_m
    """
    rs = tuple(sorted(results, key=lambda r: r.offset_m))
    return SweepResult(settings=settings, duration_s=setup.duration_s, sim_rate_hz=setup.rate_hz, offsets=rs,
                       nominal=nominal, apex_errors=tuple(apex_error(r, nominal) for r in rs),
                       window=sweep_window(rs), qps=qps, **pair_info)


def exit_status(sweeps) -> int:
    """0 when every offset of every sweep completes within the modelled limits, else 1."""
    return 0 if all(s.all_within for s in sweeps) else 1


__all__ = [
    "ApexError", "DEFAULT_COUNT", "DEFAULT_SPAN_FRACTION", "NOT_CHECKED", "OffsetResult", "OffsetTask", "QPS_ALL",
    "QPS_VERDICT", "QP_MODES", "SCHEMA_VERSION", "SimSetup", "SweepInputError", "SweepResult", "SweepWindow",
    "WindowEnd", "apex_error", "assemble", "closing_end", "default_offsets", "exit_status", "offsets_between",
    "parse_offsets", "setup_from_plan", "sweep_window",
]
