"""The Pinocchio model of a leg on a planar floating base.

Base: three joints from the world, ``base_x`` (PX), ``base_z`` (PZ), ``base_pitch`` (RY), so
q = v in size and the base coordinates are (x, z, pitch) of the body centre of mass. The body
inertia sits on ``base_pitch``. The hip joint is placed at ``hip_offset_m`` from the body centre
of mass; each leg joint is an RY joint, segment i hangs along -z from joint i, and the ``foot``
frame sits at the distal end of the last segment. Zero joint angles: the leg hangs straight down.
"""

from __future__ import annotations

from .reprs import short_repr
from legbridge.robots.errors import Described

from dataclasses import dataclass

import numpy as np
import pinocchio as pin

from .errors import RobotFileError
from .robot import STANDARD_GRAVITY_M_S2, Robot

BASE_JOINTS = ("base_x", "base_z", "base_pitch")
FOOT_FRAME = "foot"
HIP_FRAME = "hip"


@short_repr('joint_names', 'link_lengths_m')
@dataclass(frozen=True, eq=False)
class LegModel:
    """A Pinocchio model of one leg plus the indices needed to use it.

    joint_names: leg joints hip to foot; q_index / v_index: their entries in q and v
    base_q_index / base_v_index: (x, z, pitch) entries
    foot_frame_id, hip_frame_id: Pinocchio frame ids
    link_lengths_m: distances hip->knee, knee->(ankle->)foot in the zero pose, in the x-z plane [m]
    """

    model: pin.Model
    joint_names: tuple[str, ...]
    q_index: np.ndarray
    v_index: np.ndarray
    base_q_index: np.ndarray
    base_v_index: np.ndarray
    foot_frame_id: int
    hip_frame_id: int
    link_lengths_m: tuple[float, ...]

    @property
    def n_joints(self) -> int:
        return len(self.joint_names)

    @property
    def max_reach_m(self) -> float:
        return float(sum(self.link_lengths_m))

    def full_q(self, base_xzp, joint_q) -> np.ndarray:
        """Assemble one configuration vector from base (x, z, pitch) and leg joint angles."""
        q = pin.neutral(self.model)
        q[self.base_q_index] = base_xzp
        q[self.q_index] = joint_q
        return q


def _segment_inertia(mass: float, com: float, inertia: float) -> pin.Inertia:
    # Planar model: only the pitch (y) inertia matters; x gets the same value, z a small one, so the
    # 3-D inertia is physically valid (triangle inequality) and round-trips through URDF.
    return pin.Inertia(mass, np.array([0.0, 0.0, -com]), np.diag([inertia, inertia, 1e-3 * inertia]))


def index_model(model: pin.Model, leg_joints: tuple[str, ...], foot_frame: str, hip_frame: str) -> LegModel:
    """Wrap a Pinocchio model that has the base joints, the named leg joints and foot/hip frames."""
    def jid(name):
        if not model.existJointName(name):
            raise RobotFileError(f"model has no joint '{name}'", hint=f"joints: {list(model.names)[1:]}")
        return model.getJointId(name)

    for name in BASE_JOINTS + leg_joints:
        j = model.joints[jid(name)]
        if j.nq != 1 or j.nv != 1:
            raise RobotFileError(f"joint '{name}' must have one coordinate", expected="nq = nv = 1", found=Described(f"nq = {j.nq}"))
    q_index = np.array([model.joints[jid(n)].idx_q for n in leg_joints])
    v_index = np.array([model.joints[jid(n)].idx_v for n in leg_joints])
    bq = np.array([model.joints[jid(n)].idx_q for n in BASE_JOINTS])
    bv = np.array([model.joints[jid(n)].idx_v for n in BASE_JOINTS])
    foot_id = model.getFrameId(foot_frame, pin.FrameType.OP_FRAME)
    hip_id = model.getFrameId(hip_frame, pin.FrameType.OP_FRAME)
    data = model.createData()
    pin.framesForwardKinematics(model, data, pin.neutral(model))
    pts = [data.oMi[jid(n)].translation for n in leg_joints] + [data.oMf[foot_id].translation]
    # in the sagittal plane (x, z): a sideways (y) offset between joints is no reach
    lengths = tuple(float(np.hypot(b[0] - a[0], b[2] - a[2])) for a, b in zip(pts[:-1], pts[1:]))
    return LegModel(model, tuple(leg_joints), q_index, v_index, bq, bv, foot_id, hip_id, lengths)


def planar_base(name: str, body: pin.Inertia) -> tuple[pin.Model, int]:
    """A new model with the planar base (base_x PX, base_z PZ, base_pitch RY) carrying ``body``
    (inertia about the base origin, the body centre of mass) and a 'body' frame; returns (model, pitch joint id)."""
    model = pin.Model()
    model.name = name
    model.gravity = pin.Motion(np.array([0.0, 0.0, -STANDARD_GRAVITY_M_S2]), np.zeros(3))
    ident = pin.SE3.Identity()
    jx = model.addJoint(0, pin.JointModelPX(), ident, BASE_JOINTS[0])
    jz = model.addJoint(jx, pin.JointModelPZ(), ident, BASE_JOINTS[1])
    jp = model.addJoint(jz, pin.JointModelRY(), ident, BASE_JOINTS[2])
    model.appendBodyToJoint(jp, body, ident)
    model.addFrame(pin.Frame("body", jp, ident, pin.FrameType.BODY))
    return model, jp


def build_leg_model(robot: Robot) -> LegModel:
    """Pinocchio model of a robot described by segments (native TOML) or by a URDF."""
    if robot.urdf is not None:
        from .urdf_reader import build_urdf_leg_model

        return build_urdf_leg_model(robot)
    model, jp, hip_placement = native_body(robot)
    add_native_chain(model, jp, hip_placement, robot.segments, robot.joints)
    return index_model(model, robot.joint_names, FOOT_FRAME, HIP_FRAME)


def native_body(robot: Robot) -> tuple[pin.Model, int, pin.SE3]:
    """The planar base carrying a native robot's body, with the 'hip' frame: (model, pitch joint id,
    hip placement)."""
    i_body = robot.body_pitch_inertia_kgm2
    model, jp = planar_base(robot.name, pin.Inertia(robot.body_mass_kg, np.zeros(3), np.diag([i_body, i_body, 1e-3 * i_body])))
    hip_placement = pin.SE3(np.eye(3), np.array([robot.hip_offset_m[0], 0.0, robot.hip_offset_m[1]]))
    model.addFrame(pin.Frame(HIP_FRAME, jp, hip_placement, pin.FrameType.OP_FRAME))
    return model, jp, hip_placement


def add_native_chain(model: pin.Model, parent: int, placement: pin.SE3, segments, joints, prefix: str = "") -> int:
    """One leg of RY joints from ``parent`` at ``placement``: each segment hangs along -z from its joint,
    joints and segment frames named ``prefix`` + name, the foot frame ``prefix`` + 'foot' at the distal
    end; returns the foot frame's id."""
    ident = pin.SE3.Identity()
    for seg, joint in zip(segments, joints):
        j = model.addJoint(parent, pin.JointModelRY(), placement, prefix + joint.name,
                           max_effort=np.array([np.inf]), max_velocity=np.array([np.inf]),
                           min_config=np.array([joint.lower_rad]), max_config=np.array([joint.upper_rad]))
        model.appendBodyToJoint(j, _segment_inertia(seg.mass_kg, seg.com_m, seg.inertia_kgm2), ident)
        model.addFrame(pin.Frame(prefix + seg.name, j, ident, pin.FrameType.BODY))
        parent, placement = j, pin.SE3(np.eye(3), np.array([0.0, 0.0, -seg.length_m]))
    return model.addFrame(pin.Frame(prefix + FOOT_FRAME, parent, placement, pin.FrameType.OP_FRAME))


_CACHE: dict = {}


def cached_leg_model(robot: Robot) -> LegModel:
    """build_leg_model(robot), built once per process and robot (keyed by the robot's content, so a
    Robot built in code and one read from a file are told apart by what they hold)."""
    import hashlib
    import pickle

    key = hashlib.sha256(pickle.dumps(robot)).hexdigest()
    if key not in _CACHE:
        if len(_CACHE) >= 16:
            _CACHE.clear()
        _CACHE[key] = build_leg_model(robot)
    return _CACHE[key]
