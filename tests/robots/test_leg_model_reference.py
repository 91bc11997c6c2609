"""The two-joint leg model against closed-form planar two-link results.

Source: Spong, Hutchinson and Vidyasagar, *Robot Modeling and Control*, 2nd ed., planar two-link
arm (forward kinematics and Jacobian, ch. 3-4; Lagrangian dynamics, ch. 6, "two-link revolute
joint arm"), rewritten for our angle convention: zero = hanging down, positive about +y swings the
foot backward, so relative to the hip
    x = -L1 sin q1 - L2 sin(q1 + q2),  z = -L1 cos q1 - L2 cos(q1 + q2).
Gravity g = 9.80665 m/s^2 along -z (standard gravity; legbridge sets it on the Pinocchio model). The leg block of the floating-base mass
matrix is the fixed-base mass matrix (base held fixed); at base pitch 0 the leg gravity torques are
the fixed-base ones.
"""

from __future__ import annotations

import numpy as np
import pinocchio as pin
import pytest

G = 9.80665  # standard gravity (3rd CGPM, 1901), the value legbridge gives its Pinocchio model


def closed_form(robot, q1, q2):
    (s1, s2) = robot.segments
    L1, L2 = s1.length_m, s2.length_m
    m1, m2, c1, c2, I1, I2 = s1.mass_kg, s2.mass_kg, s1.com_m, s2.com_m, s1.inertia_kgm2, s2.inertia_kgm2
    foot = np.array([-L1 * np.sin(q1) - L2 * np.sin(q1 + q2), -L1 * np.cos(q1) - L2 * np.cos(q1 + q2)])
    jac = np.array([
        [-L1 * np.cos(q1) - L2 * np.cos(q1 + q2), -L2 * np.cos(q1 + q2)],
        [L1 * np.sin(q1) + L2 * np.sin(q1 + q2), L2 * np.sin(q1 + q2)],
    ])
    m11 = m1 * c1**2 + m2 * (L1**2 + c2**2 + 2 * L1 * c2 * np.cos(q2)) + I1 + I2
    m12 = m2 * (c2**2 + L1 * c2 * np.cos(q2)) + I2
    m22 = m2 * c2**2 + I2
    mass = np.array([[m11, m12], [m12, m22]])
    # V = -g [(m1 c1 + m2 L1) cos q1 + m2 c2 cos(q1 + q2)]; gravity torque = dV/dq
    grav = G * np.array([(m1 * c1 + m2 * L1) * np.sin(q1) + m2 * c2 * np.sin(q1 + q2), m2 * c2 * np.sin(q1 + q2)])
    return foot, jac, mass, grav


@pytest.fixture(scope="module")
def configs():
    rng = np.random.default_rng(3)
    return rng.uniform([-1.6, -2.6], [1.6, -0.05], size=(25, 2))


def test_kinematics_and_jacobian(example_robot, example_leg_model, configs):
    leg = example_leg_model
    m, d = leg.model, leg.model.createData()
    for q1, q2 in configs:
        q = leg.full_q([0.3, 1.0, 0.0], [q1, q2])
        pin.computeJointJacobians(m, d, q)
        pin.framesForwardKinematics(m, d, q)
        foot, jac, _, _ = closed_form(example_robot, q1, q2)
        rel = d.oMf[leg.foot_frame_id].translation - d.oMf[leg.hip_frame_id].translation
        np.testing.assert_allclose(rel[[0, 2]], foot, atol=1e-12)
        J = pin.getFrameJacobian(m, d, leg.foot_frame_id, pin.LOCAL_WORLD_ALIGNED)
        np.testing.assert_allclose(J[[0, 2]][:, leg.v_index], jac, atol=1e-12)


def test_mass_matrix_and_gravity(example_robot, example_leg_model, configs):
    leg = example_leg_model
    m, d = leg.model, leg.model.createData()
    for q1, q2 in configs:
        q = leg.full_q([0.3, 1.0, 0.0], [q1, q2])
        M = pin.crba(m, d, q)
        M = np.triu(M) + np.triu(M, 1).T
        _, _, mass, grav = closed_form(example_robot, q1, q2)
        np.testing.assert_allclose(M[np.ix_(leg.v_index, leg.v_index)], mass, atol=1e-9)
        g = pin.computeGeneralizedGravity(m, d, q)
        np.testing.assert_allclose(g[leg.v_index], grav, atol=1e-9)
        # base pitch p rotates gravity relative to the leg: the same as hip angle q1 + p
        qp = leg.full_q([0.0, 0.0, 0.4], [q1, q2])
        _, _, _, grav_p = closed_form(example_robot, q1 + 0.4, q2)
        np.testing.assert_allclose(pin.computeGeneralizedGravity(m, d, qp)[leg.v_index], grav_p, atol=1e-9)


def test_total_weight_on_base(example_robot, example_leg_model):
    # Vertical base coordinate carries the whole weight (Newton's second law, statics)
    leg = example_leg_model
    g = pin.computeGeneralizedGravity(leg.model, leg.model.createData(), leg.full_q([0, 0, 0], [0.2, -0.9]))
    assert g[leg.base_v_index[1]] == pytest.approx(G * example_robot.total_mass_kg, rel=1e-12)
