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


def foot_force_local(leg: LegModel, joint_rotation: np.ndarray, force_xz: np.ndarray) -> np.ndarray:
    """Spatial force (linear, angular) (n, 6) in the foot's parent-joint frame for world forces (n, 2) [N].

    joint_rotation (n, 3, 3): world orientation of the foot's parent joint.
    """
    f_world = np.zeros((force_xz.shape[0], 3))
    f_world[:, 0] = force_xz[:, 0]
    f_world[:, 2] = force_xz[:, 1]
    f_local = np.einsum("nji,nj->ni", joint_rotation, f_world)  # R^T F
    lever = leg.model.frames[leg.foot_frame_id].placement.translation
    m_local = np.cross(np.broadcast_to(lever, f_local.shape), f_local)
    return np.concatenate([f_local, m_local], axis=1)


def inverse_dynamics(leg: LegModel, q_full: np.ndarray, v_full: np.ndarray, a_full: np.ndarray,
                     force_local: np.ndarray) -> DynamicsResult:
    """One rnea per sample with the foot force applied, reusing one Data and one force vector.

    q_full, v_full, a_full (n, nq / nv): configurations, velocities, accelerations of the whole
    model (base x, z, pitch and the leg joints); force_local (n, 6) from ``foot_force_local``.
    """
    model = leg.model
    data = model.createData()
    parent = model.frames[leg.foot_frame_id].parentJoint
    fext = pin.StdVec_Force()
    for _ in range(model.njoints):
        fext.append(pin.Force.Zero())
    n = q_full.shape[0]
    out = np.empty((n, model.nv))
    rnea = pin.rnea
    Force = pin.Force
    for i in range(n):
        fext[parent] = Force(force_local[i])
        out[i] = rnea(model, data, q_full[i], v_full[i], a_full[i], fext)
    return DynamicsResult(out[:, leg.v_index], out[:, leg.base_v_index])
