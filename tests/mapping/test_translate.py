"""translate(): joint rates against finite differences, flags, three joints, series springs, plans."""

import dataclasses

import numpy as np
import pytest

from legbridge.mapping.joint_trajectory import FLAG_SINGULAR, FLAG_UNREACHABLE
from legbridge.mapping.kinematics import chain_foot, leg_vector
from legbridge.mapping.plan import Plan, ReducedTrajectory
from legbridge.mapping.translate import is_straight_chain, translate, translate_plan
from legbridge.robots import actuator_limits as al
from legbridge.robots.errors import LegbridgeError
from legbridge.robots.robot import Joint, Segment, Spring


def hop_case(name="nominal", duration=1.0, plan_rate=200.0, l_stance=0.06, ground=0.0):
    """A synthetic hopping case (invented): 0.2 s stance, 0.3 s flight, repeating."""
    t = np.arange(0.0, duration + 1e-12, 1.0 / plan_rate)
    ph = (t % 0.5) / 0.5
    stance = ph < 0.4
    s = np.where(stance, ph / 0.4, (ph - 0.4) / 0.6)
    l = np.where(stance, 0.72 - l_stance * np.sin(np.pi * s), 0.72)
    a = np.where(stance, 0.3 - 0.6 * s, -0.3 + 0.6 * s)
    fz = np.where(stance, 700.0 * np.sin(np.pi * s), 0.0)
    fx = -0.25 * fz * np.cos(np.pi * s)
    return ReducedTrajectory(name, t, l, a, fx, fz, stance, ground_height_m=ground)


def test_positions_reach_the_plan_foot_point(example_robot):
    jt = translate(hop_case(), example_robot, rate_hz=1000.0)
    assert jt.n_samples == 1001 and jt.q.shape == (1001, 2) and jt.jacobian.shape == (1001, 2, 2)
    # Reference: the plan's own samples (every 5th grid sample coincides with a plan sample).
    case = hop_case()
    foot = chain_foot(jt.q[::5], (0.40, 0.42))
    np.testing.assert_allclose(foot, leg_vector(case.leg_length_m, case.leg_angle_rad), atol=1e-12)
    assert np.all(jt.q[:, 1] < 0)  # backward knee
    assert not jt.q.flags.writeable and not jt.tau.flags.writeable
    assert np.all(jt.flags == 0)


def hop_leg_rate(time_s, stance):
    """Analytic d/dt of hop_case's hip-to-foot vector (x, z) [m/s], by the chain rule."""
    ph = (time_s % 0.5) / 0.5
    s = np.where(stance, ph / 0.4, (ph - 0.4) / 0.6)
    sdot = np.where(stance, 1.0 / (0.4 * 0.5), 1.0 / (0.6 * 0.5))
    l = np.where(stance, 0.72 - 0.06 * np.sin(np.pi * s), 0.72)
    ldot = np.where(stance, -0.06 * np.pi * np.cos(np.pi * s) * sdot, 0.0)
    a = np.where(stance, 0.3 - 0.6 * s, -0.3 + 0.6 * s)
    adot = np.where(stance, -0.6, 0.6) * sdot
    return np.column_stack([ldot * np.sin(a) + l * adot * np.cos(a), -ldot * np.cos(a) + l * adot * np.sin(a)])


def test_velocities_against_the_analytic_leg_rate_and_accelerations_against_differences(example_robot):
    # Velocities: the foot velocity J qd must equal the analytic derivative of the synthetic plan's
    # leg vector (chain rule on its closed-form l(t), a(t)); a PCHIP position flattens at a data
    # extremum, so central differences of positions are no reference for rates there.
    jt = translate(hop_case(), example_robot, rate_hz=2000.0)
    foot_rate = np.einsum("nij,nj->ni", jt.jacobian, jt.qd)
    ref = hop_leg_rate(jt.time_s, jt.stance)
    # (the last grid sample is a one-sample stance segment, which holds zero rates by the gap rule)
    np.testing.assert_allclose(foot_rate[:-1], ref[:-1], atol=2e-3 * np.abs(ref).max())
    # Accelerations, check only: central differences of the velocities within each phase segment.
    dt = 1.0 / 2000.0
    fd_a = (jt.qd[2:] - jt.qd[:-2]) / (2 * dt)
    same = (jt.stance[2:] == jt.stance[:-2])
    err = np.abs(jt.qdd[1:-1][same] - fd_a[same])
    assert np.median(err) < 1e-3 * np.abs(jt.qdd).max()


def test_unreachable_samples_are_flagged_not_raised(example_robot):
    case = hop_case()
    long = dataclasses.replace(case, leg_length_m=np.where(case.stance, case.leg_length_m, 0.9))
    jt = translate(long, example_robot, rate_hz=1000.0)
    bad = (jt.flags & FLAG_UNREACHABLE) != 0
    assert bad.any() and not bad[jt.stance].any()
    # closest reachable pose: a straight leg, flagged singular too
    np.testing.assert_allclose(jt.q[bad, 1], 0.0, atol=1e-12)
    assert np.all(jt.flags[bad] & FLAG_SINGULAR)
    assert np.all(np.isfinite(jt.qd)) and np.all(np.isfinite(jt.tau))


def test_flight_force_is_zero_and_stance_force_applied(example_robot):
    jt = translate(hop_case(), example_robot, rate_hz=1000.0)
    np.testing.assert_array_equal(jt.foot_force_n[~jt.stance], 0.0)
    assert jt.foot_force_n[jt.stance, 1].max() > 600


def three_joint_robot(robot, pitch=0.2):
    segs = (Segment("thigh", 0.35, 2.0, 0.15, 0.03), Segment("shank", 0.35, 0.8, 0.15, 0.01), Segment("pes", 0.10, 0.3, 0.05, 0.001))
    ankle = dataclasses.replace(robot.joints[1], name="ankle", lower_rad=-2.0, upper_rad=2.0)
    return dataclasses.replace(robot, segments=segs, joints=robot.joints + (ankle,), foot_pitch_rad=pitch)


def test_three_joint_leg_holds_foot_pitch_and_rates(example_robot):
    robot = three_joint_robot(example_robot)
    jt = translate(hop_case(), robot, rate_hz=1000.0)
    np.testing.assert_allclose(jt.q.sum(1), 0.2, atol=1e-12)      # the documented pitch rule
    np.testing.assert_allclose(jt.qd.sum(1), 0.0, atol=1e-9)      # pitch held: its rate is zero
    np.testing.assert_allclose(jt.qdd.sum(1), 0.0, atol=1e-6)
    case = hop_case()
    np.testing.assert_allclose(chain_foot(jt.q[::5], (0.35, 0.35, 0.10)), leg_vector(case.leg_length_m, case.leg_angle_rad), atol=1e-12)


def test_series_spring_motor_position_sign_and_motor_side(example_robot):
    k = 800.0
    knee = dataclasses.replace(example_robot.joints[1], spring=Spring(k))
    robot = dataclasses.replace(example_robot, joints=(example_robot.joints[0], knee))
    jt = translate(hop_case(), robot, rate_hz=1000.0)
    n_knee = knee.actuator.gear_ratio
    # spring law tau = k (theta_m - q)  =>  motor angle N (q + tau / k)
    np.testing.assert_allclose(jt.motor_position_rad[:, 1], n_knee * (jt.q[:, 1] + jt.tau[:, 1] / k), rtol=1e-12)
    hip = robot.joints[0].actuator
    np.testing.assert_allclose(jt.motor_position_rad[:, 0], hip.gear_ratio * jt.q[:, 0], rtol=1e-12)
    # rigid hip: current and voltage by the DC motor model (robots.actuator_limits, Hughes & Drury ch. 3)
    np.testing.assert_allclose(jt.current_a[:, 0], al.current_a(hip, jt.tau[:, 0], jt.qd[:, 0], jt.qdd[:, 0]))
    v = hip.winding_resistance_ohm * jt.current_a[:, 0] + hip.back_emf_v_s_per_rad * hip.gear_ratio * jt.qd[:, 0]
    np.testing.assert_allclose(jt.voltage_v[:, 0], v)
    np.testing.assert_allclose(jt.electrical_power_w, jt.voltage_v * jt.current_a)
    np.testing.assert_allclose(jt.motor_torque_nm[:, 0], hip.torque_constant_nm_per_a * jt.current_a[:, 0])


def test_static_current_by_hand(example_robot):
    # Hand check of the motor side at standstill (motoring): I = tau / (eta N Kt).
    act = example_robot.joints[1].actuator
    np.testing.assert_allclose(al.current_a(act, 100.0, 0.0), 100.0 / (0.9 * 12.0 * 0.12))


def test_translate_plan_and_case_selection(example_robot):
    plan = Plan("invented.json", "0" * 64, (hop_case("nominal"), hop_case("step_down", ground=-0.03, l_stance=0.08)))
    out = translate_plan(plan, example_robot, rate_hz=500.0)
    assert [t.case for t in out] == ["nominal", "step_down"]
    assert out[1].ground_height_m == -0.03 and out[0].rate_hz == 500.0
    only = translate_plan(plan, example_robot, rate_hz=500.0, cases=["step_down"])
    np.testing.assert_allclose(only[0].q, out[1].q)
    with pytest.raises(LegbridgeError, match="no case 'missing'"):
        translate_plan(plan, example_robot, cases=["missing"])


def test_example_leg_is_a_straight_chain(example_leg_model):
    assert is_straight_chain(example_leg_model)


def test_hip_offset_moves_the_leg_not_its_joint_targets(example_robot):
    # Rigid-body mechanics: with the base held at pitch 0 (stance, where the plan drives the body) a
    # shifted hip changes only the base pitch moment. In flight the base floats, and the offset moves
    # the centre of mass relative to the hip, so the body turns differently there.
    moved = dataclasses.replace(example_robot, hip_offset_m=(0.05, -0.10))
    a = translate(hop_case(duration=0.5), example_robot, rate_hz=500.0)
    b = translate(hop_case(duration=0.5), moved, rate_hz=500.0)
    st = a.stance
    np.testing.assert_allclose(b.q, a.q, atol=1e-12)
    np.testing.assert_allclose(b.tau[st], a.tau[st], atol=1e-9)
    np.testing.assert_allclose(b.base_residual[st, :2], a.base_residual[st, :2], atol=1e-9)
    assert np.abs(b.base_residual[st, 2] - a.base_residual[st, 2]).max() > 1.0
