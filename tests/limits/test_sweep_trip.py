"""Bipeds in a sweep: a swing foot reaching the ground before its touchdown is a reduced-model outcome
of its own ('tripped'), beside a fall, and it closes the window.

Reference: the trip is read off the translated trajectory by hand (foot height against the ground,
generated-swing samples only), independently of limits.sweep.runner.trip_of."""

from dataclasses import replace

import numpy as np

from legbridge.limits.checks.swing_clearance import GROUND_TOL_M
from legbridge.limits.sweep.model import END_FALL, OffsetResult, sweep_window
from legbridge.limits.sweep.runner import trip_of
from legbridge.limits.verdict import Verdict
from legbridge.mapping.pipeline import prepare
from legbridge.mapping.slip.demo import demo_run_plan

APEX = {"apex_time_s": (0.0,), "apex_z_m": (0.72,), "apex_vx_m_s": (1.5,)}


def test_a_lowered_swing_is_a_trip_and_a_clear_one_is_not():
    (traj,) = prepare(demo_run_plan((0.0,)), "lab-biped", rate_hz=500.0).trajectories
    assert trip_of(traj) == {}  # the demo's generated swings clear the ground
    gen = np.asarray(traj.leg_generated, dtype=bool)
    h = np.asarray(traj.foot_height_m, dtype=float)
    drop = float(np.min(h[gen])) + 0.01  # 1 cm more than the lowest generated-swing foot height
    low = replace(traj, foot_height_m=h - drop)
    # by hand: the first generated sample more than the tolerance below the ground
    i, k = np.argwhere(gen & (h - drop < -GROUND_TOL_M))[0]
    out = trip_of(low)
    assert out["status"] == "tripped"
    assert f"t = {traj.time_s[i]:.3f} s" in out["fall_reason"] and out["fall_reason"].startswith(traj.legs[k])
    # one leg: never a trip
    (one,) = prepare(demo_run_plan((0.0,)), "lab-biped-leg", rate_hz=500.0).trajectories
    assert trip_of(one) == {}


def test_a_trip_closes_the_window_and_says_so():
    ok = [OffsetResult(h, f"c{h}", "completed", None, 2.0, verdict=Verdict.WITHIN, **APEX) for h in (-0.01, 0.0)]
    trip = OffsetResult(0.01, "c0.01", "tripped", "left swing foot 3 mm below the ground at t = 0.500 s, before its touchdown",
                        2.0, verdict=Verdict.EXCEEDS, **APEX)
    w = sweep_window(ok + [trip])
    assert (w.lo_m, w.hi_m) == (-0.01, 0.0)
    assert w.above.kind == END_FALL and w.above.text.startswith("tripped at +0.0100 m")
    assert not trip.within
