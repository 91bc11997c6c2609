"""The Pinocchio model of a biped on a planar floating base: one body carrying both legs.

Base as for one leg (robots.leg_model): ``base_x`` (PX), ``base_z`` (PZ), ``base_pitch`` (RY), the
body inertia on ``base_pitch``. Both hips sit at the body's hip point (``hip_offset_m`` from the body
centre of mass; a sagittal model does not separate them sideways). Each leg is a copy of the robot's
one leg description: RY joints named ``<leg>_<joint>``, segments hanging along -z, frames
``<leg>_<segment>`` and ``<leg>_foot`` at the distal end. Zero joint angles: both legs hang straight
down.

The one-leg model (robots.leg_model.build_leg_model) still serves the inverse kinematics of each
leg: a leg's joint angles depend only on its hip-to-foot vector, the same for either leg.

A URDF biped (robot.urdf with leg_chains) is built by robots.urdf_reader.build_planar_biped_from_urdf:
the same base, the body (everything rigid with the URDF root once the other joints are locked) at its
centre of mass, both URDF chains with joints renamed '<leg>_<joint>' and their own URDF inertias,
frames '<leg>_foot' and 'hip' (the left chain's first joint, x and z). Its one-leg model is the left
chain's (robots.urdf_reader.build_urdf_leg_model).
"""

from __future__ import annotations

from .reprs import short_repr
from legbridge.robots.errors import Described

from dataclasses import dataclass

import numpy as np
import pinocchio as pin

from .errors import RobotFileError
from .leg_model import BASE_JOINTS, HIP_FRAME, LegModel, add_native_chain, build_leg_model, native_body
from .robot import Robot


@short_repr('legs', 'joint_names')
@dataclass(frozen=True, eq=False)
class BipedModel:
    """A Pinocchio model of both legs and the indices needed to use it.

    joint_names: every leg joint, leg after leg ('left_hip', 'left_knee', ..., 'right_...')
    q_index / v_index: their entries in q and v (the same order); base_q_index / base_v_index: (x, z, pitch)
    foot_frame_ids: leg -> frame id of its foot; hip_frame_id: the hip point's frame
    leg: the one-leg model of the left leg (inverse kinematics); leg_models: leg -> its one-leg model
        (the same object for both legs unless the robot file describes the right leg on its own)
    """

    model: pin.Model
    legs: tuple[str, ...]
    joint_names: tuple[str, ...]
    q_index: np.ndarray
    v_index: np.ndarray
    base_q_index: np.ndarray
    base_v_index: np.ndarray
    foot_frame_ids: dict
    hip_frame_id: int
    leg: LegModel
    leg_models: dict | None = None

    def leg_model(self, leg: str) -> LegModel:
        """The one-leg model of ``leg`` (its inverse kinematics)."""
        return (self.leg_models or {}).get(leg, self.leg)

    @property
    def n_joints(self) -> int:
        return len(self.joint_names)

    def columns(self, leg: str) -> slice:
        """The columns of ``leg``'s joints in joint-ordered arrays (n, n_joints)."""
        k = self.legs.index(leg)
        nj = self.leg.n_joints
        return slice(k * nj, (k + 1) * nj)


def build_biped_model(robot: Robot) -> BipedModel:
    """Pinocchio model of a biped: one native TOML leg used for both legs, or a URDF naming both chains."""
    if not robot.is_biped:
        raise RobotFileError(f"robot '{robot.name}' describes one leg", path=robot.source or None, key="robot.legs",
                             expected='["left", "right"] for a biped', found=list(robot.legs))
    if robot.urdf is not None:
        return _urdf_biped_model(robot)
    model, jp, hip_placement = native_body(robot)
    feet = {}
    for leg in robot.legs:
        segs, joints = robot.leg_description(leg)
        feet[leg] = add_native_chain(model, jp, hip_placement, segs, joints, prefix=f"{leg}_")
    names = tuple(robot.limb_joint_names)
    return _wrap(robot, model, names, feet, model.getFrameId(HIP_FRAME, pin.FrameType.OP_FRAME))


def _urdf_biped_model(robot: Robot) -> BipedModel:
    from .urdf_reader import build_urdf_biped_parts

    if not robot.urdf.leg_chains:
        raise RobotFileError("a URDF biped names both legs' chains", path=robot.source or None, key="urdf.legs",
                             expected="[urdf.legs.left] and [urdf.legs.right]", found=Described("one chain ([urdf] foot_link)"))
    parts = build_urdf_biped_parts(robot)
    if parts.joint_names != robot.limb_joint_names:  # the trajectory's order is the Robot's
        raise RobotFileError("the URDF biped model's joints are not the robot's", path=robot.source or None,
                             key="joints", expected=str(list(robot.limb_joint_names)), found=list(parts.joint_names))
    return _wrap(robot, parts.model, parts.joint_names, parts.foot_frame_ids, parts.hip_frame_id)


def _wrap(robot: Robot, model: pin.Model, names: tuple[str, ...], feet: dict, hip_frame_id: int) -> BipedModel:
    left = build_leg_model(robot.leg_robot("left") if robot.right_joints else robot)
    jid = [model.getJointId(n) for n in names]
    base = [model.getJointId(n) for n in BASE_JOINTS]
    return BipedModel(
        model=model, legs=tuple(robot.legs), joint_names=tuple(names),
        q_index=np.array([model.joints[i].idx_q for i in jid]), v_index=np.array([model.joints[i].idx_v for i in jid]),
        base_q_index=np.array([model.joints[i].idx_q for i in base]),
        base_v_index=np.array([model.joints[i].idx_v for i in base]),
        foot_frame_ids=feet, hip_frame_id=hip_frame_id,
        leg=left, leg_models={leg: (left if not robot.right_joints or leg == "left" else build_leg_model(robot.leg_robot(leg)))
                              for leg in robot.legs},
    )


_CACHE: dict = {}


def cached_biped_model(robot: Robot) -> BipedModel:
    """build_biped_model(robot), once per process and robot content."""
    import hashlib
    import pickle

    key = hashlib.sha256(pickle.dumps(robot)).hexdigest()
    if key not in _CACHE:
        if len(_CACHE) >= 16:
            _CACHE.clear()
        _CACHE[key] = build_biped_model(robot)
    return _CACHE[key]


def dynamics_model(robot: Robot):
    """The whole-robot model whose joints are the trajectory's: the two-leg model of a biped
    (cached_biped_model), else the one-leg model (robots.leg_model.cached_leg_model). Both carry
    .model, .q_index, .v_index, .base_q_index, .base_v_index."""
    if robot.is_biped:
        return cached_biped_model(robot)
    from .leg_model import cached_leg_model

    return cached_leg_model(robot)
