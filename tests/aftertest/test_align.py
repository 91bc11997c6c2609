"""Alignment of a hardware log with the plan's clock, on synthetic logs with a planted shift (the
reference: the shift we put in), cross-checked with numpy.correlate on a uniform grid."""

import numpy as np
import pytest

from legbridge.limits.aftertest.align import MIN_CORRELATION, align_log, joint_lags
from legbridge.limits.aftertest.log import Channel, HardwareLog
from legbridge.robots.errors import AlignmentError, LegbridgeError

T = 0.8                      # plan period [s]
SHIFT = 0.2371               # the planted offset: log time of plan time 0 [s]
NOISE = 0.005                # position noise [rad]
TARGET_T = np.arange(400) * T / 400


def hip(t):
    w = 2 * np.pi / T
    return 0.4 * np.sin(w * t) + 0.15 * np.sin(2 * w * t + 0.7) + 0.05 * np.sin(3 * w * t + 2.0)


def knee(t):
    w = 2 * np.pi / T
    return -0.8 + 0.3 * np.sin(w * t + 1.3) + 0.2 * np.sin(2 * w * t - 0.4)


TARGETS = {"hip": hip(TARGET_T), "knee": knee(TARGET_T)}


def irregular_times(rng, seconds=4.0, step=0.002):
    """Log times at an irregular rate: steps uniform in [0.6, 1.4] x step."""
    t = np.cumsum(rng.uniform(0.6 * step, 1.4 * step, int(seconds / step)))
    return t - t[0]


def make_log(t, positions, sync=None, contacts=None):
    ch = [Channel(j, "position", x, f"{j}_position_rad") for j, x in positions.items()]
    ch += [Channel(leg, "contact", c, f"{leg}_contact") for leg, c in (contacts or {}).items()]
    return HardwareLog(path="synthetic-log.csv", sha256="", time_s=t, channels=tuple(ch), sync=sync)


def shifted_log(rng, t, shift=SHIFT, lags=None, noise=NOISE):
    lags = lags or {}
    return {"hip": hip(t - shift - lags.get("hip", 0.0)) + rng.normal(0, noise, t.size),
            "knee": knee(t - shift - lags.get("knee", 0.0)) + rng.normal(0, noise, t.size)}


def test_planted_shift_recovered_within_one_log_sample_and_matches_numpy_correlate():
    rng = np.random.default_rng(11)
    t = irregular_times(rng)
    pos = shifted_log(rng, t)
    a = align_log(make_log(t, pos), target_time_s=TARGET_T, target_position=TARGETS, period_s=T)
    step = np.max(np.diff(t))
    assert a.method == "cross-correlation"
    assert abs(a.offset_s - SHIFT) <= step            # reference: the planted shift
    assert a.confidence >= MIN_CORRELATION
    # reference: the planted noise is the only difference, so the residual RMS is its standard deviation
    assert abs(a.residual_rms_rad - NOISE) < 0.1 * NOISE
    # cross-check: numpy.correlate of the log resampled on a uniform grid with the target tiled over the
    # log (a direct sum over every integer shift, no FFT), the grid step h = T/400
    h = T / 400
    grid = np.arange(0, t[-1], h)
    c = 0
    for j in ("hip", "knee"):
        x = np.interp(grid, t, pos[j])
        y = np.tile(TARGETS[j], grid.size // 400 + 2)[: grid.size + 399]
        c = c + np.correlate(y - y.mean(), x - x.mean(), mode="valid")
    ref = np.mod(-int(np.argmax(c)) * h, T)           # log sample k sits at plan phase index k + p
    assert abs(ref - SHIFT) <= h
    assert abs(a.offset_s - ref) <= h


def test_subsample_accuracy_on_a_coarse_log():
    # a 100 Hz log and a shift halfway between two 10 ms grid points: the parabola through the
    # correlation peak does much better than the half sample the grid alone would give
    rng = np.random.default_rng(5)
    t = np.arange(600) * 0.01
    shift = 0.235
    a = align_log(make_log(t, shifted_log(rng, t, shift=shift)), target_time_s=TARGET_T, target_position=TARGETS,
                  period_s=T)
    assert abs(a.offset_s - shift) < 0.2 * 0.01       # reference: the planted shift


def test_tracking_lag_still_aligns_and_the_offset_includes_it():
    rng = np.random.default_rng(12)
    t = irregular_times(rng)
    lag = 0.04
    a = align_log(make_log(t, shifted_log(rng, t, lags={"hip": lag, "knee": lag})),
                  target_time_s=TARGET_T, target_position=TARGETS, period_s=T)
    assert abs(a.offset_s - (SHIFT + lag)) <= np.max(np.diff(t))   # reference: planted shift + planted lag
    assert "lag" in a.detail


def test_sync_edge_is_plan_time_zero_and_joint_lags_are_found():
    rng = np.random.default_rng(13)
    t = irregular_times(rng, seconds=5.0)
    e = int(np.searchsorted(t, 1.0))                  # the robot stands for 1 s, then the sync rises
    lags = {"hip": 0.0, "knee": 0.025}
    pos = {}
    for j, f in (("hip", hip), ("knee", knee)):
        p = np.maximum(t - t[e] - lags[j], 0.0)       # holding the first target until it moves
        pos[j] = f(p) + rng.normal(0, NOISE, t.size)
    sync = (np.arange(t.size) >= e).astype(float)
    log = make_log(t, pos, sync=sync)
    a = align_log(log, target_time_s=TARGET_T, target_position=TARGETS, period_s=T)
    assert a.method == "sync"
    assert a.offset_s == t[e]                         # reference: the planted edge sample
    assert a.confidence >= MIN_CORRELATION
    got = joint_lags(log, a, TARGET_T, TARGETS, T)
    step = np.max(np.diff(t))
    assert abs(got["hip"] - lags["hip"]) <= step      # reference: the planted lags
    assert abs(got["knee"] - lags["knee"]) <= step


def test_a_sync_edge_the_positions_contradict_falls_back_to_correlation():
    rng = np.random.default_rng(14)
    t = irregular_times(rng)
    sync = (t >= SHIFT + 0.3).astype(float)           # edge 0.3 s late: a wrong wire, say
    a = align_log(make_log(t, shifted_log(rng, t), sync=sync), target_time_s=TARGET_T, target_position=TARGETS, period_s=T)
    assert a.method == "cross-correlation"
    assert "refused first: sync" in a.detail
    assert abs(a.offset_s - SHIFT) <= np.max(np.diff(t))   # reference: the planted shift


def _contacts(rng, t, shift, touchdowns, stance=0.25, jitter=0.001):
    out = {}
    for leg, td in touchdowns.items():
        on = td + shift + T * np.arange(-1, int(t[-1] / T) + 2) + rng.normal(0, jitter, int(t[-1] / T) + 3)
        out[leg] = np.any((t[:, None] >= on[None, :]) & (t[:, None] < on[None, :] + stance), axis=1)
    return out


@pytest.mark.parametrize("with_positions", [True, False])
def test_touchdowns_give_the_offset(with_positions):
    rng = np.random.default_rng(15)
    t = irregular_times(rng)
    planned = {"left": np.array([0.1]), "right": np.array([0.5])}
    contacts = _contacts(rng, t, SHIFT, planned)
    log = make_log(t, shifted_log(rng, t) if with_positions else {}, contacts=contacts)
    a = align_log(log, target_time_s=TARGET_T, target_position=TARGETS, period_s=T, touchdown_times=planned)
    assert a.method == "touchdowns"
    assert abs(a.offset_s - SHIFT) <= np.max(np.diff(t))   # reference: the planted shift
    assert 0.5 < a.confidence <= 1.0
    assert np.isnan(a.residual_rms_rad) != with_positions
    if not with_positions:
        assert "not checked" in a.detail


@pytest.mark.parametrize("motion", ["other-frequencies", "random-walk"])
def test_a_log_of_another_motion_is_refused(motion):
    rng = np.random.default_rng(16)
    t = irregular_times(rng)
    if motion == "other-frequencies":
        pos = {"hip": 0.4 * np.sin(2 * np.pi * 1.7 * t) + 0.1 * np.sin(2 * np.pi * 4.1 * t),
               "knee": -0.8 + 0.3 * np.sin(2 * np.pi * 0.9 * t + 1)}
    else:
        pos = {"hip": np.cumsum(rng.normal(0, 0.01, t.size)), "knee": np.cumsum(rng.normal(0, 0.01, t.size))}
    with pytest.raises(AlignmentError) as err:
        align_log(make_log(t, pos), target_time_s=TARGET_T, target_position=TARGETS, period_s=T)
    msg = str(err.value)
    assert "synthetic-log.csv" in msg and "cross-correlation" in msg and "at best" in msg and "sync column" in msg
    assert "\n" not in msg


def test_a_motion_with_an_inner_half_period_is_ambiguous():
    # only the second harmonic: shifts of 0 and T/2 fit equally (reference: sin(2w(t + T/2)) = sin(2wt))
    w = 2 * np.pi / T
    target = {"hip": 0.3 * np.sin(2 * w * TARGET_T)}
    rng = np.random.default_rng(17)
    t = irregular_times(rng)
    log = make_log(t, {"hip": 0.3 * np.sin(2 * w * (t - SHIFT)) + rng.normal(0, NOISE, t.size)})
    with pytest.raises(AlignmentError, match="ambiguous"):
        align_log(log, target_time_s=TARGET_T, target_position=target, period_s=T)


@pytest.mark.parametrize("kwargs", [
    {"period_s": 0.0},
    {"period_s": 0.5},                                             # targets beyond one period
    {"target_position": {"hip": np.zeros(3)}},                     # not as long as the target times
    {"target_time_s": TARGET_T[::-1]},
])
def test_bad_targets_are_alignment_errors(kwargs):
    rng = np.random.default_rng(18)
    t = irregular_times(rng, seconds=2.0)
    args = {"target_time_s": TARGET_T, "target_position": TARGETS, "period_s": T, **kwargs}
    with pytest.raises(AlignmentError):
        align_log(make_log(t, shifted_log(rng, t)), **args)


def test_nothing_to_align_with():
    t = np.arange(100) * 0.01
    with pytest.raises(LegbridgeError, match="no joint logged with a position"):
        align_log(make_log(t, {}), target_time_s=TARGET_T, target_position=TARGETS, period_s=T)
