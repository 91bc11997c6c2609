"""A joint trajectory with its joint motion changed: what the nearest-motion correction would ask of
the hardware, so that it can be checked like the plan itself.

    with_joint_motion(traj, robot, q_new) -> JointTrajectory

Same time grid, ground force, phases and base state as ``traj``. The change dq = q_new - q enters the
rates by differences on the grid (the same differences the correction QP bounds): qd + (dq_k+1 -
dq_k-1) / 2 dt and qdd + (dq_k+1 - 2 dq_k + dq_k-1) / dt^2. Torques come from inverse dynamics
(pin.rnea, mapping.dynamics) on the floating base the trajectory carries (base pitch, velocity and
acceleration; the foot force in the frame of the new pose); a trajectory built by hand without a base
state takes the linearised change tau + M(q) (qdd_new - qdd) instead. The motor side is recomputed
(mapping.motor_side).
"""

from __future__ import annotations

from dataclasses import replace

import numpy as np
import pinocchio as pin

from legbridge.robots.leg_model import LegModel

from .dynamics import foot_force_local, inverse_dynamics_feet
from .motor_side import motor_side
from .plan import frozen_array


def grid_differences(dq: np.ndarray, dt: float) -> tuple[np.ndarray, np.ndarray]:
    """(first, second) central differences of dq (n, j) on a grid of step dt; the end samples repeat
    their neighbour's second difference and take one-sided first differences."""
    n = dq.shape[0]
    d1 = np.gradient(dq, dt, axis=0) if n >= 2 else np.zeros_like(dq)
    d2 = np.zeros_like(dq)
    if n >= 3:
        d2[1:-1] = (dq[2:] - 2.0 * dq[1:-1] + dq[:-2]) / (dt * dt)
        d2[0], d2[-1] = d2[1], d2[-2]
    return d1, d2


def joint_mass_matrices(leg: LegModel, q: np.ndarray, base_pitch=None) -> np.ndarray:
    """The leg's joint-space mass matrix M_jj(q) (n, j, j) [kg m^2] (pin.crba, one call per sample)."""
    model = leg.model
    data = model.createData()
    n, nj = q.shape
    out = np.empty((n, nj, nj))
    qf = pin.neutral(model)
    block = np.ix_(np.asarray(leg.v_index), np.asarray(leg.v_index))  # built once, not per sample
    q_index, pitch_index = np.asarray(leg.q_index), int(leg.base_q_index[2])
    crba = pin.crba
    for k in range(n):  # CRBA has no batched form
        qf[q_index] = q[k]
        if base_pitch is not None:
            qf[pitch_index] = base_pitch[k]
        out[k] = crba(model, data, qf)[block]
    return out


def with_joint_motion(traj, robot, q_new, leg_model: LegModel | None = None):
    """``traj`` with joint positions ``q_new`` (n, j) [rad] (see the module docstring)."""
    from legbridge.robots.biped_model import dynamics_model

    leg = leg_model if leg_model is not None else dynamics_model(robot)
    q_new = np.asarray(q_new, dtype=float)
    q0 = np.asarray(traj.q, dtype=float)
    dt = 1.0 / float(traj.rate_hz)
    d1, d2 = grid_differences(q_new - q0, dt)
    qd = np.asarray(traj.qd, dtype=float) + d1
    qdd = np.asarray(traj.qdd, dtype=float) + d2
    force = np.asarray(traj.foot_force_n, dtype=float)
    n = q_new.shape[0]
    if traj.base_accel is not None:
        model = leg.model
        data = model.createData()
        if getattr(traj, "legs", ()):  # a biped: each stance foot its share of the force
            contact = np.asarray(traj.leg_contact, dtype=bool)
            share = np.where(contact, 1.0 / np.maximum(contact.sum(axis=1, keepdims=True), 1), 0.0)
            feet = [(leg.foot_frame_ids[name], share[:, k:k + 1] * force) for k, name in enumerate(traj.legs)]
        else:
            feet = [(leg.foot_frame_id, force)]
        parents = [model.frames[fid].parentJoint for fid, _ in feet]
        qf = np.tile(pin.neutral(model), (n, 1))
        vf = np.zeros((n, model.nv))
        af = np.zeros((n, model.nv))
        qf[:, leg.base_q_index[2]] = traj.base_pitch_rad
        vf[:, leg.base_v_index] = traj.base_velocity
        af[:, leg.base_v_index] = traj.base_accel
        qf[:, leg.q_index], vf[:, leg.v_index], af[:, leg.v_index] = q_new, qd, qdd
        rot = np.empty((len(feet), n, 3, 3))
        for k in range(n):  # the foot forces' frames at the new pose
            pin.forwardKinematics(model, data, qf[k])
            for f, p in enumerate(parents):
                rot[f, k] = data.oMi[p].rotation
        dyn = inverse_dynamics_feet(leg, qf, vf, af, [(fid, foot_force_local(leg, rot[f], fw, frame_id=fid))
                                                      for f, (fid, fw) in enumerate(feet)])
        tau = dyn.tau
        residual = dyn.base_residual
    else:
        m = joint_mass_matrices(leg, q0)
        tau = np.asarray(traj.tau, dtype=float) + np.einsum("kij,kj->ki", m, d2)
        residual = np.asarray(traj.base_residual, dtype=float)
    tau_free = tau + np.einsum("nij,ni->nj", np.asarray(traj.jacobian, dtype=float), force)
    ms = motor_side(robot, traj.time_s, q_new, qd, qdd, tau, traj.stance, traj.pieces, traj.plan_time_s)
    return replace(traj, phase_ends=None, phase_end_index=None, q=frozen_array(q_new), qd=frozen_array(qd), qdd=frozen_array(qdd), tau=frozen_array(tau),
                   tau_free=frozen_array(tau_free), base_residual=frozen_array(residual),
                   motor_position_rad=ms.motor_position_rad, motor_speed_rad_s=ms.motor_speed_rad_s,
                   motor_torque_nm=ms.motor_torque_nm, current_a=ms.current_a, voltage_v=ms.voltage_v,
                   electrical_power_w=ms.electrical_power_w, mechanical_power_w=ms.mechanical_power_w,
                   motor_accel_rad_s2=ms.motor_accel_rad_s2)


__all__ = ["grid_differences", "joint_mass_matrices", "with_joint_motion"]
