"""Phase detection and touchdown / liftoff events (sample times on the plan's grid)."""

import numpy as np

from legbridge.mapping.readers import DEFAULT_THRESHOLD_FRACTION, detect_phases, stance_events


def test_threshold_is_strictly_above():
    # 1 % of body weight for 25 kg at 9.81 m/s^2: 0.01 * 245.25 = 2.4525 N (hand arithmetic)
    thr = DEFAULT_THRESHOLD_FRACTION * 25 * 9.81
    assert thr == 2.4525
    s = detect_phases([0.0, 2.4525, 2.46, 400.0, 1.0], thr)
    np.testing.assert_array_equal(s, [False, False, True, True, False])
    assert not s.flags.writeable


def test_events_of_two_hops():
    t = np.arange(10) * 0.1
    s = np.array([0, 1, 1, 0, 0, 0, 1, 1, 1, 0], dtype=bool)
    ev = stance_events(t, s)
    np.testing.assert_allclose(ev.touchdown_s, [0.1, 0.6])
    np.testing.assert_allclose(ev.liftoff_s, [0.3, 0.9])
    assert not ev.starts_in_stance and not ev.ends_in_stance


def test_events_when_starting_and_ending_in_stance():
    t = np.array([0.0, 0.1, 0.2, 0.3])
    ev = stance_events(t, [True, False, False, True])
    np.testing.assert_allclose(ev.liftoff_s, [0.1])
    np.testing.assert_allclose(ev.touchdown_s, [0.3])
    assert ev.starts_in_stance and ev.ends_in_stance
