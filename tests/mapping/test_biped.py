"""Biped translation (mapping/biped.py) checked against references outside the code under test.

References: Pinocchio's rnea and forward kinematics on a two-leg URDF written here by hand from the
numbers of robots/library/lab-biped.toml (not from robots/biped_model.py); the one-leg translation
of the same leg (RNEA: a joint's torque depends only on its subtree's motion and the base's motion,
Featherstone, Rigid Body Dynamics Algorithms, 2008, ch. 5); the plan's own leg vector; the swing
clearance rule worked out by hand from the arrays; and planar statics derived in the comments.
All robot numbers and plans are INVENTED (the demo plans and the lab-biped files say so).
"""

import dataclasses

import numpy as np
import pinocchio as pin
import pytest

from legbridge.limits.checks.case import check_case
from legbridge.limits.checks.results import CheckSettings
from legbridge.limits.checks.swing_clearance import GROUND_TOL_M, MIDDLE_HALF_PROFILE
from legbridge.mapping.gait import Gait
from legbridge.mapping.pipeline import prepare
from legbridge.mapping.plan import Plan, ReducedTrajectory
from legbridge.mapping.resample import resample_case
from legbridge.mapping.slip.demo import demo_plan, demo_run_plan
from legbridge.robots.library import as_robot

G = 9.80665  # standard gravity (3rd CGPM, 1901), the value legbridge gives its Pinocchio model
RATE = 1000.0
LEGS = ("left", "right")

# Copied by hand from robots/library/lab-biped.toml (INVENTED numbers); test_urdf_numbers_are_the_robot_files
# fails if the file is retuned. Segments: (name, length, mass, com distance, pitch inertia).
BODY_MASS, BODY_I, HIP = 19.0, 0.9, (0.0, -0.10)
SEGS = (("thigh", 0.38, 2.2, 0.14, 0.030), ("shank", 0.40, 0.8, 0.16, 0.012))
JOINTS = ("hip", "knee")


def _inertial(mass, com_z, i):
    # diag(I, I, 1e-3 I) about the segment com, as robots/leg_model.py _segment_inertia does: only the
    # pitch (y) entry matters in the plane; the same x and z entries keep the comparison like for like
    return (f'<inertial><origin xyz="0 0 {com_z!r}"/><mass value="{mass!r}"/><inertia ixx="{i!r}" iyy="{i!r}" '
            f'izz="{1e-3 * i!r}" ixy="0" ixz="0" iyz="0"/></inertial>')


def biped_urdf() -> str:
    """Body link (root) and two legs: each joint about +y, each child segment hanging along -z."""
    parts = ['<robot name="hand-written-biped">', f'<link name="body">{_inertial(BODY_MASS, 0.0, BODY_I)}</link>']
    for leg in LEGS:
        parent, origin = "body", f"{HIP[0]!r} 0 {HIP[1]!r}"
        for joint, (seg, length, mass, com, inertia) in zip(JOINTS, SEGS):
            child = f"{leg}_{seg}"
            parts.append(f'<joint name="{leg}_{joint}" type="revolute"><parent link="{parent}"/><child link="{child}"/>'
                         f'<origin xyz="{origin}"/><axis xyz="0 1 0"/>'
                         '<limit lower="-3.2" upper="3.2" effort="1000" velocity="100"/></joint>')
            parts.append(f'<link name="{child}">{_inertial(mass, -com, inertia)}</link>')
            parent, origin = child, f"0 0 {-length!r}"
        parts.append(f'<joint name="{leg}_foot_fixed" type="fixed"><parent link="{parent}"/>'
                     f'<child link="{leg}_foot"/><origin xyz="{origin}"/></joint><link name="{leg}_foot"/>')
    return "".join(parts + ["</robot>"])


@pytest.fixture(scope="module")
def ref_model():
    """The URDF composed under a planar base (x PX, z PZ, pitch RY) built here; appendModel moves the
    root link's (body's) inertia onto the pitch joint."""
    base = pin.Model()
    jx = base.addJoint(0, pin.JointModelPX(), pin.SE3.Identity(), "ref_x")
    jz = base.addJoint(jx, pin.JointModelPZ(), pin.SE3.Identity(), "ref_z")
    jp = base.addJoint(jz, pin.JointModelRY(), pin.SE3.Identity(), "ref_pitch")
    fr = base.addFrame(pin.Frame("trunk", jp, pin.SE3.Identity(), pin.FrameType.OP_FRAME))
    model = pin.appendModel(base, pin.buildModelFromXML(biped_urdf()), fr, pin.SE3.Identity())
    model.gravity = pin.Motion(np.array([0.0, 0.0, -G]), np.zeros(3))
    assert abs(pin.computeTotalMass(model) - 25.0) < 1e-12  # hand: 19 + 2 * (2.2 + 0.8)
    return model


def reference_rnea(model, traj, i, pitch, v_base, a_base):
    """(leg joint torques in traj.joint_names order, base (x, z, pitch) entries) from pin.rnea at sample i,
    the ground force traj.foot_force_n[i] shared equally by the legs in contact (by hand), each part
    applied at its foot point: a world spatial force (F, p x F) about the world origin, moved into the
    local frame of the foot's parent joint (what rnea's fext expects) by oMi.actInv. Base x, z do not
    enter the torques and are set to 0. Also returns the torques from rnea without fext minus J^T F
    (foot Jacobians, LOCAL_WORLD_ALIGNED), a second reference that needs no fext."""
    data = model.createData()
    q, v, a = pin.neutral(model), np.zeros(model.nv), np.zeros(model.nv)
    q[2], v[:3], a[:3] = pitch, v_base, a_base  # ref_x, ref_z, ref_pitch are the first three coordinates
    qi = [model.joints[model.getJointId(n)].idx_q for n in traj.joint_names]
    cols = [model.joints[model.getJointId(n)].idx_v for n in traj.joint_names]
    q[qi], v[cols], a[cols] = traj.q[i], traj.qd[i], traj.qdd[i]
    pin.framesForwardKinematics(model, data, q)
    contact = np.asarray(traj.leg_contact[i], dtype=bool)
    fext = pin.StdVec_Force()
    for _ in range(model.njoints):
        fext.append(pin.Force.Zero())
    jtf = np.zeros(model.nv)
    for k, leg in enumerate(LEGS):
        if not contact[k]:
            continue
        f = np.array([traj.foot_force_n[i, 0], 0.0, traj.foot_force_n[i, 1]]) / contact.sum()
        fid = model.getFrameId(f"{leg}_foot")
        parent = model.frames[fid].parentJoint
        fext[parent] = fext[parent] + data.oMi[parent].actInv(pin.Force(f, np.cross(data.oMf[fid].translation, f)))
        jac = pin.computeFrameJacobian(model, data, q, fid, pin.LOCAL_WORLD_ALIGNED)
        jtf += jac[:3].T @ f
    tau = pin.rnea(model, data, q, v, a, fext).copy()
    tau_jt = pin.rnea(model, data, q, v, a) - jtf
    return tau[cols], tau[:3], tau_jt[cols]


@pytest.fixture(scope="module")
def run_plan():
    return demo_run_plan((0.0,))  # INVENTED demo running plan, nominal ground only


@pytest.fixture(scope="module")
def alternating(run_plan):
    return prepare(run_plan, "lab-biped", rate_hz=RATE).trajectories[0]  # the plan's gait: alternating


def test_urdf_numbers_are_the_robot_files():
    r = as_robot("lab-biped")
    assert r.legs == LEGS and (r.body_mass_kg, r.body_pitch_inertia_kgm2, tuple(r.hip_offset_m)) == (BODY_MASS, BODY_I, HIP)
    assert tuple((s.name, s.length_m, s.mass_kg, s.com_m, s.inertia_kgm2) for s in r.segments) == SEGS
    assert tuple(j.name for j in r.joints) == JOINTS


def test_both_legs_torques_match_pinocchio_on_a_hand_written_urdf(alternating, ref_model):
    traj = alternating
    assert traj.joint_names == tuple(f"{leg}_{j}" for leg in LEGS for j in JOINTS)
    c, gen = np.asarray(traj.leg_contact), np.asarray(traj.leg_generated)
    # the samples cover stance on one foot with the other leg swinging and moving, and flight
    swinging = [(c[:, k] & ~c[:, 1 - k] & gen[:, 1 - k] & (np.abs(traj.qd[:, 2 * (1 - k)]) > 1.0)) for k in (0, 1)]
    assert swinging[0].sum() > 50 and swinging[1].sum() > 50
    assert (~c.any(1)).sum() > 200
    for tr in (traj, traj.phase_ends):  # every grid sample and every phase end
        n = tr.n_samples
        tau, base, tau_jt = np.empty((n, 4)), np.empty((n, 3)), np.empty((n, 4))
        for i in range(n):
            tau[i], base[i], tau_jt[i] = reference_rnea(ref_model, tr, i, tr.base_pitch_rad[i], tr.base_velocity[i],
                                                        tr.base_accel[i])
        # reference: the two ways of applying the ground force in Pinocchio agree (guards the reference)
        np.testing.assert_allclose(tau_jt, tau, rtol=1e-9, atol=1e-9)
        # reference: Pinocchio rnea on an independently written URDF, force moved into the parent joint frame
        np.testing.assert_allclose(tr.tau, tau, rtol=1e-6, atol=1e-6)
        # reference: the same rnea's base entries (x force, z force, pitch moment)
        np.testing.assert_allclose(tr.base_residual, base, rtol=1e-6, atol=1e-6)


def test_same_leg_gait_reproduces_the_one_leg_stance():
    plan = demo_plan((0.0,))  # INVENTED demo hopping plan
    one = prepare(plan, "lab-biped-leg", rate_hz=RATE).trajectories[0]
    two = prepare(plan, "lab-biped", rate_hz=RATE, gait=Gait("same-leg", "left")).trajectories[0]
    np.testing.assert_array_equal(two.time_s, one.time_s)  # the same grid first
    np.testing.assert_array_equal(two.stance, one.stance)
    np.testing.assert_array_equal(two.leg_contact[:, 0], one.stance)  # left takes every stance
    s = np.asarray(one.stance)
    assert 300 < s.sum() < s.size
    # Stance only: there the plan's body motion drives the base in both models, and the left leg's
    # torques depend only on its own motion and the base's (Featherstone, RBDA, ch. 5). In flight the
    # base floats free, and the one-leg file carries the other leg as rigid body mass (22 kg body)
    # while the biped holds it as a leg hanging below the hip, so the flight base motion differs.
    # reference: the one-leg trajectory (the plan's body motion, same base state in stance)
    np.testing.assert_allclose(two.base_velocity[s], one.base_velocity[s], rtol=0, atol=1e-12)
    np.testing.assert_allclose(two.base_accel[s], one.base_accel[s], rtol=0, atol=1e-12)
    assert np.all(two.base_pitch_rad[s] == 0.0) and np.all(one.base_pitch_rad[s] == 0.0)
    for name in ("q", "qd", "qdd", "tau"):
        # reference: one-leg translate of the same leg (RBDA ch. 5: subtree plus base motion)
        np.testing.assert_allclose(getattr(two, name)[s][:, :2], getattr(one, name)[s], rtol=1e-9, atol=1e-9,
                                   err_msg=name)


def first_samples(mask):
    """First sample of each run of True, by a plain scan."""
    return [i for i in range(len(mask)) if mask[i] and (i == 0 or not mask[i - 1])]


def test_each_touchdown_puts_the_foot_where_the_plan_says(alternating, run_plan, ref_model):
    traj = alternating
    rs = resample_case(run_plan.cases[0], RATE)
    np.testing.assert_array_equal(rs.time_s, traj.time_s)
    data = ref_model.createData()
    checked = 0
    for k, leg in enumerate(LEGS):
        touch = first_samples(np.asarray(traj.leg_contact[:, k]))
        assert len(touch) >= 2
        for i in touch:
            q = pin.neutral(ref_model)
            q[2] = traj.base_pitch_rad[i]
            for j, name in enumerate(traj.joint_names):
                q[ref_model.joints[ref_model.getJointId(name)].idx_q] = traj.q[i, j]
            pin.framesForwardKinematics(ref_model, data, q)
            rel = data.oMf[ref_model.getFrameId(f"{leg}_foot")].translation - \
                data.oMi[ref_model.getJointId(f"{leg}_hip")].translation
            length, angle = rs.leg_length.value[i], rs.leg_angle.value[i]
            # reference: the plan's leg vector (l sin a, -l cos a), world frame, against Pinocchio forward
            # kinematics of the hand-written URDF (base pitch included)
            np.testing.assert_allclose(rel[[0, 2]], [length * np.sin(angle), -length * np.cos(angle)], rtol=0,
                                       atol=1e-9, err_msg=f"{leg} touchdown at sample {i}")
            assert abs(rel[1]) < 1e-15
            checked += 1
    assert checked >= 5


def test_clearance_flags_exactly_the_generated_samples_below_the_ground(alternating):
    traj = alternating
    h, gen, prof = (np.asarray(a) for a in (traj.foot_height_m, traj.leg_generated, traj.leg_swing_profile))
    # the left leg's first generated swing: lower every foot height by a constant between the lowest and
    # the highest foot height over this swing's middle half, so part of its middle goes below the ground
    i0 = first_samples(gen[:, 0])[0]
    i1 = i0 + int(np.argmin(gen[i0:, 0])) if not gen[i0:, 0].all() else len(gen)
    mid = np.zeros(len(gen), bool)
    mid[i0:i1] = prof[i0:i1, 0] >= MIDDLE_HALF_PROFILE
    lo, hi = h[mid, 0].min(), h[mid, 0].max()
    assert hi - lo > 5e-3
    drop = 0.5 * (lo + hi)
    low = dataclasses.replace(traj, foot_height_m=h - drop,
                              phase_ends=dataclasses.replace(traj.phase_ends, foot_height_m=traj.phase_ends.foot_height_m - drop))
    review = check_case(low, as_robot("lab-biped"), CheckSettings(run_qps=False))
    by_leg = {t.joint: np.asarray(t.utilisation, float) for t in review.traces if t.limit == "swing_clearance"}
    assert set(by_leg) == set(LEGS)
    ends, idx = traj.phase_ends, np.asarray(traj.phase_end_index)
    for k, leg in enumerate(LEGS):
        u = by_leg[leg]
        # reference: the rule by hand from the arrays: not finite exactly on generated samples whose lowered
        # height is below -GROUND_TOL_M; a phase end folds into the grid sample before it (worse one kept)
        expect = gen[:, k] & (h[:, k] - drop < -GROUND_TOL_M)
        end_bad = np.asarray(ends.leg_generated[:, k]) & (np.asarray(ends.foot_height_m[:, k]) - drop < -GROUND_TOL_M)
        expect[idx[end_bad]] = True
        np.testing.assert_array_equal(~np.isfinite(u), expect, err_msg=leg)
        assert np.all(u[expect] == np.inf)
    # the construction reaches its aim: part of the chosen middle is flagged, part is not; and samples
    # below the ground that are not generated (stance, landing flights) are not flagged
    bad_left = ~np.isfinite(by_leg["left"])
    assert bad_left[mid].any() and not bad_left[mid].all()
    assert ((h[:, 0] - drop < -GROUND_TOL_M) & ~gen[:, 0]).sum() > 100
    assert not bad_left[~gen[:, 0]].any()


def static_plan(length_m, mass_kg, n=101, dt=0.002):
    """INVENTED plan: standing still, constant leg length, angle 0, vertical force m g, stance throughout."""
    t = np.arange(n) * dt
    z = np.full(n, 1.0)  # body height [m] (any constant: the base is at rest)
    case = ReducedTrajectory(name="static", time_s=t, leg_length_m=np.full(n, length_m), leg_angle_rad=np.zeros(n),
                             force_x_n=np.zeros(n), force_z_n=np.full(n, mass_kg * G), stance=np.ones(n, bool),
                             body_x_m=np.zeros(n), body_z_m=z, body_vx_m_s=np.zeros(n), body_vz_m_s=np.zeros(n))
    return Plan(path="<static double stance, invented>", sha256="", cases=(case,))


def test_static_double_stance_matches_pinocchio_and_statics(ref_model):
    robot = as_robot("lab-biped")
    m = robot.total_mass_kg
    assert m == 25.0  # hand: 19 + 2 * 3
    traj = prepare(static_plan(0.65, m), robot, rate_hz=RATE, gait="both").trajectories[0]  # 0.65 m: invented
    assert traj.leg_contact.all()
    np.testing.assert_allclose(traj.q[:, :2], traj.q[:, 2:], rtol=0, atol=1e-15)  # same posture
    for a in (traj.qd, traj.qdd, traj.base_velocity, traj.base_accel, traj.base_pitch_rad):
        np.testing.assert_allclose(a, 0.0, rtol=0, atol=1e-12)
    np.testing.assert_allclose(traj.foot_force_n, np.tile([0.0, m * G], (traj.n_samples, 1)), rtol=1e-15)
    i = traj.n_samples // 2
    tau, base, _ = reference_rnea(ref_model, traj, i, 0.0, np.zeros(3), np.zeros(3))
    # reference: Pinocchio rnea on the hand-written URDF, gravity, m g / 2 on each foot
    np.testing.assert_allclose(traj.tau[i], tau, rtol=1e-6, atol=1e-6)
    np.testing.assert_allclose(traj.base_residual[i], base, rtol=1e-6, atol=1e-6)

    # Statics by hand. Pinocchio's RY(th) takes the local -z axis to (-sin th, 0, -cos th), so from the hip:
    # knee x_k = -l1 sin q1, thigh com x_1 = -c1 sin q1, shank com x_2 = x_k - c2 sin(q1 + q2), foot
    # x_f = x_k - l2 sin(q1 + q2). A joint torque balances the y moments (r x F)_y = r_z F_x - r_x F_z of
    # the forces on its subtree, so with gravity -m g and a vertical foot force F_z = m_tot g / 2:
    #   tau_hip = -g (m1 x_1 + m2 x_2) + x_f F_z,  tau_knee = -g m2 (x_2 - x_k) + (x_f - x_k) F_z.
    (_, l1, m1, c1, _), (_, l2, m2, c2, _) = SEGS
    q1, q2 = traj.q[i, 0], traj.q[i, 1]
    xk, x1 = -l1 * np.sin(q1), -c1 * np.sin(q1)
    x2, xf = xk - c2 * np.sin(q1 + q2), xk - l2 * np.sin(q1 + q2)
    fz = m * G / 2
    assert abs(xf) < 1e-12  # reference: angle 0 puts the foot under the hip (closed-form chain)
    hip = -G * (m1 * x1 + m2 * x2) + xf * fz
    knee = -G * m2 * (x2 - xk) + (xf - xk) * fz
    # reference: planar statics above (hand derivation), both legs
    np.testing.assert_allclose(traj.tau[i], [hip, knee, hip, knee], rtol=1e-9, atol=1e-9)
    # With the feet under the hips the ground force has no moment about them, but the bent legs' own
    # weight does (the knee bends backward, so x_1, x_2 < 0): the two hips together carry
    # -2 g (m1 x_1 + m2 x_2) > 0, not zero. Zero only for a straight leg or massless segments.
    assert q2 < -0.1 and xk < 0.0
    assert traj.tau[i, 0] + traj.tau[i, 2] > 1.0
