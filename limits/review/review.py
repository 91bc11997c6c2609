"""The Review: everything one review of a plan found, computed once; every output renders it.

    build_review(plan, robot, settings, *, sweep=SWEEP_AUTO, jobs=None, progress=None) -> Review
    assemble_review(plan, robot, settings, cases, *, sweep=None) -> Review

The terminal text (limits.review.text), the JSON document (limits.review.json_doc) and the HTML
report (limits.review.report) read a Review and never recompute a verdict, a worst limit or the
ranking.
"""

from __future__ import annotations

from legbridge.robots.reprs import short_repr

import time
from collections.abc import Callable
from dataclasses import dataclass, field
from datetime import datetime

from legbridge.limits.checks.results import CaseReview, CheckSettings
from legbridge.limits.verdict import CaseSummary, exit_status, rank
from legbridge.robots.errors import UsageError

Progress = Callable[[str], None]

SWEEP_AUTO = "auto"  # sweep the default ground-height grid when the plan carries an open-loop policy


@short_repr('plan', 'robot', 'cases', 'ranking')
@dataclass(frozen=True, eq=False)
class Review:
    """One review of a plan on a robot.

    plan: the Plan (path, SHA-256, cases, scaling); robot: the Robot; settings: the CheckSettings
    cases: one CaseReview per case, in plan order; ranking: indices into ``cases``, worst first
    sweep: a limits.sweep.model.SweepResult of the plan's open-loop policy, or None
    provenance: tool and dependency versions (legbridge.robots.version.provenance)
    created: ISO 8601 time of the review; sweep_note: why no sweep was run, when one was asked for
    warnings: what the plan and robot disagree on without being refused (leg length, mass)
    timings_s: wall time of each stage [s]
    """

    plan: object
    robot: object
    settings: CheckSettings
    cases: tuple[CaseReview, ...]
    ranking: tuple[int, ...]
    sweep: object = None
    provenance: dict = field(default_factory=dict)
    created: str = ""
    sweep_note: str = ""
    timings_s: dict = field(default_factory=dict)
    warnings: tuple[str, ...] = ()

    @property
    def summaries(self) -> tuple[CaseSummary, ...]:
        return tuple(c.summary for c in self.cases)

    @property
    def ranked(self) -> tuple[CaseReview, ...]:
        """The cases worst first."""
        return tuple(self.cases[i] for i in self.ranking)

    @property
    def exit_code(self) -> int:
        """0 when every case passes (within or near the modelled limits), else 1 (fail closed)."""
        return exit_status(self.summaries)

    @property
    def gait(self) -> str:
        """A biped's gait in words (mapping.gait.Gait.describe), '' for a one-leg robot."""
        return next((c.trajectory.gait for c in self.cases if getattr(c.trajectory, "gait", "")), "")

    @property
    def trajectories(self) -> tuple:
        return tuple(c.trajectory for c in self.cases)

    def case(self, name: str) -> CaseReview:
        """The CaseReview of the case called ``name``."""
        for c in self.cases:
            if c.case == name:
                return c
        raise UsageError("no such case", key="case", expected=f"one of {[c.case for c in self.cases]}", found=name)

    def __repr__(self) -> str:
        verdicts = ", ".join(f"{c.case}: {c.verdict.value}" for c in self.cases)
        return f"Review(plan={getattr(self.plan, 'path', None)!r}, robot={self.robot.name!r}, cases=[{verdicts}])"


def now_iso() -> str:
    """The local time with its UTC offset, to the second (ISO 8601)."""
    return datetime.now().astimezone().isoformat(timespec="seconds")


def assemble_review(plan, robot, settings: CheckSettings | None, cases, *, sweep=None, created: str | None = None,
                    sweep_note: str = "", timings_s: dict | None = None, warnings=()) -> Review:
    """A Review of already checked cases: ranks them once and records the provenance."""
    from legbridge.robots.version import provenance, qp_solver_version

    settings = settings or CheckSettings()
    cases = tuple(cases)
    prov = provenance()
    prov["qp_solver"] = f"{settings.solver.upper()} {qp_solver_version(settings.solver) or '(version unknown)'}"
    return Review(plan, robot, settings, cases, rank(c.summary for c in cases), sweep, prov, created or now_iso(),
                  sweep_note, dict(timings_s or {}), tuple(warnings))


def _sweep(prepared, settings, sweep, jobs, say):
    """(SweepResult or None, note). ``sweep``: None (none), SWEEP_AUTO (the default grid when the plan
    carries an open-loop policy) or a sequence of offsets [m] (a plan without a policy is refused)."""
    plan = prepared.plan
    if sweep is None:
        return None, ""
    if sweep == SWEEP_AUTO and plan.policy is None:
        return None, ("no ground-height sweep: the plan carries no open-loop policy (CSV plans cannot carry one; "
                      "JSON, NPZ and MAT plans can)")
    from legbridge.limits.sweep.runner import run_sweep

    offsets = None if sweep == SWEEP_AUTO else tuple(sweep)
    say("sweeping the ground height (re-simulating the plan's open-loop policy)")
    counter = getattr(say, "count", None)  # a progress that counts (cli.progress.StderrProgress)
    (result,) = run_sweep([plan], [prepared.robot], offsets, settings=settings, jobs=jobs, progress=counter)
    return result, ""


def build_review(plan, robot, settings: CheckSettings | None = None, *, sweep=SWEEP_AUTO, jobs: int | None = None,
                 progress: Progress | None = None, created: str | None = None) -> Review:
    """Read (when given paths), translate and check every case of ``plan`` on ``robot`` and sweep the
    ground height (see _sweep). ``plan``: a Plan or a plan file; ``robot``: a Robot, a description
    file or a bundled robot name. Raises a LegbridgeError subclass on bad input; writes nothing."""
    from legbridge.limits.checks.case import check_case
    from legbridge.mapping.pipeline import prepare

    settings = settings or CheckSettings()
    say = progress or (lambda _msg: None)
    timings: dict[str, float] = {}
    t = time.perf_counter()
    say("reading the robot and the plan")
    from legbridge.mapping.pipeline import read_against
    from legbridge.robots.library import as_robot

    robot = as_robot(robot)
    plan = read_against(plan, robot)
    if sweep is not None and sweep != SWEEP_AUTO:  # an explicit sweep needs a policy: refuse before any work
        from legbridge.limits.sweep.model import setup_from_plan

        setup_from_plan(plan)
    say(f"translating {len(plan.cases)} case(s) at {settings.rate_hz:g} Hz")
    prepared = prepare(plan, robot, rate_hz=settings.rate_hz, gait=settings.gait)
    timings["translate_s"] = time.perf_counter() - t
    t = time.perf_counter()
    cases = []
    for traj in prepared.trajectories:
        say(f"checking case {traj.case}")
        cases.append(check_case(traj, robot, settings))
    timings["check_s"] = time.perf_counter() - t
    t = time.perf_counter()
    swept, note = _sweep(prepared, settings, sweep, jobs, say)
    timings["sweep_s"] = time.perf_counter() - t
    return assemble_review(plan, robot, settings, cases, sweep=swept, created=created, sweep_note=note,
                           timings_s=timings, warnings=prepared.warnings)


__all__ = ["Progress", "Review", "SWEEP_AUTO", "assemble_review", "build_review", "now_iso"]
