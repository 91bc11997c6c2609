"""The after-test comparison on logs made from the reviewed trajectory itself.

References: a log that repeats the reviewed targets and predicted currents exactly must align at the
planted start (to a fraction of a log sample), track with zero error, show a current gain of 1 and reach
the same utilisations as the review (an identity: the same numbers through another path); a log whose
currents are all 1/0.88 times the prediction is what a torque constant 12 % low gives, I = tau / (eta N Kt)
(DC motor model, Hughes and Drury, Electric Motors and Drives, ch. 3), and must show that gain.
"""

from __future__ import annotations

from dataclasses import replace

import numpy as np
import pytest

from legbridge.limits.aftertest.compare import compare_log, periodic_at
from legbridge.limits.aftertest.log_reader import read_log
from legbridge.limits.checks.case import check_case
from legbridge.limits.checks.results import CheckSettings
from legbridge.mapping.pipeline import prepare
from legbridge.robots.library import resolve_robot

from pathlib import Path

PLAN = Path(__file__).resolve().parents[2] / "examples" / "demo-run-plan.json"
START_S = 0.8371          # log time at which the motion starts (planted)
PERIODS = 6


@pytest.fixture(scope="module")
def reviewed():
    settings = CheckSettings(rate_hz=500.0, run_qps=False)
    prep = prepare(str(PLAN), resolve_robot("lab-biped"), rate_hz=500.0, cases=["nominal"])
    return check_case(prep.trajectories[0], prep.robot, settings), prep.robot, settings


def _log(tmp_path, reviewed, current_scale=1.0, seed=3):
    rv, robot, _ = reviewed
    traj = rv.trajectory
    period = traj.repetition_period_s
    rng = np.random.default_rng(seed)
    steps = 0.005 + rng.uniform(-5e-4, 5e-4, int((START_S + PERIODS * period) / 0.005))
    t = np.cumsum(steps)
    t = t[t < START_S + PERIODS * period]
    plan_t = np.where(t >= START_S, t - START_S, np.nan)
    cols = {"time_s": t}
    for j, n in enumerate(traj.joint_names):
        first = np.full(t.shape, traj.q[0, j])
        cols[f"{n}_position_rad"] = np.where(np.isnan(plan_t), first, periodic_at(traj.time_s, traj.q[:, j], plan_t, period))
        cols[f"{n}_velocity_rad_s"] = np.nan_to_num(periodic_at(traj.time_s, traj.qd[:, j], plan_t, period))
        cols[f"{n}_current_a"] = current_scale * np.nan_to_num(periodic_at(traj.time_s, traj.current_a[:, j], plan_t, period))
    path = tmp_path / "log.npz"
    np.savez(path, **cols)
    return read_log(str(path), None, joints=tuple(traj.joint_names), legs=("left", "right"))


def test_a_log_of_the_reviewed_motion_aligns_tracks_and_matches(tmp_path, reviewed):
    rv, robot, settings = reviewed
    log = _log(tmp_path, reviewed)
    res = compare_log(log, rv, robot, settings)
    assert res.alignment.offset_s == pytest.approx(START_S, abs=0.0025)   # half a log sample
    for x in res.tracking:
        assert abs(x.position_rms) < 5e-3 and abs(x.lag_s) < 0.003   # (the plan jumps where it restarts)
    for c in res.currents:
        assert c.gain == pytest.approx(1.0, abs=0.01)
    # the same peak-current utilisation through the log as through the review (to the interpolation)
    rev = {(w.joint, w.limit): w.utilisation for w in rv.summary.by_limit}
    for m in res.margin:
        if m.limit == "peak_current":
            assert m.measured == pytest.approx(rev[(m.joint, m.limit)], abs=0.03)


def test_a_twelve_percent_weaker_motor_shows_in_the_gain_and_the_torque_constant(tmp_path, reviewed):
    rv, robot, settings = reviewed
    log = _log(tmp_path, reviewed, current_scale=1 / 0.88)
    res = compare_log(log, rv, robot, settings)
    for c in res.currents:
        assert c.gain == pytest.approx(1 / 0.88, rel=0.01)
    knee = res.drive_fits["left_knee"].torque_constant_nm_per_a
    assert knee.value == pytest.approx(0.88 * 0.20, rel=0.02)
    assert not knee.within_ci(0.20)


def test_the_result_does_not_depend_on_the_review_rate(tmp_path, reviewed):
    # the same log compared with the case reviewed at 500 Hz and at 250 Hz: the period of the repeated
    # case is its duration at both rates, so the alignment and the identified gain agree
    rv, robot, settings = reviewed
    log = _log(tmp_path, reviewed, current_scale=1 / 0.88)
    slow = CheckSettings(rate_hz=250.0, run_qps=False)
    prep = prepare(str(PLAN), resolve_robot("lab-biped"), rate_hz=250.0, cases=["nominal"])
    rv_slow = check_case(prep.trajectories[0], prep.robot, slow)
    assert rv_slow.trajectory.repetition_period_s == rv.trajectory.repetition_period_s
    a, b = compare_log(log, rv, robot, settings), compare_log(log, rv_slow, prep.robot, slow)
    assert a.alignment.offset_s == pytest.approx(b.alignment.offset_s, abs=2e-3)
    for j in ("left_knee", "right_knee"):
        ka, kb = a.drive_fits[j].torque_constant_nm_per_a.value, b.drive_fits[j].torque_constant_nm_per_a.value
        assert ka == pytest.approx(kb, rel=0.01)


def test_logged_ground_force_and_bus_voltage_are_held_against_their_limits(tmp_path, reviewed):
    # Coulomb friction (any statics textbook): the foot holds while |Fx| <= mu Fz; lab-biped's mu is 0.7,
    # so 400 N along the ground on 500 N of load uses 400 / 350 = 114.3 % of the cone. The drive's voltage
    # is the bus voltage times the modulation factor: a bus sagging to half doubles the voltage utilisation.
    rv, robot, settings = reviewed
    base = _log(tmp_path, reviewed)
    n = base.time_s.size
    cols = {"time_s": base.time_s}
    for c in base.channels:
        cols[c.column] = c.values
    cols.update({"left_contact": np.ones(n), "left_ground_force_x_n": np.full(n, 400.0),
                 "left_ground_force_z_n": np.full(n, 500.0)})
    np.savez(tmp_path / "with-force.npz", **cols)
    log = read_log(str(tmp_path / "with-force.npz"), None, joints=base.joints(), legs=("left", "right"))
    res = compare_log(log, rv, robot, settings)
    cone = next(t for t in res.traces if t.limit == "friction_cone" and t.joint == "left")
    assert float(np.max(cone.utilisation)) == pytest.approx(400 / (0.7 * 500), rel=1e-9)
    assert any(s.limit == "friction_cone" and s.severity.value == "exceeds" for s in res.segments)
    cols["bus_voltage_v"] = np.full(n, 24.0)
    np.savez(tmp_path / "with-bus.npz", **cols)
    sagged = compare_log(read_log(str(tmp_path / "with-bus.npz"), None, joints=base.joints(), legs=("left", "right")),
                         rv, robot, settings)

    def volt(r):
        return float(np.max(next(t for t in r.traces if t.limit == "voltage" and t.joint == "left_knee").utilisation))

    assert volt(sagged) == pytest.approx(2 * volt(res), rel=1e-9)
