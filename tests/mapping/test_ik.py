"""Inverse kinematics against the textbook two-link solution, round trips, and the three-joint rule."""

import numpy as np
import pinocchio as pin
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from legbridge.mapping.ik import chain_ik, dls_ik, two_link_ik
from legbridge.mapping.joint_trajectory import FLAG_UNREACHABLE
from legbridge.mapping.kinematics import chain_foot, chain_jacobian, chain_jdot_qd, leg_vector
from legbridge.robots.leg_model import BASE_JOINTS, FOOT_FRAME, HIP_FRAME, index_model

L1, L2 = 0.40, 0.42  # the example leg's thigh and shank (invented values)


def spong_two_link(x, y, a1, a2, elbow_down):
    """Planar two-link IK as printed in Spong, Hutchinson, Vidyasagar, Robot Modeling and Control,
    planar two-link (elbow) manipulator: D = (x^2 + y^2 - a1^2 - a2^2) / (2 a1 a2),
    theta2 = atan2(+-sqrt(1 - D^2), D), theta1 = atan2(y, x) - atan2(a2 sin theta2, a1 + a2 cos theta2)."""
    d = (x**2 + y**2 - a1**2 - a2**2) / (2 * a1 * a2)
    t2 = np.arctan2((1 if elbow_down else -1) * np.sqrt(1 - d**2), d)
    t1 = np.arctan2(y, x) - np.arctan2(a2 * np.sin(t2), a1 + a2 * np.cos(t2))
    return t1, t2


@pytest.mark.parametrize("knee, sign", [("backward", -1), ("forward", 1)])
def test_two_link_matches_textbook_solution_both_branches(knee, sign):
    # Our chain in Spong's frame: his x axis = our -z (down), his y axis = our -x (backward).
    p = np.array([[0.10, -0.65], [-0.20, -0.55], [0.0, -0.30], [0.35, -0.50]])
    sol = two_link_ik(p, L1, L2, knee)
    t1, t2 = spong_two_link(-p[:, 1], -p[:, 0], L1, L2, elbow_down=sign > 0)
    np.testing.assert_allclose(sol.q[:, 0], t1, atol=1e-12)
    np.testing.assert_allclose(sol.q[:, 1], t2, atol=1e-12)
    assert np.all(np.sign(sol.q[:, 1]) == sign)
    # law of cosines (elementary geometry): the knee angle magnitude is pi minus the inner knee angle
    l = np.hypot(p[:, 0], p[:, 1])
    inner = np.arccos((L1**2 + L2**2 - l**2) / (2 * L1 * L2))
    np.testing.assert_allclose(np.abs(sol.q[:, 1]), np.pi - inner, atol=1e-12)
    assert np.all(sol.flags == 0)


def test_backward_knee_sits_behind_the_hip_foot_line():
    # Geometry (2-D cross product sign): knee behind the line hip->foot for a foot straight below.
    q = two_link_ik(np.array([[0.0, -0.6]]), L1, L2, "backward").q[0]
    knee_x = -L1 * np.sin(q[0])
    assert knee_x < 0.0


@settings(max_examples=60, deadline=None)
@given(q1=st.floats(-1.5, 1.5), q2=st.floats(0.05, 2.8), knee=st.sampled_from(["backward", "forward"]))
def test_forward_then_inverse_round_trip(q1, q2, knee):
    # Round trip (consistency of FK and IK over the workspace): p = FK(q) -> IK(p) = q on q's branch.
    q2 = -q2 if knee == "backward" else q2
    q = np.array([[q1, q2]])
    p = chain_foot(q, (L1, L2))
    sol = two_link_ik(p, L1, L2, knee)
    np.testing.assert_allclose(chain_foot(sol.q, (L1, L2)), p, atol=1e-12)
    np.testing.assert_allclose(sol.q, q, atol=1e-7)


def test_leg_vector_convention():
    # README conventions: positive leg angle puts the foot ahead of (+x) and below the hip.
    r = leg_vector(np.array([0.7]), np.array([0.2]))[0]
    np.testing.assert_allclose(r, [0.7 * np.sin(0.2), -0.7 * np.cos(0.2)])
    assert r[0] > 0 and r[1] < 0


def test_unreachable_targets_are_flagged_and_get_the_closest_pose():
    p = leg_vector(np.array([1.0, 0.01, 0.7]), np.array([0.3, 0.0, 0.0]))
    sol = two_link_ik(p, L1, L2, "backward")
    assert list(sol.flags & FLAG_UNREACHABLE) == [FLAG_UNREACHABLE, FLAG_UNREACHABLE, 0]
    foot = chain_foot(sol.q, (L1, L2))
    # too long: straight leg along the target direction (distance L1 + L2); too short: folded (|L1 - L2|)
    np.testing.assert_allclose(np.hypot(*foot[0]), L1 + L2, atol=1e-12)
    np.testing.assert_allclose(np.arctan2(foot[0, 0], -foot[0, 1]), 0.3, atol=1e-12)
    np.testing.assert_allclose(np.hypot(*foot[1]), abs(L1 - L2), atol=1e-12)


def test_three_joint_ik_holds_the_foot_pitch():
    lengths = (0.35, 0.35, 0.12)
    pitch = 0.25
    p = leg_vector(np.linspace(0.45, 0.7, 7), np.linspace(-0.3, 0.4, 7))
    sol = chain_ik(p, lengths, "backward", pitch)
    np.testing.assert_allclose(chain_foot(sol.q, lengths), p, atol=1e-12)
    # the last segment's world pitch (sum of joint angles, base pitch 0) equals robot.foot_pitch_rad
    np.testing.assert_allclose(sol.q.sum(axis=1), pitch, atol=1e-12)
    assert np.all(sol.q[:, 1] < 0)


def test_analytic_jacobian_matches_pinocchio(example_leg_model):
    # Reference: Pinocchio's frame Jacobian in LOCAL_WORLD_ALIGNED (the textbook Jacobian).
    leg = example_leg_model
    data = leg.model.createData()
    for q in ([0.3, -0.9], [-0.5, -1.7], [1.0, -0.2]):
        qf = leg.full_q(np.zeros(3), q)
        pin.framesForwardKinematics(leg.model, data, qf)
        ref = pin.computeFrameJacobian(leg.model, data, qf, leg.foot_frame_id, pin.LOCAL_WORLD_ALIGNED)[[0, 2]][:, leg.v_index]
        np.testing.assert_allclose(chain_jacobian(np.array([q]), leg.link_lengths_m)[0], ref, atol=1e-12)


def test_jdot_qd_matches_finite_difference_of_the_jacobian():
    # Check only: J_dot qd ~ (J(q + qd h) - J(q - qd h)) / (2 h) qd (central difference).
    q, qd, h = np.array([[0.4, -1.1, 0.3]]), np.array([[2.0, -3.0, 1.5]]), 1e-6
    L = (0.35, 0.35, 0.12)
    fd = (chain_jacobian(q + qd * h, L) - chain_jacobian(q - qd * h, L)) / (2 * h) @ qd[0]
    np.testing.assert_allclose(chain_jdot_qd(q, qd, L), fd, rtol=1e-6)


def test_dls_matches_closed_form_on_a_straight_leg(example_leg_model):
    p = leg_vector(np.linspace(0.5, 0.78, 20), np.linspace(-0.4, 0.4, 20))
    ref = two_link_ik(p, *example_leg_model.link_lengths_m, "backward")
    sol = dls_ik(example_leg_model, p, knee="backward")
    np.testing.assert_allclose(sol.q, ref.q, atol=1e-8)
    assert np.all(sol.flags == 0)


def offset_leg():
    """A leg whose knee is 3 cm ahead of the thigh axis (URDF-like offset geometry)."""
    model = pin.Model()
    ident = pin.SE3.Identity()
    jx = model.addJoint(0, pin.JointModelPX(), ident, BASE_JOINTS[0])
    jz = model.addJoint(jx, pin.JointModelPZ(), ident, BASE_JOINTS[1])
    jp = model.addJoint(jz, pin.JointModelRY(), ident, BASE_JOINTS[2])
    model.appendBodyToJoint(jp, pin.Inertia(10.0, np.zeros(3), np.eye(3) * 0.5), ident)
    model.addFrame(pin.Frame(HIP_FRAME, jp, ident, pin.FrameType.OP_FRAME))
    h = model.addJoint(jp, pin.JointModelRY(), ident, "hip")
    model.appendBodyToJoint(h, pin.Inertia(1.0, np.array([0, 0, -0.15]), np.eye(3) * 0.01), ident)
    k = model.addJoint(h, pin.JointModelRY(), pin.SE3(np.eye(3), np.array([0.03, 0, -0.38])), "knee")
    model.appendBodyToJoint(k, pin.Inertia(0.5, np.array([0, 0, -0.15]), np.eye(3) * 0.005), ident)
    model.addFrame(pin.Frame(FOOT_FRAME, k, pin.SE3(np.eye(3), np.array([0, 0, -0.40])), pin.FrameType.OP_FRAME))
    return index_model(model, ("hip", "knee"), FOOT_FRAME, HIP_FRAME)


def test_dls_round_trip_on_an_offset_leg_is_continuous():
    # Reference: Pinocchio forward kinematics of the solution reaches the target (round trip).
    leg = offset_leg()
    data = leg.model.createData()
    p = leg_vector(np.linspace(0.55, 0.7, 50), np.linspace(-0.3, 0.3, 50))
    sol = dls_ik(leg, p, knee="backward")
    assert np.all(sol.flags == 0)
    for q, target in zip(sol.q, p):
        pin.framesForwardKinematics(leg.model, data, leg.full_q(np.zeros(3), q))
        np.testing.assert_allclose(data.oMf[leg.foot_frame_id].translation[[0, 2]], target, atol=1e-9)
    assert np.max(np.abs(np.diff(sol.q, axis=0))) < 0.05  # warm start: no branch jumps
    assert np.all(sol.q[:, 1] < 0)


def test_dls_three_joints_holds_pitch_like_the_closed_form(example_robot):
    import dataclasses

    from legbridge.robots.leg_model import build_leg_model
    from legbridge.robots.robot import Segment

    segs = (Segment("thigh", 0.35, 2.0, 0.15, 0.03), Segment("shank", 0.35, 0.8, 0.15, 0.01), Segment("pes", 0.10, 0.3, 0.05, 0.001))
    ankle = dataclasses.replace(example_robot.joints[1], name="ankle")
    leg = build_leg_model(dataclasses.replace(example_robot, segments=segs, joints=example_robot.joints + (ankle,)))
    p = leg_vector(np.linspace(0.45, 0.7, 10), np.linspace(-0.3, 0.3, 10))
    ref = chain_ik(p, leg.link_lengths_m, "backward", 0.15)
    sol = dls_ik(leg, p, knee="backward", foot_pitch_rad=0.15)
    np.testing.assert_allclose(sol.q, ref.q, atol=1e-8)
    assert np.all(sol.flags == 0)


def test_general_path_on_an_offset_leg(example_robot):
    # URDF-like geometry (knee 3 cm ahead of the thigh axis): DLS IK and Pinocchio Jacobians per sample.
    from legbridge.mapping.plan import ReducedTrajectory
    from legbridge.mapping.translate import is_straight_chain, translate

    leg = offset_leg()
    assert not is_straight_chain(leg)
    t = np.arange(0.0, 0.5 + 1e-12, 1 / 200)  # invented hop: 0.2 s stance then flight
    stance = t < 0.2
    s = np.where(stance, t / 0.2, (t - 0.2) / 0.3)
    l = np.where(stance, 0.68 - 0.05 * np.sin(np.pi * s), 0.68)
    a = np.where(stance, 0.3 - 0.6 * s, -0.3 + 0.6 * s)
    fz = np.where(stance, 700.0 * np.sin(np.pi * s), 0.0)
    case = ReducedTrajectory("hop", t, l, a, -0.2 * fz, fz, stance)
    jt = translate(case, example_robot, rate_hz=5000.0, leg_model=leg)
    assert np.all(jt.flags == 0)
    data = leg.model.createData()
    target = leg_vector(case.leg_length_m, case.leg_angle_rad)
    for k in range(0, case.n_samples, 7):  # Reference: Pinocchio forward kinematics reaches the plan's foot point
        pin.framesForwardKinematics(leg.model, data, leg.full_q(np.zeros(3), jt.q[25 * k]))
        np.testing.assert_allclose(data.oMf[leg.foot_frame_id].translation[[0, 2]], target[k], atol=1e-9)
    # Rates: the foot velocity J qd equals the analytic derivative of the plan's leg vector (chain
    # rule on the closed-form l(t), a(t) above).
    tg, st = jt.time_s, jt.stance
    sg = np.where(st, tg / 0.2, (tg - 0.2) / 0.3)
    sdot = np.where(st, 1 / 0.2, 1 / 0.3)
    lg = np.where(st, 0.68 - 0.05 * np.sin(np.pi * sg), 0.68)
    ldot = np.where(st, -0.05 * np.pi * np.cos(np.pi * sg) * sdot, 0.0)
    ag = np.where(st, 0.3 - 0.6 * sg, -0.3 + 0.6 * sg)
    adot = np.where(st, -0.6, 0.6) * sdot
    ref = np.column_stack([ldot * np.sin(ag) + lg * adot * np.cos(ag), -ldot * np.cos(ag) + lg * adot * np.sin(ag)])
    np.testing.assert_allclose(np.einsum("nij,nj->ni", jt.jacobian, jt.qd), ref, atol=2e-3 * np.abs(ref).max())
    np.testing.assert_allclose(jt.tau, jt.tau_free - np.einsum("nij,ni->nj", jt.jacobian, jt.foot_force_n), atol=1e-9)
