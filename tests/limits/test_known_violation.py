"""Known-violation fixture built by hand: a static stance pose of the example leg.

Sign (derived here): with F the ground force on the foot and the leg's own gravity ignored, the leg
is in static equilibrium when the actuator torques and the generalised force of F sum to zero. By
virtual work the generalised force of F is J^T F (J: foot Jacobian, world-aligned x-z rows), so
tau + J^T F = 0, i.e. tau = -J^T F (principle of virtual work, e.g. Craig, Introduction to Robotics,
sec. 5.9, "static forces in manipulators", with our sign for the force ON the foot).
Planar two-link Jacobian by hand (our conventions: segments hang along -z, rotations about +y):
foot x = -l1 sin q1 - l2 sin(q1+q2), z = -l1 cos q1 - l2 cos(q1+q2), so the knee column is
(-l2 cos(q1+q2), l2 sin(q1+q2)) and tau_knee = l2 cos(q1+q2) Fx - l2 sin(q1+q2) Fz.
"""

from dataclasses import replace

import numpy as np
import pytest

from legbridge.limits.checks.case import check_case
from legbridge.limits.checks.results import CheckSettings

Q = np.array([0.3, -0.8])
F = np.array([10.0, 150.0])
N, STANCE = 300, slice(50, 250)


def _knee_torque_by_hand(robot):
    l2 = robot.segments[1].length_m
    a = Q.sum()
    return l2 * np.cos(a) * F[0] - l2 * np.sin(a) * F[1]


# the plan run once (a test as long as the plan, 1 kHz): the known violation is a peak torque, judged
# without the heat of an endless repetition
ONE_PASS = CheckSettings(duration_s=N / 1000.0)


def _case(robot, make_traj, hand_jacobian):
    q = np.tile(Q, (N, 1))
    stance = np.zeros(N, bool)
    stance[STANCE] = True
    force = np.where(stance[:, None], F, 0.0)
    J = hand_jacobian(robot, q)
    tau = -np.einsum("kri,kr->ki", J, force)
    return make_traj(robot, q, tau=tau, jacobian=J, force=force, stance=stance)


def test_hand_jacobian_matches_pinocchio(example_robot, example_leg_model, hand_jacobian):
    # Reference: Pinocchio computeFrameJacobian in LOCAL_WORLD_ALIGNED (rows x and z).
    import pinocchio as pin

    lm = example_leg_model
    data = lm.model.createData()
    qf = lm.full_q(np.zeros(3), Q)
    pin.computeJointJacobians(lm.model, data, qf)
    pin.framesForwardKinematics(lm.model, data, qf)
    Jp = pin.getFrameJacobian(lm.model, data, lm.foot_frame_id, pin.LOCAL_WORLD_ALIGNED)[[0, 2]][:, lm.v_index]
    np.testing.assert_allclose(hand_jacobian(example_robot, Q)[0], Jp, atol=1e-12)


def _with_knee_effort(robot, limit):
    knee = replace(robot.joints[1], effort_limit_nm=float(limit))
    return replace(robot, joints=(robot.joints[0], knee))


def test_knee_effort_5_percent_below_is_flagged_exactly(example_robot, make_traj, hand_jacobian):
    tau_k = _knee_torque_by_hand(example_robot)
    assert tau_k == pytest.approx(0.42 * np.cos(-0.5) * 10 - 0.42 * np.sin(-0.5) * 150, rel=1e-12)  # ~33.9 N m
    robot = _with_knee_effort(example_robot, 0.95 * tau_k)
    traj = _case(robot, make_traj, hand_jacobian)
    np.testing.assert_allclose(traj.tau[60, 1], tau_k, rtol=1e-12)
    r = check_case(traj, robot, ONE_PASS)
    ex = [s for s in r.segments if s.severity == "exceeds"]
    assert [(s.joint, s.limit, s.i_start, s.i_end) for s in ex] == [("knee", "peak_torque", 50, 249)]
    assert ex[0].t_start_s == pytest.approx(0.050) and ex[0].t_end_s == pytest.approx(0.249)
    assert ex[0].utilisation == pytest.approx(1 / 0.95, rel=1e-9)
    assert r.verdict == "exceeds" and not r.passed and not r.findings
    # Force QP: the nearest force with a^T F <= E (a = knee row of -J^T, |a| = l2) is the projection
    # onto that half-plane: shortfall = (tau_k - E) / l2 = 0.05 tau_k / l2 (point-to-line distance).
    short = r.force_qp.values["shortfall_n"]
    assert r.force_qp.ok
    np.testing.assert_allclose(short[STANCE], 0.05 * tau_k / 0.42, rtol=1e-5)
    assert np.all(short[:50] == 0) and not r.force_qp.values["infeasible"].any()


def test_knee_effort_5_percent_above_is_not_exceeded(example_robot, make_traj, hand_jacobian):
    tau_k = _knee_torque_by_hand(example_robot)
    robot = _with_knee_effort(example_robot, 1.05 * tau_k)
    r = check_case(_case(robot, make_traj, hand_jacobian), robot, ONE_PASS)
    assert not [s for s in r.segments if s.severity == "exceeds"]
    near = [(s.joint, s.limit, s.i_start, s.i_end) for s in r.segments]
    assert near == [("knee", "peak_torque", 50, 249)]  # 1 / 1.05 = 95 %: inside the 10 % near band
    assert r.verdict == "near" and r.passed
    assert np.max(r.force_qp.values["shortfall_n"]) < 1e-4
