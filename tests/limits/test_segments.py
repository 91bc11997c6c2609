"""Segment merging edge cases. Reference: runs computed by a plain Python scan written here (an
independent, obvious implementation) and hand-written expected intervals."""

import numpy as np
from hypothesis import given, settings
from hypothesis import strategies as st

from legbridge.limits.checks.results import LimitTrace
from legbridge.limits.checks.segments import runs, severity_levels, trace_segments


def _tr(util, limit="x", joint="j"):
    u = np.asarray(util, dtype=float)
    return LimitTrace(limit, joint, "u", u * 2.0, np.full(u.shape, 2.0), u)


def _spans(util, margin=0.1):
    t = np.arange(len(util)) * 0.01
    return [(s.severity, s.i_start, s.i_end, s.t_start_s, s.t_end_s) for s in trace_segments("c", _tr(util), t, margin)]


def test_single_sample_first_and_last():
    assert _spans([1.5, 0, 0, 0, 1.2]) == [("exceeds", 0, 0, 0.0, 0.0), ("exceeds", 4, 4, 0.04, 0.04)]


def test_near_exceeds_near_split_and_peak():
    segs = trace_segments("c", _tr([0.95, 1.3, 1.1, 0.92, 0.0]), np.arange(5) * 0.5, 0.1)
    assert [(s.severity, s.i_start, s.i_end) for s in segs] == [("near", 0, 0), ("exceeds", 1, 2), ("near", 3, 3)]
    assert segs[1].peak == 2.6 and segs[1].allowed == 2.0 and segs[1].utilisation == 1.3
    assert segs[1].t_start_s == 0.5 and segs[1].t_end_s == 1.0


def test_exact_limit_is_near_not_exceeds_and_nan_is_exceeds():
    assert _spans([1.0]) == [("near", 0, 0, 0.0, 0.0)]
    assert _spans([0.0, np.nan, np.inf]) == [("exceeds", 1, 2, 0.01, 0.02)]
    assert _spans([0.899999, 0.9], margin=0.1) == [("near", 1, 1, 0.01, 0.01)]


def test_adjacent_segments_of_different_limits_stay_separate():
    t = np.arange(4) * 0.1
    a = trace_segments("c", _tr([1.2, 1.2, 0, 0], limit="voltage"), t, 0.1)
    b = trace_segments("c", _tr([0, 0, 1.2, 1.2], limit="peak_current"), t, 0.1)
    assert [(s.limit, s.i_start, s.i_end) for s in a + b] == [("voltage", 0, 1), ("peak_current", 2, 3)]


def test_empty_trace():
    assert _spans([]) == []


@settings(max_examples=200, deadline=None)
@given(st.lists(st.integers(0, 2), max_size=40))
def test_runs_match_plain_scan(levels):
    expected, i = [], 0
    while i < len(levels):
        j = i
        while j + 1 < len(levels) and levels[j + 1] == levels[i]:
            j += 1
        if levels[i]:
            expected.append((i, j, levels[i]))
        i = j + 1
    s, e, lv = runs(np.array(levels, dtype=np.int8))
    assert list(zip(s.tolist(), e.tolist(), lv.tolist())) == expected


def test_severity_levels():
    np.testing.assert_array_equal(severity_levels([0.0, 0.9, 1.0, 1.0000001, np.nan], 0.9), [0, 1, 1, 2, 2])
