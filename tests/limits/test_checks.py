"""Per-limit checks on hand-built samples, including exact-boundary samples.

Sources: the standard DC motor model V = R I + Ke w, T = Kt I (Hughes and Drury, Electric Motors and
Drives, 4th ed., ch. 3), evaluated by hand below; Coulomb friction cone |Fx| <= mu Fz and unilateral
contact Fz >= 0 (common practice in legged locomotion); 'at the limit is within it' (our definition,
limits.verdict).
"""

from dataclasses import replace

import numpy as np
import pytest

from legbridge.limits.checks.case import check_case
from legbridge.limits.checks.results import CheckSettings
from legbridge.mapping.joint_trajectory import FLAG_UNREACHABLE

QUICK = CheckSettings(run_qps=False)


def _trace(review, limit, joint=""):
    return review.trace(limit, joint)


def _segs(review, limit, severity=None):
    return [s for s in review.segments if (limit is None or s.limit == limit) and (severity is None or s.severity == severity)]


def test_voltage_by_hand_all_four_quadrants(example_robot, make_traj):
    act = example_robot.joints[0].actuator  # hip: N 10, eta 0.9, Kt 0.12, R 0.25, Jr 6e-5
    qd = np.array([[5.0, 0], [5.0, 0], [-5.0, 0], [-5.0, 0]])
    tau = np.array([[20.0, 0], [-20.0, 0], [-20.0, 0], [20.0, 0]])  # motoring, braking, motoring, braking
    r = check_case(make_traj(example_robot, np.tile([0.1, -1.0], (4, 1)), qd=qd, tau=tau), example_robot, QUICK)
    v = _trace(r, "voltage", "hip").value
    # the winding resistance at the winding limit: 0.25 ohm (1 + 0.00393 /K (120 - 25) K) (copper's
    # temperature coefficient, common practice): the voltage check holds however warm the winding is
    n, eta, kt, res, ke = 10.0, 0.9, 0.12, 0.25 * (1 + 0.00393 * (120.0 - 25.0)), act.back_emf_v_s_per_rad
    # by hand: motoring I = tau / (eta N Kt), braking (power into the motor) I = eta tau / (N Kt)
    i = np.array([20 / (eta * n * kt), -20 * eta / (n * kt), -20 / (eta * n * kt), 20 * eta / (n * kt)])
    w = n * qd[:, 0]
    np.testing.assert_allclose(v, res * i + ke * w, rtol=1e-12)
    np.testing.assert_allclose(_trace(r, "voltage", "hip").utilisation, np.abs(res * i + ke * w) / act.max_voltage_v)


def test_voltage_exceeded_near_no_load_speed(example_robot, make_traj):
    act = example_robot.joints[1].actuator
    w0 = act.max_voltage_v / act.back_emf_v_s_per_rad  # no-load speed V_max / Ke (Hughes and Drury ch. 3)
    qd_joint = w0 / act.gear_ratio
    # at the no-load speed any motoring torque needs more than V_max; a tiny torque: just over
    traj = make_traj(example_robot, np.tile([0.1, -1.0], (3, 1)), qd=[[0, qd_joint]] * 3, tau=[[0, 0.0], [0, 1.0], [0, -1.0]])
    u = _trace(check_case(traj, example_robot, QUICK), "voltage", "knee").utilisation
    assert u[0] == pytest.approx(1.0, rel=1e-12)
    assert u[1] > 1.0 and u[2] < 1.0  # braking current lowers the needed voltage (second quadrant)


def test_range_exact_stop_is_within_just_over_is_not(example_robot, make_traj):
    hip = example_robot.joints[0]
    q = np.array([[0.0, -1.0], [hip.upper_rad, -1.0], [np.nextafter(hip.upper_rad, 9), -1.0], [hip.lower_rad, -1.0], [0.0, -1.0]])
    r = check_case(make_traj(example_robot, q), example_robot, QUICK)
    u = _trace(r, "joint_range", "hip").utilisation
    assert u[1] == 1.0 and u[3] == 1.0 and u[2] > 1.0 and u[0] == 0.0
    ex = _segs(r, "joint_range", "exceeds")
    assert [(s.joint, s.i_start, s.i_end) for s in ex] == [("hip", 2, 2)]
    assert r.verdict == "exceeds" and not r.passed


def test_range_margin_band_in_radians(example_robot, make_traj):
    hip = example_robot.joints[0]
    q = np.array([[hip.upper_rad - 0.06, -1.0], [hip.upper_rad - 0.04, -1.0]])
    r = check_case(make_traj(example_robot, q), example_robot, replace(QUICK, range_margin_rad=0.05))
    near = _segs(r, "joint_range", "near")
    assert [(s.i_start, s.i_end) for s in near] == [(1, 1)]


def test_speed_exact_limit_within(example_robot, make_traj):
    from legbridge.robots.actuator_limits import max_joint_speed

    v = max_joint_speed(example_robot.joints[0]).value
    assert v == pytest.approx(min(400.0, 48 * np.sqrt(3) / 2 / 0.12) / 10.0, rel=0.2)  # order of magnitude guard
    r = check_case(make_traj(example_robot, np.tile([0.0, -1.0], (2, 1)), qd=[[v, 0], [v * (1 + 1e-12), 0]]), example_robot, QUICK)
    u = _trace(r, "joint_speed", "hip").utilisation
    assert u[0] == 1.0 and u[1] > 1.0


def test_friction_cone_and_unilateral_boundaries(example_robot, make_traj):
    mu = 0.5
    fz = 100.0
    forces = np.array([[mu * fz, fz], [np.nextafter(mu * fz, 1e9), fz], [-mu * fz, fz], [0.0, 0.0], [10.0, 0.0], [0.0, -1e-9], [0.0, 50.0]])
    n = len(forces)
    traj = make_traj(example_robot, np.tile([0.0, -1.0], (n, 1)), force=forces)
    r = check_case(traj, example_robot, replace(QUICK, friction=mu))
    cone = _trace(r, "friction_cone").utilisation
    assert cone[0] == 1.0 and cone[2] == 1.0  # |Fx| = mu Fz: on the cone, within
    assert cone[1] > 1.0 and np.isinf(cone[4]) and cone[3] == 0.0 and cone[6] == 0.0
    uni = _trace(r, "unilateral_force").utilisation
    assert uni[4] == 1.0 and uni[6] == 0.0 and uni[3] == 0.0  # Fz = 0 with Fx: at the limit, within
    assert uni[5] > 1.0  # the ground would pull
    ex = {(s.limit, s.i_start, s.i_end) for s in _segs(r, None, "exceeds") if s.limit in ("friction_cone", "unilateral_force")}
    assert ex == {("friction_cone", 1, 1), ("friction_cone", 4, 4), ("unilateral_force", 5, 5)}


def test_flight_samples_do_not_count_for_ground(example_robot, make_traj):
    traj = make_traj(example_robot, np.tile([0.0, -1.0], (2, 1)), force=[[50.0, -10.0]] * 2, stance=[False, False])
    r = check_case(traj, example_robot, QUICK)
    assert not _segs(r, "friction_cone") and not _segs(r, "unilateral_force")


def test_mapping_flags_and_nan_fail_closed(example_robot, make_traj):
    q = np.tile([0.0, -1.0], (5, 1))
    q[3, 1] = np.nan
    flags = np.array([0, FLAG_UNREACHABLE, 0, 0, 0])
    r = check_case(make_traj(example_robot, q, flags=flags), example_robot, QUICK)
    assert not r.passed
    assert any("out of reach" in f for f in r.findings)
    assert any(f.startswith("joint_range of knee") for f in r.findings)
    # a flagged sample is a finding only (not a pseudo-limit too): counted once, with its time
    assert any("out of reach (1 samples, first at t = 0.0010 s)" in f for f in r.findings)
    assert not any(t.limit == "mapping" for t in r.traces) and r.verdict == "exceeds"
    assert [(s.i_start, s.i_end) for s in _segs(r, "joint_range", "exceeds")] == [(3, 3)]


def test_supply_power_and_regen_energy(example_robot, make_traj):
    # Two steps (touchdown at samples 0 and 4); hip braking gives negative electrical power P = V I.
    qd = np.tile([20.0, 0.0], (8, 1))
    tau = np.tile([-30.0, 0.0], (8, 1))
    stance = np.array([1, 1, 0, 0, 1, 1, 0, 0], bool)
    traj = make_traj(example_robot, np.tile([0.0, -1.0], (8, 1)), qd=qd, tau=tau, stance=stance, rate_hz=100.0)
    p = traj.electrical_power_w[:, 0]
    assert np.all(p < 0)
    e_step = -p[0] * 4 * 0.01  # rectangle rule, 4 samples of 10 ms per step
    r = check_case(traj, example_robot, replace(QUICK, regen_energy_j=0.999 * e_step, supply_power_w=100.0))
    np.testing.assert_allclose(r.regen_energy_j, [e_step, e_step], rtol=1e-12)
    ex = _segs(r, "regen_energy", "exceeds")
    assert [(s.i_start, s.i_end) for s in ex] == [(3, 3), (7, 7)]
    assert _trace(r, "supply_power").utilisation.max() < 0  # regenerating: nothing drawn
