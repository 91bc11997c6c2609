"""Phase-aware resampling: one interpolant per piece, no interpolation across touchdown/liftoff or
through a kink, gap rule."""

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from scipy.interpolate import CubicSpline

from legbridge.mapping.plan import ReducedTrajectory
from legbridge.mapping.resample import ResampleError, kink_samples, resample_case, segment_bounds, time_grid


def case_from(t, y, stance, **kw):
    n = len(t)
    return ReducedTrajectory("c", np.asarray(t, float), np.asarray(y, float), np.zeros(n), np.zeros(n),
                             np.asarray(kw.pop("fz", np.zeros(n)), float), np.asarray(stance, bool), **kw)


@settings(max_examples=40, deadline=None)
@given(st.lists(st.floats(-1.0, 1.0), min_size=4, max_size=12))
def test_passes_through_every_plan_sample_and_each_piece_is_one_scipy_spline(values):
    # interpolation property (the resampled curve passes through the plan's samples) and one
    # interpolant per piece: values, rates and accelerations are scipy's CubicSpline (not-a-knot) on
    # the samples between two cuts (kink_samples), or the line through two samples
    t = np.arange(len(values)) * 0.01
    y = np.asarray(values, dtype=float)
    rs = resample_case(case_from(t, y, np.ones(len(values))), 1000.0)
    on = np.isin(np.round(rs.time_s, 9), np.round(t, 9))
    np.testing.assert_allclose(rs.leg_length.value[on], y, atol=1e-12)
    cuts = kink_samples(t, np.column_stack([y, np.zeros_like(y), np.zeros_like(y), np.zeros_like(y)]))
    knots = np.unique(np.concatenate([[0], cuts, [len(t) - 1]]))
    for a, b in zip(knots[:-1], knots[1:]):
        inside = (rs.time_s > t[a] + 1e-9) & (rs.time_s < t[b] - 1e-9)
        tq = rs.time_s[inside]
        if b - a >= 2:
            ref = CubicSpline(t[a:b + 1], y[a:b + 1])
            val, rate, acc = ref(tq), ref(tq, 1), ref(tq, 2)
        else:
            slope = (y[b] - y[a]) / (t[b] - t[a])
            val, rate, acc = y[a] + slope * (tq - t[a]), np.full(tq.size, slope), np.zeros(tq.size)
        np.testing.assert_allclose(rs.leg_length.value[inside], val, atol=1e-10)
        np.testing.assert_allclose(rs.leg_length.rate[inside], rate, atol=1e-7)
        np.testing.assert_allclose(rs.leg_length.accel[inside], acc, atol=1e-4)


def test_matches_scipy_cubic_spline_per_segment_and_never_crosses_touchdown():
    # Reference: scipy's CubicSpline (values, rates and accelerations of one interpolant) run on each
    # phase segment by hand; the samples are smooth within each phase (no kink to cut at).
    t = np.arange(12) * 0.01
    y = np.where(t < 0.04, 0.7 - 0.5 * t**2, np.where(t < 0.08, 0.65 + (t - 0.06) ** 2, 0.72 + 0.1 * t))
    stance = np.array([0, 0, 0, 0, 1, 1, 1, 1, 0, 0, 0, 0], bool)
    assert segment_bounds(stance) == [(0, 4), (4, 8), (8, 12)]
    rs = resample_case(case_from(t, y, stance), 1000.0)
    for k, (a, b) in enumerate([(0, 4), (4, 8), (8, 12)]):
        sel = rs.segment == k
        ref = CubicSpline(t[a:b], y[a:b])
        np.testing.assert_allclose(rs.leg_length.value[sel], ref(rs.time_s[sel]), atol=1e-14)
        np.testing.assert_allclose(rs.leg_length.rate[sel], ref(rs.time_s[sel], 1), atol=1e-10)
        np.testing.assert_allclose(rs.leg_length.accel[sel], ref(rs.time_s[sel], 2), atol=1e-8)
        assert np.all(rs.stance[sel] == stance[a])


def test_a_kink_is_cut_not_rung_through():
    # A leg angle that turns at t = 0.1 s from -3 rad/s to +1 rad/s (an open-loop swing that restarts):
    # each side is a straight line, so the exact acceleration is 0 and the rate -3 or +1 everywhere;
    # a single spline through the kink would ring on both sides (de Boor, ch. IV).
    t = np.arange(0.0, 0.2001, 0.002)
    a = np.where(t <= 0.1, 0.3 - 3.0 * t, 0.0 + 1.0 * (t - 0.1))
    n = len(t)
    rs = resample_case(ReducedTrajectory("c", t, np.full(n, 0.7), a, np.zeros(n), np.zeros(n), np.zeros(n, bool)), 1000.0)
    np.testing.assert_allclose(rs.leg_angle.accel, 0.0, atol=1e-8)
    np.testing.assert_allclose(rs.leg_angle.rate, np.where(rs.time_s < 0.1 - 1e-9, -3.0, 1.0), atol=1e-8)
    np.testing.assert_allclose(rs.leg_angle.value, np.where(rs.time_s <= 0.1, 0.3 - 3.0 * rs.time_s,
                                                            rs.time_s - 0.1), atol=1e-12)


def test_gap_samples_belong_to_the_earlier_segment():
    # Documented gap rule: a new sample between the last flight sample (t = 0.03) and the first
    # stance sample (t = 0.04) keeps the flight phase; the stance phase starts at t = 0.04.
    t = np.arange(8) * 0.01
    stance = np.array([0, 0, 0, 0, 1, 1, 1, 1], bool)
    rs = resample_case(case_from(t, np.linspace(0.7, 0.6, 8), stance), 1000.0)
    gap = (rs.time_s > 0.03 + 1e-9) & (rs.time_s < 0.04 - 1e-9)
    assert gap.sum() == 9
    assert not rs.stance[gap].any()
    assert rs.stance[np.isclose(rs.time_s, 0.04)].all()
    assert not rs.stance[np.isclose(rs.time_s, 0.03)].any()


def test_force_step_at_touchdown_is_not_smeared():
    # A force that jumps at touchdown: no interpolated force before the first stance sample.
    t = np.arange(8) * 0.01
    stance = np.array([0, 0, 0, 0, 1, 1, 1, 1], bool)
    fz = np.where(stance, 800.0, 0.0)
    rs = resample_case(case_from(t, np.full(8, 0.7), stance, fz=fz), 1000.0)
    np.testing.assert_array_equal(rs.force_z_n[~rs.stance], 0.0)
    np.testing.assert_array_equal(rs.force_z_n[rs.stance], 800.0)


def test_acceleration_is_smooth_through_a_swing_reversal():
    # A leg angle a(t) = 0.23 - 80 (t - 0.1)^2 (constant acceleration -160 rad/s^2, a maximum at
    # t = 0.1 s) sampled at 500 Hz: the resampled acceleration must be the analytic -160 rad/s^2
    # everywhere (a cubic spline reproduces a parabola exactly; de Boor, A Practical Guide to
    # Splines, ch. IV), not PCHIP's alternating estimate near the extremum.
    t = np.arange(0.0, 0.2001, 0.002)
    a = 0.23 - 80.0 * (t - 0.1) ** 2
    n = len(t)
    case = ReducedTrajectory("c", t, np.full(n, 0.7), a, np.zeros(n), np.zeros(n), np.zeros(n, bool))
    rs = resample_case(case, 1000.0)
    np.testing.assert_allclose(rs.leg_angle.accel, -160.0, rtol=1e-8)
    np.testing.assert_allclose(rs.leg_angle.rate, -160.0 * (rs.time_s - 0.1), atol=1e-9)


def test_stance_force_bridges_to_zero_after_liftoff_without_overshoot():
    # A stance force falling to zero at liftoff (the spring-mass plan's shape): the grid sample
    # after the last stance sample lies on the straight line to the first flight sample's zero; a
    # cubic continued past the last stance sample would go negative (hand arithmetic: halfway
    # between 15 N and 0 N is 7.5 N).
    t = np.arange(8) * 0.002
    stance = np.array([1, 1, 1, 1, 0, 0, 0, 0], bool)
    fz = np.array([600.0, 300.0, 120.0, 15.0, 0.0, 0.0, 0.0, 0.0])
    rs = resample_case(case_from(t, np.full(8, 0.7), stance, fz=fz), 1000.0)
    gap = (rs.time_s > t[3] + 1e-12) & (rs.time_s < t[4] - 1e-12)
    assert gap.sum() == 1 and rs.stance[gap].all()
    np.testing.assert_allclose(rs.force_z_n[gap], 7.5, rtol=1e-12)
    assert np.all(rs.force_z_n >= 0.0)


def test_derivatives_are_analytic_for_a_line():
    # A straight line (slope 0.2 m/s) is reproduced exactly by a cubic spline, derivatives included.
    t = np.linspace(0, 1, 11)
    rs = resample_case(case_from(t, 0.5 + 0.2 * t, np.ones(11)), 200.0)
    np.testing.assert_allclose(rs.leg_length.rate, 0.2, atol=1e-12)
    np.testing.assert_allclose(rs.leg_length.accel, 0.0, atol=1e-10)


def test_grid_and_bad_input():
    np.testing.assert_allclose(time_grid(0.0, 0.01, 1000.0), np.arange(11) * 1e-3)
    with pytest.raises(ResampleError, match="time must increase"):
        resample_case(case_from([0, 0.1, 0.1], [1, 1, 1], [1, 1, 1]), 1000.0)
    with pytest.raises(ResampleError, match="rate"):
        resample_case(case_from([0, 0.1], [1, 1], [1, 1]), 0.0)
    with pytest.raises(ResampleError, match="too short"):
        resample_case(case_from([0.0], [1.0], [1]), 1000.0)
