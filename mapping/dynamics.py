"""Inverse dynamics of the leg on its planar floating base (pin.rnea), one call per sample.

The ground force acts at the foot point. Pinocchio's ``rnea(model, data, q, v, a, fext)`` takes each
external force in the *local frame of the joint it acts on* (a known pitfall of pin.rnea), so the world force
F at the foot is moved to the foot's parent joint: f_local = R^T F (R: the joint's world rotation)
and the moment about the joint origin m_local = p_local x f_local, with p_local the foot point in
that joint's frame (the foot frame's constant placement). rnea returns

    tau_rnea = M(q) a + C(q, v) v + g(q) - J_c^T F                         (J_c: full foot Jacobian)

so the leg torques change by exactly -J^T F (J: leg columns, x and z rows, LOCAL_WORLD_ALIGNED) and
``tau_free = tau + J^T F`` is the torque with the ground force removed, without a second rnea.
The base entries (x force [N], z force [N], pitch moment [N m]) of tau_rnea are the wrench the base
would need on top of what the leg gives: zero when the plan's body motion matches the model.
Segment inertia and gravity are included; gravity is the model's, (0, 0, -g) with g = robots.robot.STANDARD_GRAVITY_M_S2.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
import pinocchio as pin

from legbridge.robots.leg_model import LegModel


@dataclass(frozen=True, eq=False)
class DynamicsResult:
    """tau (n, j) leg joint torques [N m] with the ground force applied; base_residual (n, 3)."""

    tau: np.ndarray
    base_residual: np.ndarray


def rotation_y(pitch) -> np.ndarray:
    """Rotation matrices about +y for pitch angles (n,) -> (n, 3, 3)."""
    c, s = np.cos(pitch), np.sin(pitch)
    z, o = np.zeros_like(c), np.ones_like(c)
    return np.stack([np.stack([c, z, s], -1), np.stack([z, o, z], -1), np.stack([-s, z, c], -1)], -2)


def foot_force_local(leg: LegModel, joint_rotation: np.ndarray, force_xz: np.ndarray, frame_id: int | None = None) -> np.ndarray:
    """Spatial force (linear, angular) (n, 6) in the foot's parent-joint frame for world forces (n, 2) [N].

    joint_rotation (n, 3, 3): world orientation of the foot's parent joint.
    """
    f_world = np.zeros((force_xz.shape[0], 3))
    f_world[:, 0] = force_xz[:, 0]
    f_world[:, 2] = force_xz[:, 1]
    f_local = np.einsum("nji,nj->ni", joint_rotation, f_world)  # R^T F
    lever = leg.model.frames[leg.foot_frame_id if frame_id is None else frame_id].placement.translation
    m_local = np.cross(np.broadcast_to(lever, f_local.shape), f_local)
    return np.concatenate([f_local, m_local], axis=1)


def inverse_dynamics(leg: LegModel, q_full: np.ndarray, v_full: np.ndarray, a_full: np.ndarray,
                     force_local: np.ndarray) -> DynamicsResult:
    """One rnea per sample with the foot force applied, reusing one Data and one force vector.
    q_full, v_full, a_full (n, nq / nv): configurations, velocities, accelerations of the whole
    model (base x, z, pitch and the leg joints); force_local (n, 6) from ``foot_force_local``.
    """
    return inverse_dynamics_feet(leg, q_full, v_full, a_full, [(leg.foot_frame_id, force_local)])


def inverse_dynamics_feet(model_like, q_full: np.ndarray, v_full: np.ndarray, a_full: np.ndarray,
                          feet: list) -> DynamicsResult:
    """inverse_dynamics with a force at each of several feet: ``feet`` is a list of (frame id,
    force_local (n, 6) from ``foot_force_local`` for that frame); model_like has .model, .v_index and
    .base_v_index (a LegModel or a robots.biped_model.BipedModel)."""
    model = model_like.model
    data = model.createData()
    parents = [model.frames[fid].parentJoint for fid, _ in feet]
    if len(set(parents)) != len(parents):
        raise ValueError("two feet on one joint: give their forces as one")
    fext = pin.StdVec_Force()
    for _ in range(model.njoints):
        fext.append(pin.Force.Zero())
    n = q_full.shape[0]
    out = np.empty((n, model.nv))
    rnea = pin.rnea
    Force = pin.Force
    forces = [np.asarray(f, dtype=float) for _, f in feet]
    for i in range(n):
        for p, f in zip(parents, forces):
            fext[p] = Force(f[i])
        out[i] = rnea(model, data, q_full[i], v_full[i], a_full[i], fext)
    return DynamicsResult(out[:, model_like.v_index], out[:, model_like.base_v_index])
