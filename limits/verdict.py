"""The verdict: its four values, how a case gets one, its worst utilisation, the ranking of cases,
and the one rule for writing a utilisation. Every output (terminal, JSON, HTML report, sweep tables)
renders from what is computed here; nothing else decides whether a case passes or what its worst
limit is.

Utilisation is value / allowed (1.0 = exactly at the limit; at the limit is within it). A sample is
'near' when near_from <= utilisation <= 1 and 'exceeds' when utilisation > 1 or is not finite (fail
closed). A case's verdict: EXCEEDS when any sample exceeds a limit; otherwise NOT_EVALUATED when
anything could not be evaluated (a finding); otherwise NEAR when any sample is near; else WITHIN.
WITHIN and NEAR pass; the other two do not.
"""

from __future__ import annotations

import enum
import math
from dataclasses import dataclass

import numpy as np


class Verdict(str, enum.Enum):
    """One case's (or one segment's) standing against the modelled limits.

    The value is the code written to files ('within', 'near', 'exceeds', 'not_evaluated'); ``words``
    is what people read; ``passes`` whether a test plan with it passes; ``rank`` orders worst first.
    """

    WITHIN = "within"
    NEAR = "near"
    NOT_EVALUATED = "not_evaluated"
    EXCEEDS = "exceeds"

    @property
    def words(self) -> str:
        return _WORDS[self]

    @property
    def passes(self) -> bool:
        return self in (Verdict.WITHIN, Verdict.NEAR)

    @property
    def rank(self) -> int:
        """0 within, 1 near, 2 not evaluated, 3 exceeds (higher is worse)."""
        return _RANK[self]

    @property
    def css_class(self) -> str:
        return "v-" + self.value.replace("_", "-")

    def __str__(self) -> str:  # the code, so f-strings and CSV cells write 'exceeds', not 'Verdict.EXCEEDS'
        return self.value


_WORDS = {
    Verdict.WITHIN: "within the modelled limits",
    Verdict.NEAR: "near a modelled limit",
    Verdict.NOT_EVALUATED: "could not be evaluated",
    Verdict.EXCEEDS: "exceeds a modelled limit",
}
_RANK = {Verdict.WITHIN: 0, Verdict.NEAR: 1, Verdict.NOT_EVALUATED: 2, Verdict.EXCEEDS: 3}


def utilisation_text(u) -> str:
    """Utilisation (value / allowed) in %: 0.1 % steps, 0.01 % steps within 0.5 % of the limit (so an
    exceeding 100.004 % reads '100.00 %', not a misleading '100.0 %' next to 'exceeds'); words when it
    is not a number ('not evaluated'), infinite ('not finite (counted as exceeding)': fail closed) or
    beyond a million per cent ('over 1,000,000 %')."""
    if u is None or math.isnan(float(u)):
        return "not evaluated"
    u = float(u)
    if math.isinf(u):
        return "not finite (counted as exceeding)"
    if u >= 1e4:  # beyond a million per cent the digits say nothing more
        return "over 1,000,000 %"
    digits = 2 if abs(u - 1.0) < 0.005 else 1
    return f"{100.0 * u:.{digits}f} %"


def limit_label(limit: str) -> str:
    """A limit as people read it: its display name from the check that declares it."""
    from legbridge.limits.checks import display_name

    return display_name(limit)


def joint_label(joint: str) -> str:
    """A joint name for people ('whole robot' for limits of the whole robot)."""
    return joint if joint else "whole robot"


@dataclass(frozen=True)
class Worst:
    """The highest utilisation of one limit on one joint ('' = whole robot) over the samples."""

    limit: str
    joint: str
    utilisation: float

    @property
    def text(self) -> str:
        """'peak torque (hip) 115.7 %'."""
        return f"{limit_label(self.limit)} ({joint_label(self.joint)}) {utilisation_text(self.utilisation)}"


@dataclass(frozen=True)
class CaseSummary:
    """What a case's checks amount to, computed once (summarise) and rendered everywhere.

    verdict: the case verdict; by_limit: the worst utilisation of every (limit, joint) that was
    evaluated, worst first; n_exceeds, n_near: segment counts; n_findings: things not evaluated
    """

    case: str
    verdict: Verdict
    by_limit: tuple[Worst, ...]
    n_exceeds: int
    n_near: int
    n_findings: int

    @property
    def passes(self) -> bool:
        return self.verdict.passes

    @property
    def worst(self) -> Worst | None:
        """The single highest utilisation of the case, or None when nothing was evaluated."""
        return self.by_limit[0] if self.by_limit else None

    @property
    def per_limit(self) -> dict[str, float]:
        """limit -> highest utilisation over joints (the worst joint of each limit)."""
        out: dict[str, float] = {}
        for w in self.by_limit:  # worst first, so the first seen per limit is its highest
            out.setdefault(w.limit, w.utilisation)
        return out


def _sort_key(u: float) -> float:
    return math.inf if math.isnan(u) else u


def trace_worst(utilisation) -> float:
    """Highest utilisation of one trace; a NaN sample (not evaluable) counts as infinite (fail closed)."""
    u = np.asarray(utilisation, dtype=float)
    return float(np.max(np.where(np.isnan(u), np.inf, u), initial=0.0))


def _order(limit: str) -> int:
    from legbridge.limits.checks import all_limits

    return next((k for k, lim in enumerate(all_limits()) if lim.name == limit), len(all_limits()))


def summarise(case: str, traces, segments, findings) -> CaseSummary:
    """The verdict and worst utilisations of one case from its LimitTraces, LimitSegments and findings.

    Worst first; utilisations equal to 1e-9 (two limits that are one physical bound, e.g. peak torque
    and peak current at standstill) are ordered as the limits are listed (limits.checks.all_limits).
    """
    by = sorted((Worst(t.limit, t.joint, trace_worst(t.utilisation)) for t in traces),
                key=lambda w: (-round(_sort_key(w.utilisation), 9), _order(w.limit), w.joint))
    n_ex = sum(s.severity == Verdict.EXCEEDS for s in segments)
    n_near = sum(s.severity == Verdict.NEAR for s in segments)
    if n_ex:
        verdict = Verdict.EXCEEDS
    elif findings:
        verdict = Verdict.NOT_EVALUATED
    elif n_near:
        verdict = Verdict.NEAR
    else:
        verdict = Verdict.WITHIN
    return CaseSummary(case, verdict, tuple(by), n_ex, n_near, len(findings))


def rank(summaries) -> tuple[int, ...]:
    """Indices of the cases worst first: by verdict (exceeds, not evaluated, near, within), then by the
    highest utilisation of any limit, then plan order."""
    s = list(summaries)

    def key(i):
        w = s[i].worst
        return (-s[i].verdict.rank, -_sort_key(w.utilisation) if w else math.inf, i)

    return tuple(sorted(range(len(s)), key=key))


def exit_status(summaries) -> int:
    """0 when there is at least one case and every case passes (within or near), else 1 (fail closed)."""
    s = list(summaries)
    return 0 if s and all(x.passes for x in s) else 1


__all__ = ["CaseSummary", "Verdict", "Worst", "exit_status", "joint_label", "limit_label", "rank", "summarise",
           "trace_worst", "utilisation_text"]
