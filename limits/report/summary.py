"""What the report and the terminal summary say about each case: verdict words, worst limit, ranking.

Fail closed: a case with findings (anything that could not be evaluated) or with a verdict string we
do not know is never shown as within the modelled limits.
"""

from __future__ import annotations

from legbridge.limits.formatting import utilisation_text

import math
from dataclasses import dataclass

import numpy as np

from legbridge.limits.cautions import VERDICT_EXCEEDS, VERDICT_NEAR, VERDICT_NOT_EVALUATED, VERDICT_WITHIN
from legbridge.limits.results import SEVERITY_EXCEEDS, SEVERITY_NEAR

# Verdict strings a CaseReview may carry, mapped to the words we print.
_VERDICT_ALIASES = {
    SEVERITY_EXCEEDS: VERDICT_EXCEEDS, VERDICT_EXCEEDS: VERDICT_EXCEEDS,
    SEVERITY_NEAR: VERDICT_NEAR, VERDICT_NEAR: VERDICT_NEAR,
    "within": VERDICT_WITHIN, VERDICT_WITHIN: VERDICT_WITHIN,
    "not_evaluated": VERDICT_NOT_EVALUATED, "not evaluated": VERDICT_NOT_EVALUATED,
    VERDICT_NOT_EVALUATED: VERDICT_NOT_EVALUATED,
}
# CSS class and sort order (worst first) of each verdict
VERDICT_CLASS = {VERDICT_EXCEEDS: "v-exceeds", VERDICT_NOT_EVALUATED: "v-unknown", VERDICT_NEAR: "v-near",
                 VERDICT_WITHIN: "v-within"}
VERDICT_ORDER = {VERDICT_EXCEEDS: 0, VERDICT_NOT_EVALUATED: 1, VERDICT_NEAR: 2, VERDICT_WITHIN: 3}
SEVERITY_WORDS = {SEVERITY_EXCEEDS: VERDICT_EXCEEDS, SEVERITY_NEAR: VERDICT_NEAR}


@dataclass(frozen=True)
class Worst:
    """The case's highest utilisation: limit, joint ('' = whole leg), utilisation (value / allowed)."""

    limit: str
    joint: str
    utilisation: float


def verdict_words(review) -> str:
    """The verdict of a case in the cautions' words; findings or an unknown verdict -> not evaluated."""
    words = _VERDICT_ALIASES.get(str(review.verdict), VERDICT_NOT_EVALUATED)
    if words == VERDICT_EXCEEDS:
        return words
    if review.findings:
        return VERDICT_NOT_EVALUATED
    return words


def worst_of(review) -> Worst | None:
    """Worst limit of a case: from ``review.worst`` when it names one, else the traces, else the segments."""
    w = review.worst or {}
    util = w.get("utilisation")
    if isinstance(w.get("limit"), str) and util is not None:  # {'limit':, 'joint':, 'utilisation':}
        return Worst(str(w["limit"]), str(w.get("joint", "") or ""), float(util))
    best: Worst | None = None
    for tr in review.traces:
        u = np.asarray(tr.utilisation, dtype=float)
        if u.size == 0:
            continue
        m = float(np.max(np.where(np.isnan(u), np.inf, u)))  # NaN = not evaluable: counts as the worst
        if best is None or m > best.utilisation:
            best = Worst(tr.limit, tr.joint, m)
    if best is None and w and all(isinstance(v, (int, float)) for v in w.values()):  # limit -> utilisation
        lim = max(w, key=lambda k: math.inf if math.isnan(w[k]) else w[k])
        best = Worst(str(lim), "", float(w[lim]))
    if best is None:
        for seg in review.segments:
            if best is None or seg.utilisation > best.utilisation:
                best = Worst(seg.limit, seg.joint, float(seg.utilisation))
    return best


def ranked(reviews) -> list:
    """Cases worst first: legbridge.limits.check.rank_cases when available, else by verdict and utilisation."""
    try:
        from legbridge.limits.check import rank_cases
    except ImportError:
        rank_cases = None
    if rank_cases is not None:
        out = list(rank_cases(reviews))
        by_name = {r.case: r for r in reviews}
        return [by_name[x if isinstance(x, str) else x.case] for x in out]

    def key(r):
        w = worst_of(r)
        u = w.utilisation if w is not None and not math.isnan(w.utilisation) else math.inf
        return (VERDICT_ORDER[verdict_words(r)], -u)

    return sorted(reviews, key=key)


def limit_label(limit: str) -> str:
    """A limit name as printed: 'peak_torque' -> 'peak torque'."""
    return str(limit).replace("_", " ")


def joint_label(joint: str) -> str:
    """A joint name for people ('whole leg' for limits of the whole leg)."""
    return joint if joint else "whole leg"


def worst_segments(reviews, n: int = 5) -> list:
    """The n worst segments over all cases (exceeds before near, then utilisation), one per (joint, limit)."""
    segs = [s for r in reviews for s in r.segments]
    segs.sort(key=lambda s: (s.severity != SEVERITY_EXCEEDS, -s.utilisation, s.t_start_s))
    seen, out = set(), []
    for s in segs:
        if (s.joint, s.limit) not in seen:
            seen.add((s.joint, s.limit))
            out.append(s)
    return out[:n]


def exceeded_limits(review) -> str:
    """The limits a case exceeds with their joints, e.g. 'peak torque (hip, knee); voltage (knee)'."""
    by_limit: dict[str, list[str]] = {}
    for s in review.segments:
        if s.severity == SEVERITY_EXCEEDS:
            joints = by_limit.setdefault(limit_label(s.limit), [])
            if joint_label(s.joint) not in joints:
                joints.append(joint_label(s.joint))
    return "; ".join(f"{lim} ({', '.join(j)})" for lim, j in by_limit.items())


pct_text = utilisation_text  # the report's name for the shared rule


def exit_code(reviews) -> int:
    """0 when every case is within the modelled limits (near included), 1 otherwise (fail closed)."""
    return 0 if reviews and all(verdict_words(r) in (VERDICT_WITHIN, VERDICT_NEAR) for r in reviews) else 1
