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
    # touchdown). Now the series-elastic knee's peak current, voltage and motor speed agree across
    # 500 Hz, 1, 2 and 4 kHz within 2 %. Every joint agrees between 2 and 4 kHz within 2 %; at 1 kHz
    # within 3 % and at 500 Hz (the plan's own rate) within 7 %: the rigid hip's voltage rises through
    # the flight up to the touchdown, and a finer grid has samples in the 2 ms between the plan's last
    # flight sample and its first stance sample (the gap rule holds the flight there); a 500 Hz grid
    # has none, so the hardware at 500 Hz never sees those last 0.5 V.
    plan = demo_plan((0.0,))
    peaks = {}
    for rate in (500.0, 1000.0, 2000.0, 4000.0):
        tr = prepare(plan, "sea-three-joint-leg", rate_hz=rate).trajectories[0]
        peaks[rate] = np.array([np.max(np.abs(a), axis=0) for a in (tr.current_a, tr.voltage_v, tr.motor_speed_rad_s)])
    ref = peaks[4000.0]
    for rate in (500.0, 1000.0, 2000.0):
        np.testing.assert_allclose(peaks[rate][:, 1], ref[:, 1], rtol=0.02, err_msg=f"knee at {rate} Hz")
    np.testing.assert_allclose(peaks[2000.0], ref, rtol=0.02)
    np.testing.assert_allclose(peaks[1000.0], ref, rtol=0.03)
    np.testing.assert_allclose(peaks[500.0], ref, rtol=0.07)
    assert ref[0, 1] < 2 * 56.6 * 1.5  # the knee current stays in the range of its drive (no 10 kA artefact)


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
