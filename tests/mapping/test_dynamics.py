"""Inverse dynamics against the two-link Lagrangian, the static J^T F law, virtual work and momentum."""

import dataclasses

import numpy as np
from scipy.integrate import cumulative_trapezoid

from legbridge.mapping.dynamics import foot_force_local, inverse_dynamics, rotation_y
from legbridge.mapping.kinematics import chain_jacobian, segment_pitch
from legbridge.mapping.plan import ReducedTrajectory
from legbridge.mapping.translate import translate
from legbridge.robots.leg_model import build_leg_model

G = 9.80665  # standard gravity (3rd CGPM, 1901), the value legbridge gives its Pinocchio model


def run_rnea(leg, q, qd, qdd, force, base_acc=(0.0, 0.0)):
    """rnea on the planar floating base with the base at rest (or accelerating by base_acc)."""
    n = q.shape[0]
    model = leg.model
    qf = np.tile(leg.full_q(np.zeros(3), np.zeros(leg.n_joints)), (n, 1))
    vf, af = np.zeros((n, model.nv)), np.zeros((n, model.nv))
    qf[:, leg.q_index], vf[:, leg.v_index], af[:, leg.v_index] = q, qd, qdd
    af[:, leg.base_v_index[0]], af[:, leg.base_v_index[1]] = base_acc
    rot = rotation_y(segment_pitch(q)[:, -1])
    return inverse_dynamics(leg, qf, vf, af, foot_force_local(leg, rot, force))


def lagrangian_two_link(robot, q, qd, qdd, force):
    """Two-link Euler-Lagrange equations (Spong, Hutchinson, Vidyasagar, Robot Modeling and Control,
    ch. 7, planar elbow manipulator): d11 = m1 lc1^2 + m2 (l1^2 + lc2^2 + 2 l1 lc2 cos q2) + I1 + I2,
    d12 = m2 (lc2^2 + l1 lc2 cos q2) + I2, d22 = m2 lc2^2 + I2, h = -m2 l1 lc2 sin q2,
    tau1 = d11 qdd1 + d12 qdd2 + 2 h qd1 qd2 + h qd2^2 + phi1, tau2 = d12 qdd1 + d22 qdd2 - h qd1^2 + phi2.
    Potential for our angles (measured from the downward vertical, heights -lc cos):
    phi1 = g (m1 lc1 s1 + m2 (l1 s1 + lc2 s12)), phi2 = g m2 lc2 s12. External force: -J^T F."""
    s1, s2 = robot.segments
    m1, m2, l1, lc1, lc2, i1, i2 = s1.mass_kg, s2.mass_kg, s1.length_m, s1.com_m, s2.com_m, s1.inertia_kgm2, s2.inertia_kgm2
    c2, sn2 = np.cos(q[:, 1]), np.sin(q[:, 1])
    d11 = m1 * lc1**2 + m2 * (l1**2 + lc2**2 + 2 * l1 * lc2 * c2) + i1 + i2
    d12 = m2 * (lc2**2 + l1 * lc2 * c2) + i2
    d22 = m2 * lc2**2 + i2
    h = -m2 * l1 * lc2 * sn2
    phi1 = G * (m1 * lc1 * np.sin(q[:, 0]) + m2 * (l1 * np.sin(q[:, 0]) + lc2 * np.sin(q.sum(1))))
    phi2 = G * m2 * lc2 * np.sin(q.sum(1))
    tau1 = d11 * qdd[:, 0] + d12 * qdd[:, 1] + 2 * h * qd[:, 0] * qd[:, 1] + h * qd[:, 1] ** 2 + phi1
    tau2 = d12 * qdd[:, 0] + d22 * qdd[:, 1] - h * qd[:, 0] ** 2 + phi2
    jac = chain_jacobian(q, (s1.length_m, s2.length_m))
    return np.column_stack([tau1, tau2]) - np.einsum("nij,ni->nj", jac, force)


def test_rnea_with_foot_force_matches_lagrangian_base_fixed(example_robot, example_leg_model):
    rng = np.random.default_rng(3)
    n = 25
    q = np.column_stack([rng.uniform(-1, 1, n), rng.uniform(-2.4, -0.1, n)])
    qd, qdd = rng.normal(0, 3, (n, 2)), rng.normal(0, 30, (n, 2))
    force = rng.normal(0, 300, (n, 2))
    dyn = run_rnea(example_leg_model, q, qd, qdd, force)
    np.testing.assert_allclose(dyn.tau, lagrangian_two_link(example_robot, q, qd, qdd, force), rtol=1e-9, atol=1e-9)


def test_foot_force_changes_torques_by_exactly_minus_jt_f(example_leg_model):
    # Known pitfall of pin.rnea checked (principle of virtual work: generalised force of F is J^T F).
    rng = np.random.default_rng(5)
    n = 20
    q = np.column_stack([rng.uniform(-1, 1, n), rng.uniform(-2.4, -0.1, n)])
    qd, qdd = rng.normal(0, 3, (n, 2)), rng.normal(0, 30, (n, 2))
    force = rng.normal(0, 300, (n, 2))
    with_f = run_rnea(example_leg_model, q, qd, qdd, force, base_acc=(1.5, -4.0)).tau
    without = run_rnea(example_leg_model, q, qd, qdd, np.zeros_like(force), base_acc=(1.5, -4.0)).tau
    jac = chain_jacobian(q, example_leg_model.link_lengths_m)
    np.testing.assert_allclose(with_f - without, -np.einsum("nij,ni->nj", jac, force), atol=1e-9)


def test_static_torques_against_hand_computed_pose(example_robot):
    """Hand computation (statics: the actuator balances the moment of the ground force about each joint).

    Pose q1 = 30 deg, q2 = -60 deg, L1 = 0.40 m, L2 = 0.42 m; cos 30 = 0.8660254:
    knee = (-0.4 sin 30, -0.4 cos 30) = (-0.2, -0.34641); foot = knee + 0.42 (sin 30, -cos 30) = (0.01, -0.71014).
    Ground force F = (100, 500) N on the foot. Moment about +y of F at the foot about a point c:
    (r_z F_x - r_x F_z), r = foot - c. About the hip: -0.71014*100 - 0.01*500 = -76.014 N m;
    about the knee: -0.36373*100 - 0.21*500 = -141.373 N m. The actuators cancel those moments:
    tau = (76.014, 141.373) N m = -J^T F (our sign: ground force on the foot, torque on the child).
    """
    light = dataclasses.replace(example_robot, segments=tuple(
        dataclasses.replace(s, mass_kg=1e-12, inertia_kgm2=1e-14) for s in example_robot.segments))
    leg = build_leg_model(light)
    q = np.array([[np.pi / 6, -np.pi / 3]])
    tau = run_rnea(leg, q, np.zeros((1, 2)), np.zeros((1, 2)), np.array([[100.0, 500.0]])).tau[0]
    np.testing.assert_allclose(tau, [76.014, 141.373], atol=2e-3)


def light_robot(robot):
    return dataclasses.replace(robot, segments=tuple(
        dataclasses.replace(s, mass_kg=1e-9, inertia_kgm2=1e-11) for s in robot.segments))


def smooth_stance_case(n=801, duration=0.4):
    t = np.linspace(0.0, duration, n)
    w = np.pi / duration
    l = 0.72 - 0.06 * np.sin(w * t)
    a = 0.3 - 0.6 * t / duration
    fz = 900 * np.sin(w * t) + 50
    fx = -200 * np.cos(w * t)
    return ReducedTrajectory("stance", t, l, a, fx, fz, np.ones(n, bool)), (t, w, duration)


def test_virtual_work_joint_power_equals_foot_power_massless_leg(example_robot):
    """Power balance (virtual work) for a massless leg: tau = -J^T F, so tau . qd = -F . v_foot,
    the actuators' power equals the power the foot delivers to the ground. v_foot here is the exact
    derivative of r = l (sin a, -cos a) with the case's analytic l(t), a(t), not the pipeline's."""
    robot = light_robot(example_robot)
    case, (t, w, T) = smooth_stance_case()
    jt = translate(case, robot, rate_hz=1000.0)
    tt = jt.time_s
    l, ld = 0.72 - 0.06 * np.sin(w * tt), -0.06 * w * np.cos(w * tt)
    a, ad = 0.3 - 0.6 * tt / T, np.full_like(tt, -0.6 / T)
    v = np.column_stack([ld * np.sin(a) + l * ad * np.cos(a), -ld * np.cos(a) + l * ad * np.sin(a)])
    f = np.column_stack([-200 * np.cos(w * tt), 900 * np.sin(w * tt) + 50])
    joint_power = (jt.tau * jt.qd).sum(1)
    foot_power = -(f * v).sum(1)
    np.testing.assert_allclose(joint_power, foot_power, atol=1e-3 * np.abs(foot_power).max())
    np.testing.assert_allclose(jt.mechanical_power_w.sum(1), joint_power, rtol=1e-12)


def test_base_residual_vanishes_for_point_mass_law_and_massless_leg(example_robot):
    """Newton's second law for the whole robot: base force = sum m_i (a_i - g) - F. With
    a_base = F / m_total + g every mass moving with the base gives zero, so the x, z residual is
    sum over leg segments of m_i times the segment centre of mass acceleration relative to the base:
    zero for a massless leg; for the real leg compared with the change of the leg's
    centre-of-mass momentum (finite differences, check only)."""
    case, _ = smooth_stance_case(201)
    jt = translate(case, light_robot(example_robot), rate_hz=500.0)
    np.testing.assert_allclose(jt.base_residual[:, :2], 0.0, atol=1e-5)
    assert np.abs(jt.foot_force_n).max() > 500
    jt_real = translate(case, example_robot, rate_hz=4000.0)
    s1, s2 = example_robot.segments
    q1, q12 = jt_real.q[:, 0], jt_real.q.sum(1)
    down1 = np.column_stack([-np.sin(q1), -np.cos(q1)])
    down2 = np.column_stack([-np.sin(q12), -np.cos(q12)])
    mc = s1.mass_kg * s1.com_m * down1 + s2.mass_kg * (s1.length_m * down1 + s2.com_m * down2)
    # impulse-momentum theorem: the integral of the residual equals the change of d(m c)/dt
    vel = np.gradient(mc, jt_real.time_s, axis=0)
    impulse = cumulative_trapezoid(jt_real.base_residual[:, :2], jt_real.time_s, axis=0, initial=0.0)
    inner = slice(2, -2)
    np.testing.assert_allclose(impulse[inner], (vel - vel[1])[inner] + impulse[1], atol=0.01 * np.abs(vel).max())
    assert np.abs(vel).max() > 0.1


def test_tau_free_identity(example_robot):
    case, _ = smooth_stance_case(201)
    jt = translate(case, example_robot, rate_hz=500.0)
    # tau = tau_free - J^T F by definition (JointTrajectory docstring)
    np.testing.assert_allclose(jt.tau, jt.tau_free - np.einsum("nij,ni->nj", jt.jacobian, jt.foot_force_n), atol=1e-9)
