"""translate_biped(): one reduced-order case -> joint-space targets for both legs of a biped.

A spring-mass plan has one leg. On a biped its stance phases go to the legs as the gait says
(mapping.gait: alternating, the same leg every time, or both together), and the leg that is not in
stance swings (mapping.swing: the plan's motion in its own stance and in the flight that ends in its
own touchdown, a generated swing before that). Each leg's joints follow its leg vector by the one-leg
inverse kinematics (mapping.translate.leg_joint_motion); the whole robot's dynamics are one RNEA per
sample on the two-leg model (robots.biped_model) with the plan's ground force on the stance foot (each
foot half of it when both are in stance), so the swing leg's inertia loads the body and the base
residual includes it. In flight no external wrench acts: the base moves as the free-floating
equations say given both legs' motion (mapping.free_flight).

The trajectory's joints are '<leg>_<joint>' (robots.robot.Robot.limb_joints); its ``jacobian`` is the
contact Jacobian of the total ground force, J = sum over stance legs of share_leg J_leg (share 1, or
1/2 each when both legs are in stance; zero in flight), so tau = tau_free - J^T F holds as for one
leg. The foot heights above the case's ground (for the swing clearance check) come from the base
motion and the leg vectors in closed form. A spring-mass plan's leg hangs from its body point, so its
body height is the hip's (z_body - l cos a = ground at touchdown); the base follows the plan's body
motion as the robot's centre of mass, which is h_z below the hip when level, so
z_foot = z_base - h_z - sin(p) (h_x + r_x) + cos(p) (h_z + r_z) (p: body pitch, h: hip offset from the
centre of mass, r: the leg's hip-to-foot vector in the body frame): 0 for a stance foot at pitch 0.
They are None when the plan gives no body height (the ground's place is then unknown).
"""

from __future__ import annotations

from dataclasses import replace

import numpy as np

from legbridge.robots.biped_model import BipedModel
from legbridge.robots.robot import Robot

from .dynamics import foot_force_local, inverse_dynamics_feet
from .gait import Gait, assign_legs
from .joint_trajectory import FLAG_NONFINITE, JointTrajectory
from .kinematics import leg_vector
from .motor_side import motor_side
from .plan import ReducedTrajectory, frozen_array
from .resample import resample_case
from .swing import LegChannel, leg_motions
from .translate import leg_joint_motion, whole_body_motion

DEFAULT_SWING_CLEARANCE_M = 0.05
"""Mid-swing foot clearance a generated swing aims at [m] (mapping.swing.span_shortening): a stated
choice, not a property of any robot, above the check's default minimum (limits.checks.results.
CheckSettings.min_swing_clearance_m) so that the free-floating base's difference from the plan's
body height leaves room; the swing clearance check judges the foot height that results."""


def translate_biped(case: ReducedTrajectory, robot: Robot, *, rate_hz: float, model: BipedModel, gait: Gait,
                    clearance_m: float = DEFAULT_SWING_CLEARANCE_M) -> JointTrajectory:
    """Joint-space targets of both legs for one case at ``rate_hz`` [Hz] (module docstring)."""
    rs = resample_case(case, rate_hz, phase_ends=True)
    n = rs.n_samples
    if gait.kind == "same-leg" and gait.held_leg_length_m is None:  # the held leg at the plan's median length
        gait = replace(gait, held_leg_length_m=float(np.median(rs.leg_length.value)))
    phases = assign_legs(np.asarray(rs.stance, dtype=bool), gait)
    ll = LegChannel(rs.leg_length.value, rs.leg_length.rate, rs.leg_length.accel)
    la = LegChannel(rs.leg_angle.value, rs.leg_angle.rate, rs.leg_angle.accel)
    hip_height = None
    if rs.body_z is not None:  # the hip above the case's ground: the plan's leg hangs from its body point
        hip_height = np.asarray(rs.body_z.value, dtype=float) - float(case.ground_height_m)
    motions = leg_motions(rs.time_s, ll, la, np.asarray(rs.stance, dtype=bool), phases, clearance_m,
                          hip_height_m=hip_height)

    legs = model.legs
    nj = model.leg.n_joints
    jm = {leg: leg_joint_motion(model.leg_model(leg), robot, motions[leg].length, motions[leg].angle) for leg in legs}
    q = np.hstack([jm[leg].q for leg in legs])
    qd = np.hstack([jm[leg].qd for leg in legs])
    qdd = np.hstack([jm[leg].qdd for leg in legs])
    flags = np.bitwise_or.reduce(np.stack([jm[leg].flags for leg in legs]), axis=0)

    # ground force: the plan's, on the stance foot (half on each when both are in stance)
    contact = np.column_stack([np.asarray(phases.contact[leg], dtype=bool) for leg in legs])
    stance = contact.any(axis=1)
    force = np.where(stance[:, None], np.column_stack([rs.force_x_n, rs.force_z_n]), 0.0)
    share = np.where(contact, 1.0 / np.maximum(contact.sum(axis=1, keepdims=True), 1), 0.0)  # (n, legs)

    (base_q, base_v, base_a), (qf, vf, af) = whole_body_motion(model, rs, robot, q, qd, qdd, force, stance)

    feet = [(model.foot_frame_ids[leg], foot_force_local(model, jm[leg].rot, force * share[:, k:k + 1],
                                                         frame_id=model.foot_frame_ids[leg]))
            for k, leg in enumerate(legs)]
    dyn = inverse_dynamics_feet(model, qf, vf, af, feet)
    tau = dyn.tau
    jac = np.zeros((n, 2, len(legs) * nj))
    for k, leg in enumerate(legs):
        jac[:, :, model.columns(leg)] = share[:, k, None, None] * jm[leg].jac
    tau_free = tau + np.einsum("nij,ni->nj", jac, force)
    ms = motor_side(robot, rs.time_s, q, qd, qdd, tau, stance, rs.pieces, rs.plan_time_s)

    finite = np.isfinite(q).all(1) & np.isfinite(qd).all(1) & np.isfinite(qdd).all(1) & np.isfinite(tau).all(1)
    finite &= np.isfinite(ms.current_a).all(1) & np.isfinite(ms.voltage_v).all(1)
    flags = flags | np.where(finite, 0, FLAG_NONFINITE)

    foot_height = None
    if rs.body_z is not None:
        hx, hz = robot.hip_offset_m
        pitch = base_q[:, 2]
        heights = []
        for leg in legs:
            r = leg_vector(motions[leg].length.value, motions[leg].angle.value)
            heights.append(base_q[:, 1] - hz - np.sin(pitch) * (hx + r[:, 0]) + np.cos(pitch) * (hz + r[:, 1])
                           - float(case.ground_height_m))
        foot_height = frozen_array(np.column_stack(heights))

    full = JointTrajectory(
        case=case.name, ground_height_m=float(case.ground_height_m), joint_names=tuple(model.joint_names),
        rate_hz=float(rate_hz), time_s=frozen_array(rs.time_s), stance=frozen_array(stance, dtype=bool),
        q=frozen_array(q), qd=frozen_array(qd), qdd=frozen_array(qdd), tau=frozen_array(tau),
        tau_free=frozen_array(tau_free), jacobian=frozen_array(jac), foot_force_n=frozen_array(force),
        base_residual=frozen_array(dyn.base_residual), motor_position_rad=ms.motor_position_rad,
        motor_speed_rad_s=ms.motor_speed_rad_s, motor_torque_nm=ms.motor_torque_nm, current_a=ms.current_a,
        voltage_v=ms.voltage_v, electrical_power_w=ms.electrical_power_w, mechanical_power_w=ms.mechanical_power_w,
        flags=frozen_array(flags, dtype=np.int64), motor_accel_rad_s2=ms.motor_accel_rad_s2,
        base_pitch_rad=frozen_array(base_q[:, 2]), base_velocity=frozen_array(base_v),
        base_accel=frozen_array(base_a), pieces=frozen_array(rs.pieces, dtype=int), plan_time_s=rs.plan_time_s,
        legs=tuple(legs), gait=gait.describe(), leg_contact=frozen_array(contact, dtype=bool),
        leg_generated=frozen_array(np.column_stack([motions[leg].generated for leg in legs]), dtype=bool),
        leg_swing_profile=frozen_array(np.column_stack([motions[leg].profile for leg in legs])),
        foot_height_m=foot_height,
    )
    return full.split_phase_ends(rs.probe)
