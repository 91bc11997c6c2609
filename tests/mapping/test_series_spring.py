"""Series-elastic joints: the spring torque is a state (no differencing across touchdown or liftoff),
torque steps are reported as such, and the motor side does not depend on the export rate.

References: the spring law tau = k (theta_m - q) (Hooke's law for a torsion spring), so a torque step
dtau needs a motor-side wind-up dtau / k, which the motor covers at best at its speed limit in
|dtau / k| / w_max (kinematics of a speed-limited drive; hand arithmetic below); a cubic spline
reproduces a cubic exactly (de Boor, A Practical Guide to Splines, ch. IV).
"""

import dataclasses

import numpy as np
import pytest

from legbridge.limits.checks.case import check_case
from legbridge.limits.checks.results import CheckSettings
from legbridge.mapping.motor_side import phase_rates, phase_runs, spring_torque_steps
from legbridge.mapping.pipeline import prepare
from legbridge.mapping.slip.demo import demo_plan
from legbridge.robots import actuator_limits as al
from legbridge.robots.robot import Spring


def _sea_robot(example_robot, k=800.0):
    knee = dataclasses.replace(example_robot.joints[1], spring=Spring(k))
    return dataclasses.replace(example_robot, joints=(example_robot.joints[0], knee)), knee


@pytest.mark.parametrize("rate", [500.0, 2000.0])
def test_torque_step_wind_up_and_least_time_by_hand(example_robot, rate):
    # flight 0..0.1 s with tau = 2 N m, stance from 0.1 s with tau = 30 + 100 (t - 0.1) N m: the step
    # at touchdown is 28 N m (each side's line taken to the edge, midway between the samples around it)
    robot, knee = _sea_robot(example_robot)
    t = np.arange(int(0.2 * rate) + 1) / rate
    stance = t >= 0.1 - 1e-12
    tau = np.column_stack([np.zeros_like(t), np.where(stance, 30.0 + 100.0 * (t - 0.1), 2.0)])
    (s,) = spring_torque_steps(robot, ("hip", "knee"), t, tau, stance)
    edge = 0.1 - 0.5 / rate
    assert s.joint == "knee" and s.kind == "touchdown" and s.time_s == pytest.approx(edge, abs=1e-12)
    assert s.step_nm == pytest.approx(30.0 + 100.0 * (edge - 0.1) - 2.0, rel=1e-9)  # 27.95 at 500 Hz
    assert s.windup_rad == pytest.approx(s.step_nm / 800.0, rel=1e-12)
    v_max = min(knee.actuator.max_motor_speed_rad_s, al.no_load_motor_speed_rad_s(knee.actuator)) / knee.actuator.gear_ratio
    assert s.min_time_s == pytest.approx(abs(s.step_nm) / 800.0 / v_max, rel=1e-12)


def test_rates_never_span_a_phase_edge():
    # a cubic in each phase, with a step between: the per-phase spline gives the exact derivatives
    # of each cubic up to the last sample before the edge (no spike from differencing the step)
    t = np.arange(0, 0.2001, 0.001)
    stance = t >= 0.1
    y = np.where(stance, 5.0 + 2.0 * t**3, -3.0 * t**2)
    d1, d2 = phase_rates(t, y, stance)
    np.testing.assert_allclose(d1, np.where(stance, 6.0 * t**2, -6.0 * t), atol=1e-9)
    np.testing.assert_allclose(d2, np.where(stance, 12.0 * t, -6.0), atol=1e-6)
    assert phase_runs(stance) == [(0, 100), (100, 201)]


def test_motor_side_does_not_depend_on_the_export_rate():
    # The invented series-elastic leg on the demo's nominal case: before, the knee's "peak current"
    # grew with the square of the rate (166 A at 500 Hz, 10129 A at 4 kHz: a difference across
    # touchdown). The checked peaks (each limit's trace, phase ends folded in: mapping.resample) of
    # current, voltage and motor-side speed agree for every joint across 500 Hz (the plan's own rate),
    # 1, 2 and 4 kHz within 2 % (the acceptance bound of this check; the spread is about 1.3 %).
    plan = demo_plan((0.0,))
    peaks = {}
    for rate in (500.0, 1000.0, 2000.0, 4000.0):
        tr = prepare(plan, "sea-three-joint-leg", rate_hz=rate).trajectories[0]
        review = check_case(tr, prepare(plan, "sea-three-joint-leg", rate_hz=rate).robot,
                            CheckSettings(rate_hz=rate, run_qps=False))
        peaks[rate] = np.array([[np.max(np.abs(review.trace(lim, j).value)) for j in tr.joint_names]
                                for lim in ("peak_current", "voltage", "joint_speed")])
    ref = peaks[4000.0]
    for rate in (500.0, 1000.0, 2000.0):
        np.testing.assert_allclose(peaks[rate], ref, rtol=0.02, err_msg=f"{rate} Hz against 4 kHz")
    assert ref[0, 1] < 2 * 56.6 * 1.5  # the knee current stays in the range of its drive (no 10 kA artefact)


def test_a_phase_end_is_judged_whatever_the_rate():
    # A quantity rising through the flight to the touchdown peaks at the phase's end, t_{i+1} from
    # the left (the gap rule holds the flight there). The grid never samples that instant; the check
    # judges it all the same, so the rigid hip's peak voltage on the demo's nominal case is the same
    # at 500 Hz and 4 kHz to 1e-9 (before: 9.23 V against 9.76 V).
    plan = demo_plan((0.0,))
    worst = []
    for rate in (500.0, 4000.0):
        p = prepare(plan, "sea-three-joint-leg", rate_hz=rate)
        (tr,) = p.trajectories
        assert tr.phase_ends is not None and tr.phase_ends.n_samples >= 2
        np.testing.assert_allclose(np.diff(tr.time_s), 1.0 / rate, rtol=1e-9)  # the grid itself stays uniform
        review = check_case(tr, p.robot, CheckSettings(rate_hz=rate, run_qps=False))
        worst.append(float(np.max(np.abs(review.trace("voltage", "hip").value))))
    assert worst[0] == pytest.approx(worst[1], rel=1e-9)



def test_a_touchdown_step_is_the_force_step_times_the_lever_arm(example_robot):
    # A leg with (almost) no mass of its own, so the joint torque is the ground force's alone,
    # tau = -J^T F (principle of virtual work): at touchdown the plan's force steps from 0 to F, so
    # the knee's torque step is -(J^T F)_knee with J the foot Jacobian at the touchdown pose
    # (Pinocchio, LOCAL_WORLD_ALIGNED), whatever the export rate.
    import pinocchio as pin

    from legbridge.limits.checks.case import check_case
    from legbridge.limits.checks.results import CheckSettings
    from legbridge.mapping.plan import Plan, ReducedTrajectory
    from legbridge.robots.leg_model import build_leg_model

    robot, _ = _sea_robot(example_robot)
    light = tuple(dataclasses.replace(s, mass_kg=1e-6, inertia_kgm2=1e-9) for s in robot.segments)
    robot = dataclasses.replace(robot, segments=light)
    t = np.arange(0.0, 0.2001, 0.002)
    stance = t >= 0.1 - 1e-12
    angle = 0.2 - 1.0 * t
    force = np.where(stance[:, None], [50.0, 400.0], 0.0)
    case = ReducedTrajectory("c", t, np.full(t.size, 0.7), angle, force[:, 0], force[:, 1], stance,
                             body_x_m=np.zeros(t.size), body_z_m=np.zeros(t.size))
    leg = build_leg_model(robot)
    steps = {}
    for rate in (500.0, 2000.0):
        tr = prepare(Plan("invented.json", "", (case,)), robot, rate_hz=rate, leg_model=leg).trajectories[0]
        r = check_case(tr, robot, CheckSettings(rate_hz=rate, run_qps=False, duration_s=0.2))
        (s,) = [x for x in r.spring_steps if x.kind == "touchdown"]
        k = int(np.searchsorted(tr.time_s, s.time_s))  # the first stance sample
        qf = pin.neutral(leg.model)
        qf[leg.q_index] = tr.q[k]
        data = leg.model.createData()
        pin.framesForwardKinematics(leg.model, data, qf)
        jac = pin.computeFrameJacobian(leg.model, data, qf, leg.foot_frame_id, pin.LOCAL_WORLD_ALIGNED)[[0, 2]][:, leg.v_index]
        expected = -(jac.T @ np.array([50.0, 400.0]))[1]
        assert s.step_nm == pytest.approx(expected, rel=0.01)
        steps[rate] = s.step_nm
    assert steps[500.0] == pytest.approx(steps[2000.0], rel=0.01)


@pytest.mark.parametrize("rate", [500.0, 1000.0, 4000.0])
def test_spring_torque_rates_take_the_plans_knots(rate):
    # A least-squares cubic spline on the plan's knots reproduces a cubic exactly (the cubic lies in
    # the spline space; de Boor, A Practical Guide to Splines, ch. XIV), at any export rate.
    knots = np.arange(0.0, 0.2001, 0.002)
    t = np.arange(int(0.2 * rate) + 1) / rate
    y = 3.0 + 2.0 * t - 40.0 * t**2 + 90.0 * t**3
    d1, d2 = phase_rates(t, y, np.ones_like(t, bool), knots)
    np.testing.assert_allclose(d1, 2.0 - 80.0 * t + 270.0 * t**2, atol=1e-8)
    np.testing.assert_allclose(d2, -80.0 + 540.0 * t, atol=1e-6)


def test_a_kinked_torque_does_not_spike_the_motor_acceleration():
    # A torque whose slope kinks at every plan sample (what inverse dynamics on a C2 interpolant gives:
    # |t - knot| bumps every 2 ms). A spline through every 4 kHz sample resolves each kink as an
    # acceleration spike that grows with the rate; the fit on the plan's knots does not: its second
    # rate is bounded by the same value at 1 kHz and 4 kHz (within 10 %), and its first rate is the
    # mean slope, 100 N m/s (the bumps' slopes average out), to 5 %.
    knots = np.arange(0.0, 0.2001, 0.002)
    peaks = []
    for rate in (1000.0, 4000.0):
        t = np.arange(int(0.2 * rate) + 1) / rate
        phase = np.mod(t, 0.002) - 0.001
        y = 100.0 * t + 2.0 * np.abs(phase)
        d1, d2 = phase_rates(t, y, np.ones_like(t, bool), knots)
        inner = (t > 0.02) & (t < 0.18)
        assert np.mean(d1[inner]) == pytest.approx(100.0, rel=0.05)
        peaks.append(np.max(np.abs(d2[inner])))
    assert peaks[1] == pytest.approx(peaks[0], rel=0.10)
