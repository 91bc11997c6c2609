"""Merge flagged samples into LimitSegment runs, vectorised (np.diff on the severity level).

A sample's level is 2 ('exceeds': utilisation > 1 or not finite), 1 ('near': near_from <=
utilisation <= 1) or 0. A segment is a maximal run of one non-zero level, so an exceedance inside a
near band gives near / exceeds / near segments and the exceeds interval is exact.
"""

from __future__ import annotations

import numpy as np

from legbridge.limits.verdict import Verdict

from .results import LimitSegment, LimitTrace

LEVEL_NAMES = {2: Verdict.EXCEEDS, 1: Verdict.NEAR}


def severity_levels(utilisation, near_from: float) -> np.ndarray:
    """Level per sample: 2 exceeds (> 1 or not finite), 1 near (>= near_from), 0 otherwise."""
    u = np.asarray(utilisation, dtype=float)
    level = np.zeros(u.shape, dtype=np.int8)
    level[u >= near_from] = 1
    level[(u > 1.0) | ~np.isfinite(u)] = 2
    return level


def runs(level) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """(start, end inclusive, level) of every maximal run of a constant non-zero level."""
    lv = np.asarray(level)
    if lv.size == 0:
        e = np.zeros(0, dtype=int)
        return e, e, e
    padded = np.concatenate([[0], lv, [0]])
    change = np.flatnonzero(np.diff(padded) != 0)  # index in lv where a new run begins
    starts = change[:-1]
    ends = change[1:] - 1
    lvls = lv[starts]
    keep = lvls != 0
    return starts[keep], ends[keep], lvls[keep]


def trace_segments(case: str, trace: LimitTrace, time_s, margin: float) -> tuple[LimitSegment, ...]:
    """Segments of one trace; ``margin`` sets the near band unless the trace carries near_from."""
    near_from = trace.near_from if trace.near_from is not None else 1.0 - margin
    u = np.asarray(trace.utilisation, dtype=float)
    starts, ends, lvls = runs(severity_levels(u, near_from))
    if starts.size == 0:
        return ()
    key = np.where(np.isnan(u), np.inf, u)
    out = []
    t = np.asarray(time_s, dtype=float)
    for s, e, lv in zip(starts.tolist(), ends.tolist(), lvls.tolist()):  # one iteration per run
        k = s + int(np.argmax(key[s:e + 1]))
        util = float(key[k])
        out.append(LimitSegment(case, trace.joint, trace.limit, LEVEL_NAMES[lv], float(t[s]), float(t[e]), s, e,
                                float(trace.value[k]), float(trace.allowed[k]), trace.unit, util))
    return tuple(out)
