"""Inverse kinematics against the textbook two-link solution, round trips, the three-joint rule, and URDF legs
with offsets driven beyond reach (Pinocchio forward kinematics and an independent circle construction)."""

import math
from pathlib import Path

import numpy as np
import pinocchio as pin
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from legbridge.mapping.ik import PlanarChain, chain_ik, dls_ik, offset_chain_ik, planar_chain, two_link_ik, wrap_angle
from legbridge.mapping.joint_trajectory import FLAG_IK_NOT_CONVERGED, FLAG_NONFINITE, FLAG_UNREACHABLE
from legbridge.mapping.kinematics import chain_foot, chain_jacobian, chain_jdot_qd, leg_vector
from legbridge.robots import build_leg_model, load_robot
from legbridge.robots.errors import LegbridgeError
from legbridge.robots.leg_model import BASE_JOINTS, FOOT_FRAME, HIP_FRAME, index_model
from legbridge.robots.library import library_path

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


def _planar_base():
    """(model, pitch joint id): the planar base (x, z, pitch) with a 10 kg body and the hip frame."""
    model = pin.Model()
    ident = pin.SE3.Identity()
    jx = model.addJoint(0, pin.JointModelPX(), ident, BASE_JOINTS[0])
    jz = model.addJoint(jx, pin.JointModelPZ(), ident, BASE_JOINTS[1])
    jp = model.addJoint(jz, pin.JointModelRY(), ident, BASE_JOINTS[2])
    model.appendBodyToJoint(jp, pin.Inertia(10.0, np.zeros(3), np.eye(3) * 0.5), ident)
    model.addFrame(pin.Frame(HIP_FRAME, jp, ident, pin.FrameType.OP_FRAME))
    return model, jp


def offset_leg():
    """A leg whose knee is 3 cm ahead of the thigh axis (URDF-like offset geometry)."""
    model, jp = _planar_base()
    ident = pin.SE3.Identity()
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


# --- IK that cannot diverge: URDF legs with offsets, targets beyond reach ---------------------------

# Offsets written into the bundled spatial-leg URDF below (invented): the knee 3 cm ahead of the
# thigh axis, the foot link 2 cm behind the shank axis, plus the TOML's 2 cm sole below the foot link.
A1 = np.array([0.03, -0.38])              # hip_pitch -> knee, (x, z) [m]
A2 = np.array([-0.02, -0.38 - 0.02])      # knee -> contact point [m]
A3 = np.array([0.04, -0.06 - 0.02])       # ankle -> contact point of the three-joint variant [m]
R_MAX = float(np.hypot(*A1) + np.hypot(*A2))
KNEE_ORIGIN = '<origin xyz="0 0 -0.38"/>\n    <axis xyz="0 1 0"/>\n    <limit lower="-2.6"'
FOOT_JOINT = ('<joint name="foot_fixed" type="fixed">\n    <parent link="shank"/><child link="foot"/>\n'
              '    <origin xyz="0 0 -0.38"/>\n  </joint>')
ANKLE = """<link name="pes">
    <inertial><origin xyz="0 0 -0.03"/><mass value="0.3"/>
      <inertia ixx="0.001" iyy="0.001" izz="0.0005" ixy="0" ixz="0" iyz="0"/></inertial>
  </link>
  <joint name="ankle" type="revolute">
    <parent link="shank"/><child link="pes"/>
    <origin xyz="-0.02 0 -0.38"/>
    <axis xyz="0 1 0"/>
    <limit lower="-1.2" upper="1.2" effort="40" velocity="12"/>
  </joint>
  <joint name="foot_fixed" type="fixed">
    <parent link="pes"/><child link="foot"/>
    <origin xyz="0.04 0 -0.06"/>
  </joint>"""


def write_offset_leg(folder: Path, ankle: bool = False):
    """The bundled spatial leg with the offsets above, read through the URDF reader -> (robot, LegModel)."""
    urdf = Path(library_path("spatial-leg.urdf")).read_text()
    toml = Path(library_path("spatial-leg.toml")).read_text()
    assert urdf.count(KNEE_ORIGIN) == 1 and urdf.count(FOOT_JOINT) == 1
    urdf = urdf.replace(KNEE_ORIGIN, KNEE_ORIGIN.replace('xyz="0 0 -0.38"', 'xyz="0.03 0 -0.38"'))
    if ankle:
        urdf = urdf.replace(FOOT_JOINT, ANKLE)
        toml = toml.replace('leg_joints = ["hip_pitch", "knee"]', 'leg_joints = ["hip_pitch", "knee", "ankle"]')
        knee_table = toml[toml.index("[joints.knee]"):]
        toml = toml + "\n" + knee_table.replace("[joints.knee]", "[joints.ankle]")
    else:
        urdf = urdf.replace(FOOT_JOINT, FOOT_JOINT.replace('xyz="0 0 -0.38"', 'xyz="-0.02 0 -0.38"'))
    (folder / "spatial-leg.urdf").write_text(urdf)
    (folder / "leg.toml").write_text(toml)
    robot = load_robot(folder / "leg.toml")
    return robot, build_leg_model(robot)


@pytest.fixture(scope="module")
def urdf_offset_leg(tmp_path_factory):
    return write_offset_leg(tmp_path_factory.mktemp("offset-leg"))


def seg_pitch(v):
    """Pitch of an (x, z) vector in the README convention: 0 pointing down, positive swung backward."""
    v = np.asarray(v, dtype=float)
    return np.arctan2(-v[..., 0], -v[..., 1])


def circle_reference(p, a1, a2):
    """Reference IK (elementary geometry, common practice): the knee is where the circle of radius
    |a1| about the hip joint meets the circle of radius |a2| about the foot, taking the intersection
    behind the hip-foot line (the 'backward' knee: 2-D cross product foot x knee < 0). Then
    q1 turns a1 onto hip->knee and q1 + q2 turns a2 onto knee->foot."""
    r1, r2 = np.hypot(*a1), np.hypot(*a2)
    d = np.hypot(p[:, 0], p[:, 1])
    u = p / d[:, None]
    nrm = np.column_stack([-u[:, 1], u[:, 0]])
    x = (d**2 + r1**2 - r2**2) / (2 * d)
    h = np.sqrt(np.maximum(r1**2 - x**2, 0.0))   # 0: tangent circles, the leg straight
    k = x[:, None] * u - h[:, None] * nrm
    assert np.all(p[:, 0] * k[:, 1] - p[:, 1] * k[:, 0] <= 1e-12)   # rounding when tangent
    q1 = seg_pitch(k) - seg_pitch(a1)
    q2 = seg_pitch(p - k) - seg_pitch(a2) - q1
    return np.column_stack([np.angle(np.exp(1j * q1)), np.angle(np.exp(1j * q2))])


def pinocchio_points(leg, q):
    """Pinocchio forward kinematics: hip joint, knee joint, last joint and foot relative to the hip frame (x, z)."""
    data = leg.model.createData()
    ids = [leg.model.getJointId(n) for n in leg.joint_names]
    out = []
    for qi in q:
        pin.framesForwardKinematics(leg.model, data, leg.full_q(np.zeros(3), qi))
        hip = data.oMf[leg.hip_frame_id].translation
        pts = [data.oMi[j].translation - hip for j in ids] + [data.oMf[leg.foot_frame_id].translation - hip]
        out.append(np.array(pts)[:, [0, 2]])
    return np.array(out)


def excursion(n=401):
    """Invented foot path: from 0.70 m out to 1 cm beyond full reach and back while the leg sweeps
    from +0.3 to -0.3 rad (the hip joint is the hip frame's origin on URDF legs)."""
    s = (np.arange(n) + 0.5) / n
    return leg_vector(0.70 + (R_MAX + 0.01 - 0.70) * np.sin(np.pi * s), 0.3 - 0.6 * s)


@pytest.mark.parametrize("closed_form", [None, False], ids=["closed-form", "iterative"])
def test_excursion_beyond_reach_on_a_urdf_leg_with_offsets(urdf_offset_leg, closed_form):
    robot, leg = urdf_offset_leg
    p = excursion()
    beyond = np.hypot(p[:, 0], p[:, 1]) > R_MAX
    assert 100 < beyond.sum() < 150 and not beyond[0] and not beyond[-1]
    sol = dls_ik(leg, p, knee=robot.knee, closed_form=closed_form)

    # flags: exactly the samples beyond reach, and only FLAG_UNREACHABLE
    np.testing.assert_array_equal(sol.flags, np.where(beyond, FLAG_UNREACHABLE, 0))
    # finite, wrapped, and never outside the joint range without a flag (here: never outside at all
    # for reachable samples; the 3/2 cm offsets keep the straightest knee at -0.129 rad < -0.1)
    assert np.all(np.isfinite(sol.q)) and np.all(np.abs(sol.q) <= np.pi)
    lower = np.array([j.lower_rad for j in robot.joints])
    upper = np.array([j.upper_rad for j in robot.joints])
    outside = np.any((sol.q < lower) | (sol.q > upper), axis=1)
    assert not np.any(outside & (sol.flags == 0))

    # Reference 1: Pinocchio forward kinematics of the returned q lands on each reachable target to
    # 1e-9 m, with the knee joint behind the hip-foot line (the robot's 'backward' branch)
    pts = pinocchio_points(leg, sol.q)
    foot, knee_pt, hip_pt = pts[:, -1], pts[:, 1], pts[:, 0]
    np.testing.assert_allclose(hip_pt, 0.0, atol=1e-12)
    np.testing.assert_allclose(foot[~beyond], p[~beyond], atol=1e-9)
    cross = foot[:, 0] * knee_pt[:, 1] - foot[:, 1] * knee_pt[:, 0]
    assert np.all(cross[~beyond] < 0)
    # Beyond reach: the closest reachable pose along the target direction (leg straight at R_MAX)
    np.testing.assert_allclose(foot[beyond], R_MAX * p[beyond] / np.hypot(*p[beyond].T)[:, None], atol=1e-9)
    # Reference 2: the circle-intersection closed form from the URDF's link vectors, every reachable
    # sample (before and after the excursion); beyond reach, the same construction on the target
    # pulled back to R_MAX (tangent circles). There the leg is straight, the Jacobian singular, and
    # a residual of 1e-10 m fixes the angles only to about sqrt(1e-10 m / 0.4 m) ~ 2e-5 rad.
    reach = np.where(beyond, R_MAX / np.hypot(*p.T), 1.0)[:, None] * p
    ref = circle_reference(reach, A1, A2)
    np.testing.assert_allclose(sol.q[~beyond], ref[~beyond], atol=1e-9)
    np.testing.assert_allclose(sol.q[beyond], ref[beyond], atol=2e-5)
    # no branch jumps anywhere: the largest step between samples is the reference's (no 677 rad/s)
    assert np.max(np.abs(np.diff(sol.q, axis=0))) <= np.max(np.abs(np.diff(ref, axis=0))) + 4e-5


def test_flagged_samples_never_seed_the_next_one(urdf_offset_leg):
    # The iterative path warm-starts from the previous sample; a NaN target, a target 2 m away, one at
    # the hip joint (closer than the minimum reach) and a wild q_seed must not spoil what follows.
    robot, leg = urdf_offset_leg
    p = leg_vector(np.linspace(0.62, 0.74, 40), np.linspace(0.25, -0.25, 40))
    bad = {5: [np.nan, -0.6], 12: [2.0, -0.5], 13: [-1.5, 1.0], 25: [0.0, 0.0]}
    for i, v in bad.items():
        p[i] = v
    sol = dls_ik(leg, p, knee=robot.knee, closed_form=False, q_seed=[40.0, 40.0])
    good = np.ones(len(p), dtype=bool)
    good[list(bad)] = False
    assert np.all(sol.flags[good] == 0)
    assert sol.flags[5] == FLAG_NONFINITE | FLAG_IK_NOT_CONVERGED and np.all(np.isnan(sol.q[5]))
    assert all(sol.flags[i] == FLAG_UNREACHABLE for i in (12, 13, 25))
    np.testing.assert_allclose(sol.q[good], circle_reference(p[good], A1, A2), atol=1e-9)
    foot = pinocchio_points(leg, sol.q[[12, 13, 25]])[:, -1]
    np.testing.assert_allclose(foot[:2], R_MAX * p[[12, 13]] / np.hypot(*p[[12, 13]].T)[:, None], atol=1e-9)
    # |a1| and |a2| differ by 1.93 cm: at the hip joint the leg folds, the foot straight below it
    r_min = abs(np.hypot(*A1) - np.hypot(*A2))
    np.testing.assert_allclose(foot[2], [0.0, -r_min], atol=1e-9)


def test_three_joint_urdf_leg_with_offsets_holds_pitch(tmp_path):
    # Reference: Pinocchio forward kinematics (foot on target to 1e-9 m, foot frame pitch = zero-pose
    # pitch + foot_pitch_rad, knee joint behind the hip-ankle line).
    _, leg = write_offset_leg(tmp_path, ankle=True)
    assert leg.n_joints == 3 and planar_chain(leg).exact
    pitch = 0.15
    p = leg_vector(np.linspace(0.60, 0.75, 30), np.linspace(-0.35, 0.35, 30))
    sol = dls_ik(leg, p, knee="backward", foot_pitch_rad=pitch)
    assert np.all(sol.flags == 0)
    pts = pinocchio_points(leg, sol.q)
    np.testing.assert_allclose(pts[:, -1], p, atol=1e-9)
    np.testing.assert_allclose(sol.q.sum(axis=1), pitch, atol=1e-12)   # Ry(q1 + q2 + q3), all axes +y
    data = leg.model.createData()
    pin.framesForwardKinematics(leg.model, data, leg.full_q(np.zeros(3), sol.q[7]))
    pitch_q = np.arctan2(data.oMf[leg.foot_frame_id].rotation[0, 2], data.oMf[leg.foot_frame_id].rotation[0, 0])
    np.testing.assert_allclose(pitch_q, pitch, atol=1e-12)   # the URDF's foot frame has no rotation at q = 0
    ankle, knee_pt = pts[:, 2], pts[:, 1]
    assert np.all(ankle[:, 0] * knee_pt[:, 1] - ankle[:, 1] * knee_pt[:, 0] < 0)
    # the ankle sits at the foot minus the pitched last link (rotation by the foot pitch about +y)
    c, s = np.cos(pitch), np.sin(pitch)
    np.testing.assert_allclose(ankle, p - np.array([c * A3[0] + s * A3[1], -s * A3[0] + c * A3[1]]), atol=1e-9)
    # the same targets from the iterative path agree
    np.testing.assert_allclose(dls_ik(leg, p, knee="backward", foot_pitch_rad=pitch, closed_form=False).q, sol.q, atol=1e-8)


def test_planar_chain_reads_the_urdf_and_matches_pinocchio(urdf_offset_leg):
    _, leg = urdf_offset_leg
    chain = planar_chain(leg)
    assert chain.exact
    np.testing.assert_allclose(chain.hip_joint_m, 0.0, atol=1e-12)
    np.testing.assert_allclose(chain.links_m, [A1, A2], atol=1e-12)
    rng = np.random.default_rng(3)
    q, qd = rng.uniform(-2.0, 2.0, (6, 2)), rng.uniform(-8.0, 8.0, (6, 2))
    data = leg.model.createData()
    jac, jdq = chain.jacobian(q), chain.jdot_qd(q, qd)
    np.testing.assert_allclose(chain.foot(q), pinocchio_points(leg, q)[:, -1], atol=1e-12)
    for k in range(len(q)):
        # Reference: Pinocchio's frame Jacobian (LOCAL_WORLD_ALIGNED) and classical acceleration at qdd = 0
        qf = leg.full_q(np.zeros(3), q[k])
        pin.framesForwardKinematics(leg.model, data, qf)
        ref = pin.computeFrameJacobian(leg.model, data, qf, leg.foot_frame_id, pin.LOCAL_WORLD_ALIGNED)[[0, 2]][:, leg.v_index]
        np.testing.assert_allclose(jac[k], ref, atol=1e-12)
        v = np.zeros(leg.model.nv)
        v[leg.v_index] = qd[k]
        pin.forwardKinematics(leg.model, data, qf, v, np.zeros(leg.model.nv))
        acc = pin.getFrameClassicalAcceleration(leg.model, data, leg.foot_frame_id, pin.LOCAL_WORLD_ALIGNED).linear[[0, 2]]
        np.testing.assert_allclose(jdq[k], acc, atol=1e-10)


def test_offset_closed_form_reduces_to_the_textbook_on_a_straight_chain():
    # A straight chain (c0 = 0, a_k = (0, -L_k)) must give Spong's two-link solution (see above).
    chain = PlanarChain(np.zeros(2), np.array([[0.0, -L1], [0.0, -L2]]), np.eye(3), True)
    p = np.array([[0.10, -0.65], [-0.20, -0.55], [0.0, -0.30], [0.35, -0.50]])
    for knee, sign in (("backward", -1), ("forward", 1)):
        sol = offset_chain_ik(chain, p, knee)
        t1, t2 = spong_two_link(-p[:, 1], -p[:, 0], L1, L2, elbow_down=sign > 0)
        np.testing.assert_allclose(sol.q, np.column_stack([t1, t2]), atol=1e-12)
        assert np.all(sol.flags == 0)


def tilted_knee_leg(tilt):
    """A leg that is NOT a planar chain: the knee axis leans by ``tilt`` rad towards +x."""
    model, jp = _planar_base()
    ident = pin.SE3.Identity()
    h = model.addJoint(jp, pin.JointModelRY(), ident, "hip")
    axis = np.array([np.sin(tilt), np.cos(tilt), 0.0])
    k = model.addJoint(h, pin.JointModelRevoluteUnaligned(axis), pin.SE3(np.eye(3), np.array([*A1[:1], 0, A1[1]])), "knee")
    model.addFrame(pin.Frame(FOOT_FRAME, k, pin.SE3(np.eye(3), np.array([A2[0], 0, A2[1]])), pin.FrameType.OP_FRAME))
    return index_model(model, ("hip", "knee"), FOOT_FRAME, HIP_FRAME)


def test_iterative_path_on_a_leg_that_is_not_planar():
    # No closed form is exact here: damped least squares does the work from the planar guess.
    # Reference: Pinocchio forward kinematics lands on every unflagged target to 1e-9 m, the knee
    # behind the hip-foot line; unflagged samples are those well inside reach.
    leg = tilted_knee_leg(0.15)
    assert not planar_chain(leg).exact
    p = excursion(201)
    sol = dls_ik(leg, p, knee="backward")
    ok = sol.flags == 0
    dist = np.hypot(p[:, 0], p[:, 1])
    assert np.all(ok[dist < R_MAX - 2e-3]) and not np.any(ok[dist > R_MAX])
    assert np.all(sol.flags[~ok] & FLAG_UNREACHABLE)
    assert np.all(np.isfinite(sol.q)) and np.all(np.abs(sol.q) <= np.pi)
    pts = pinocchio_points(leg, sol.q)
    np.testing.assert_allclose(pts[ok, -1], p[ok], atol=1e-9)
    assert np.all((pts[:, -1, 0] * pts[:, 1, 1] - pts[:, -1, 1] * pts[:, 1, 0])[ok] < 0)


def test_wrap_angle_half_open_interval():
    # (-pi, pi]: pi stays, -pi and 3 pi map to pi, 2 pi maps to 0 (definition of the interval)
    np.testing.assert_allclose(wrap_angle([np.pi, -np.pi, 3 * np.pi, 2 * np.pi, -0.5]), [np.pi, np.pi, np.pi, 0.0, -0.5], atol=1e-15)
    assert math.isclose(float(wrap_angle(7.0)), 7.0 - 2 * np.pi)


def test_unknown_knee_branch_is_a_legbridge_error(urdf_offset_leg):
    with pytest.raises(LegbridgeError, match="knee"):
        dls_ik(urdf_offset_leg[1], np.array([[0.0, -0.6]]), knee="sideways")


def test_translate_uses_the_closed_form_kinematics_of_an_offset_chain(urdf_offset_leg):
    # Reference: Pinocchio's frame Jacobian (LOCAL_WORLD_ALIGNED), the classical acceleration at
    # qdd = 0 and the parent joint's rotation, one sample at a time (translate's general path)
    import importlib

    tr_mod = importlib.import_module("legbridge.mapping.translate")  # the module (the package exports a function of that name)

    _, leg = urdf_offset_leg
    chain = tr_mod._planar_chain_or_none(leg)
    assert chain is not None
    rng = np.random.default_rng(11)
    q = np.column_stack([rng.uniform(-0.6, 0.6, 40), rng.uniform(-1.8, -0.2, 40)])
    qd = rng.normal(0, 3, (40, 2))
    jac_ref, rot_ref = tr_mod._general_kinematics(leg, q)
    np.testing.assert_allclose(chain.jacobian(q), jac_ref, atol=1e-12)
    np.testing.assert_allclose(tr_mod.rotation_y(q.sum(1)) @ tr_mod._parent_rotation0(leg), rot_ref, atol=1e-12)
    np.testing.assert_allclose(chain.jdot_qd(q, qd), tr_mod._general_jdot_qd(leg, q, qd), atol=1e-10)
