"""translate(): one reduced-order case -> joint-space targets at the controller rate.

Steps (each in its own module): phase-aware resampling (mapping.resample), the leg vector and its
analytic rates (mapping.kinematics), inverse kinematics (mapping.ik), joint rates from the Jacobian
(qd = A^-1 r_dot, qdd = A^-1 (r_ddot - J_dot qd); A = J for two joints, J augmented with the foot
pitch row (1, 1, 1) for three), inverse dynamics on the planar floating base (mapping.dynamics) and
the motor side (mapping.motor_side).

Base motion. In stance the base pitch is 0 (point-mass plan); the hip is at the base (body centre of
mass) plus robot.hip_offset_m. Along each axis where the plan gives the body motion (body_x_m /
body_vx_m_s, body_z_m / body_vz_m_s) it is used, its acceleration from the interpolant's derivative;
otherwise the point-mass law gives the acceleration: a_body = F / m_total + g (m_total =
robot.total_mass_kg). In flight no external wrench acts: the base (x, z and pitch) moves as the
free-floating equations say given the joints' motion (mapping.free_flight), starting from the state
the flight begins in, and the body pitch that results is part of the trajectory.

Ground force. The plan's force is applied in stance samples only; flight samples get F = 0 (the foot
is off the ground), and foot_force_n holds the force actually applied.

Straight chains (native TOML legs: every segment along -z from its joint, all joints about y) use
the closed-form, vectorised kinematics; any other geometry (URDF legs with offsets) uses damped
least squares and Pinocchio Jacobians per sample.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
import pinocchio as pin

from legbridge.robots.leg_model import LegModel, build_leg_model
from legbridge.robots.robot import Robot

from .dynamics import foot_force_local, inverse_dynamics, rotation_y
from .free_flight import free_flight_base
from .ik import SINGULAR_TOL, chain_ik, dls_ik, solve_rates
from .joint_trajectory import FLAG_NONFINITE, FLAG_SINGULAR, JointTrajectory
from .kinematics import chain_foot, chain_jacobian, chain_jdot_qd, leg_vector, leg_vector_rates, segment_pitch
from .motor_side import motor_side
from .plan import Plan, ReducedTrajectory, frozen_array
from .resample import ResampledCase, resample_case


def is_straight_chain(leg: LegModel, tol: float = 1e-9) -> bool:
    """True when the Pinocchio model matches the straight serial chain on leg.link_lengths_m.

    Checked at a few fixed configurations: the foot relative to the hip, and the foot's parent joint
    orientation Ry(q1 + ... + qj).
    """
    if leg.n_joints not in (2, 3):
        return False
    model = leg.model
    data = model.createData()
    parent = model.frames[leg.foot_frame_id].parentJoint
    for k in range(3):
        q = np.array([0.3 * (k + 1), -0.7 * (k + 1) / 2, 0.4][: leg.n_joints])
        qf = leg.full_q(np.zeros(3), q)
        pin.framesForwardKinematics(model, data, qf)
        rel = data.oMf[leg.foot_frame_id].translation - data.oMf[leg.hip_frame_id].translation
        ref = chain_foot(q[None], leg.link_lengths_m)[0]
        if abs(rel[1]) > tol or np.max(np.abs(rel[[0, 2]] - ref)) > tol:
            return False
        if np.max(np.abs(data.oMi[parent].rotation - rotation_y(np.array([q.sum()]))[0])) > tol:
            return False
    return True


def _augment(jac: np.ndarray) -> np.ndarray:
    """Add the last-segment pitch row (1, ..., 1) to x/z Jacobians (n, 2, j) -> (n, 3, j)."""
    ones = np.ones((jac.shape[0], 1, jac.shape[2]))
    return np.concatenate([jac, ones], axis=1)


def _planar_chain_or_none(leg: LegModel):
    """mapping.ik.planar_chain(leg) when the model is exactly that chain (closed-form kinematics), else None."""
    from legbridge.robots.errors import LegbridgeError

    from .ik import planar_chain

    try:
        chain = planar_chain(leg)
    except LegbridgeError:
        return None
    return chain if chain.exact else None


def _parent_rotation0(leg: LegModel) -> np.ndarray:
    """World rotation (3, 3) of the foot's parent joint with every leg joint at 0 (base at rest)."""
    model = leg.model
    data = model.createData()
    pin.framesForwardKinematics(model, data, pin.neutral(model))
    return data.oMi[model.frames[leg.foot_frame_id].parentJoint].rotation.copy()


def _general_kinematics(leg: LegModel, q: np.ndarray):
    """Per-sample Pinocchio foot Jacobian (x, z rows, leg columns) and parent-joint rotation."""
    model = leg.model
    data = model.createData()
    parent = model.frames[leg.foot_frame_id].parentJoint
    n = q.shape[0]
    jac = np.empty((n, 2, leg.n_joints))
    rot = np.empty((n, 3, 3))
    qf = pin.neutral(model)
    for i in range(n):
        qf[leg.q_index] = q[i]
        pin.framesForwardKinematics(model, data, qf)
        jac[i] = pin.computeFrameJacobian(model, data, qf, leg.foot_frame_id, pin.LOCAL_WORLD_ALIGNED)[[0, 2]][:, leg.v_index]
        rot[i] = data.oMi[parent].rotation
    return jac, rot


def _general_jdot_qd(leg: LegModel, q: np.ndarray, qd: np.ndarray) -> np.ndarray:
    """Per-sample J_dot qd of the foot point (x, z) from Pinocchio's classical acceleration at qdd = 0."""
    model = leg.model
    data = model.createData()
    n = q.shape[0]
    out = np.empty((n, 2))
    qf, vf, af = pin.neutral(model), np.zeros(model.nv), np.zeros(model.nv)
    for i in range(n):
        qf[leg.q_index] = q[i]
        vf[leg.v_index] = qd[i]
        pin.forwardKinematics(model, data, qf, vf, af)
        out[i] = pin.getFrameClassicalAcceleration(model, data, leg.foot_frame_id, pin.LOCAL_WORLD_ALIGNED).linear[[0, 2]]
    return out


def _base_axis(channel, force, stance, gravity, m_total):
    """(position, velocity, acceleration) of the base along one axis (see the module docstring)."""
    if channel is not None:
        return channel.value, channel.rate, channel.accel
    n = force.shape[0]
    acc = np.where(stance, force / m_total + gravity, gravity)
    return np.zeros(n), np.zeros(n), acc


@dataclass(frozen=True, eq=False)
class LegJointMotion:
    """One leg's joints following a leg vector: q, qd, qdd (n, j); flags (n,) FLAG_* bits;
    jac (n, 2, j) foot Jacobian (x, z rows, world-aligned); rot (n, 3, 3) world rotation of the
    foot's parent joint."""

    q: np.ndarray
    qd: np.ndarray
    qdd: np.ndarray
    flags: np.ndarray
    jac: np.ndarray
    rot: np.ndarray


def leg_joint_motion(leg: LegModel, robot: Robot, ll, la) -> LegJointMotion:
    """Inverse kinematics and joint rates of one leg whose length ``ll`` and angle ``la`` (each with
    .value, .rate, .accel, shape (n,)) are given: the hip-to-foot vector and its analytic rates
    (mapping.kinematics), the IK (mapping.ik) and qd = A^-1 r_dot, qdd = A^-1 (r_ddot - J_dot qd)."""
    n, nj = ll.value.shape[0], leg.n_joints
    lengths = leg.link_lengths_m
    r = leg_vector(ll.value, la.value)
    rd, rdd = leg_vector_rates(ll.value, ll.rate, ll.accel, la.value, la.rate, la.accel)
    straight = is_straight_chain(leg)

    if straight:
        sol = chain_ik(r, lengths, robot.knee, robot.foot_pitch_rad)
        q, flags = sol.q, sol.flags.copy()
        jac = chain_jacobian(q, lengths)
        rot = rotation_y(segment_pitch(q)[:, -1])
    else:
        sol = dls_ik(leg, r, knee=robot.knee, foot_pitch_rad=robot.foot_pitch_rad)
        q, flags = sol.q, sol.flags.copy()
        chain = _planar_chain_or_none(leg)  # read once, used again for J_dot qd below
        if chain is not None:  # a planar chain with offsets: its Jacobian in closed form, vectorised
            jac = chain.jacobian(q)
            rot = rotation_y(q.sum(axis=1)) @ _parent_rotation0(leg)
        else:
            jac, rot = _general_kinematics(leg, q)

    a_mat = _augment(jac) if nj == 3 else jac
    pad = np.zeros((n, a_mat.shape[1] - 2))
    det = np.abs(np.linalg.det(a_mat)) / (lengths[0] * lengths[1])
    flags |= np.where(det < SINGULAR_TOL, FLAG_SINGULAR, 0)
    singular = (flags & FLAG_SINGULAR) != 0
    qd = solve_rates(a_mat, np.hstack([rd, pad]), singular, lengths[0])
    if straight:
        jdq = chain_jdot_qd(q, qd, lengths)
    else:
        jdq = chain.jdot_qd(q, qd) if chain is not None else _general_jdot_qd(leg, q, qd)
    qdd = solve_rates(a_mat, np.hstack([rdd - jdq, pad]), singular, lengths[0])
    return LegJointMotion(q, qd, qdd, flags, jac, rot)


def whole_body_motion(model_like, rs: ResampledCase, robot: Robot, q, qd, qdd, force, stance):
    """((base_q, base_v, base_a) (n, 3) each, (q_full, v_full, a_full)) for joints q, qd, qdd (n, j):
    the base as the plan's body motion drives it in stance (the point-mass law along an axis the plan
    does not give), free-floating in flight (mapping.free_flight), assembled with the joints into the
    whole model's configuration, velocity and acceleration. model_like: a LegModel or a BipedModel."""
    n = q.shape[0]
    g = model_like.model.gravity.linear
    m_total = robot.total_mass_kg
    bx = _base_axis(rs.body_x, force[:, 0], stance, g[0], m_total)
    bz = _base_axis(rs.body_z, force[:, 1], stance, g[2], m_total)
    zero = np.zeros(n)
    base_q, base_v, base_a = (np.column_stack([bx[k], bz[k], zero]) for k in range(3))
    base_q, base_v, base_a = free_flight_base(model_like, rs.time_s, q, qd, qdd, base_q, base_v, base_a, stance)
    model = model_like.model
    qf = np.tile(pin.neutral(model), (n, 1))
    vf, af = np.zeros((n, model.nv)), np.zeros((n, model.nv))
    qf[:, model_like.base_q_index], qf[:, model_like.q_index] = base_q, q
    vf[:, model_like.base_v_index], vf[:, model_like.v_index] = base_v, qd
    af[:, model_like.base_v_index], af[:, model_like.v_index] = base_a, qdd
    return (base_q, base_v, base_a), (qf, vf, af)


def translate_resampled(rs: ResampledCase, robot: Robot, leg: LegModel, *, name: str = "",
                        ground_height_m: float = 0.0, rate_hz: float = 1000.0) -> JointTrajectory:
    """translate() on a case already on the controller grid."""
    m = leg_joint_motion(leg, robot, rs.leg_length, rs.leg_angle)
    q, qd, qdd, flags, jac, rot = m.q, m.qd, m.qdd, m.flags, m.jac, m.rot

    # ground force (stance only) and base motion
    stance = np.asarray(rs.stance, dtype=bool)
    force = np.where(stance[:, None], np.column_stack([rs.force_x_n, rs.force_z_n]), 0.0)
    (base_q, base_v, base_a), (qf, vf, af) = whole_body_motion(leg, rs, robot, q, qd, qdd, force, stance)

    dyn = inverse_dynamics(leg, qf, vf, af, foot_force_local(leg, rot, force))
    tau = dyn.tau
    tau_free = tau + np.einsum("nij,ni->nj", jac, force)
    ms = motor_side(robot, rs.time_s, q, qd, qdd, tau, stance, rs.pieces, rs.plan_time_s)

    finite = np.isfinite(q).all(1) & np.isfinite(qd).all(1) & np.isfinite(qdd).all(1) & np.isfinite(tau).all(1)
    finite &= np.isfinite(ms.current_a).all(1) & np.isfinite(ms.voltage_v).all(1)
    flags |= np.where(finite, 0, FLAG_NONFINITE)

    return JointTrajectory(
        case=name,
        ground_height_m=float(ground_height_m),
        joint_names=tuple(leg.joint_names),
        rate_hz=float(rate_hz),
        time_s=frozen_array(rs.time_s),
        stance=frozen_array(stance, dtype=bool),
        q=frozen_array(q),
        qd=frozen_array(qd),
        qdd=frozen_array(qdd),
        tau=frozen_array(tau),
        tau_free=frozen_array(tau_free),
        jacobian=frozen_array(jac),
        foot_force_n=frozen_array(force),
        base_residual=frozen_array(dyn.base_residual),
        motor_position_rad=ms.motor_position_rad,
        motor_speed_rad_s=ms.motor_speed_rad_s,
        motor_torque_nm=ms.motor_torque_nm,
        current_a=ms.current_a,
        voltage_v=ms.voltage_v,
        electrical_power_w=ms.electrical_power_w,
        mechanical_power_w=ms.mechanical_power_w,
        flags=frozen_array(flags, dtype=np.int64),
        motor_accel_rad_s2=ms.motor_accel_rad_s2,
        base_pitch_rad=frozen_array(base_q[:, 2]),
        base_velocity=frozen_array(base_v),
        base_accel=frozen_array(base_a),
        pieces=frozen_array(rs.pieces, dtype=int),
        plan_time_s=rs.plan_time_s,
    )


def translate(case: ReducedTrajectory, robot: Robot, *, rate_hz: float = 1000.0,
              leg_model: LegModel | None = None) -> JointTrajectory:
    """Joint-space targets of one case at ``rate_hz`` [Hz] (see the module docstring).

    Never raises for an unreachable or singular sample: such samples carry FLAG_* bits in
    ``flags`` and hold the closest reachable pose. Raises mapping.resample.ResampleError
    (a LegbridgeError, ValueError) for a case that cannot be resampled.
    """
    leg = leg_model if leg_model is not None else build_leg_model(robot)
    rs = resample_case(case, rate_hz, phase_ends=True)
    full = translate_resampled(rs, robot, leg, name=case.name, ground_height_m=case.ground_height_m, rate_hz=rate_hz)
    return full.split_phase_ends(rs.probe)


def translate_plan(plan: Plan, robot: Robot, *, rate_hz: float = 1000.0,
                   cases: tuple[str, ...] | list[str] | None = None,
                   leg_model: LegModel | None = None, gait=None) -> tuple[JointTrajectory, ...]:
    """translate() every case of a plan (or the named ``cases``, in that order); one LegModel per plan
    (``leg_model`` when given, e.g. a worker's cached one). A biped robot (robot.legs) goes through
    mapping.biped.translate_biped with ``gait`` (a mapping.gait.Gait, its text form, or None: the
    plan's metadata 'gait', else alternating legs, left first).

    An unknown case name raises LegbridgeError listing the plan's cases.
    """
    chosen = plan.cases if cases is None else tuple(plan.case(c) for c in cases)
    if robot.is_biped:
        from legbridge.robots.biped_model import cached_biped_model

        from .biped import translate_biped

        model = cached_biped_model(robot)
        g = resolve_gait(plan, gait)
        return tuple(translate_biped(c, robot, rate_hz=rate_hz, model=model, gait=g) for c in chosen)
    leg = leg_model if leg_model is not None else build_leg_model(robot)
    return tuple(translate(c, robot, rate_hz=rate_hz, leg_model=leg) for c in chosen)


def resolve_gait(plan: Plan, gait=None):
    """The gait to use: ``gait`` (a Gait or its text form), else the plan's metadata 'gait', else
    alternating legs, left first (mapping.gait)."""
    from .gait import Gait, parse_gait

    if isinstance(gait, Gait):
        return gait
    if gait is not None:
        return parse_gait(str(gait))
    meta = plan.metadata.get("gait") if isinstance(plan.metadata, dict) else None
    return parse_gait(str(meta)) if meta is not None else Gait()
