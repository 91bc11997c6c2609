"""Export a loaded robot's sagittal leg (the Pinocchio LegModel) as a URDF document.

The URDF holds the body as the root link ``body`` (its inertia at the body centre of mass), one
revolute joint per leg joint with the model's placement, axis and inertia of the moved segment,
and a massless ``foot`` link on a fixed joint at the foot point. Locked joints of a URDF source are
already folded into the segments. Loading the export with a robot TOML whose ``[urdf]`` section says
``hip_link = "body"``, ``foot_link = "foot"`` and the same actuator tables gives the same model
(mass matrix, gravity torques and foot position; tests/robots/test_urdf_export.py).

``<limit>``: lower/upper are the joint's hard stops; effort and velocity are the joint's tightest
static bounds (robots.actuator_limits.max_joint_torque / max_joint_speed), since URDF requires them.
Numbers are written with 17 significant digits so they read back exactly.
"""

from __future__ import annotations

from xml.sax.saxutils import quoteattr

import numpy as np
import pinocchio as pin

from .actuator_limits import max_joint_speed, max_joint_torque
from .leg_model import BASE_JOINTS, LegModel, build_leg_model
from .robot import Robot

BODY_LINK = "body"
FOOT_LINK = "foot"


def _num(x: float) -> str:
    return repr(float(x)) if x != 0 else "0"


def _vec(v) -> str:
    return " ".join(_num(x) for x in np.asarray(v, dtype=float))


def _origin(placement: pin.SE3) -> str:
    rpy = pin.rpy.matrixToRpy(placement.rotation)
    return f'<origin xyz="{_vec(placement.translation)}" rpy="{_vec(rpy)}"/>'


def _inertial(inertia: pin.Inertia, indent: str) -> list[str]:
    if inertia.mass <= 0:
        return []
    i = inertia.inertia
    return [
        f"{indent}<inertial>",
        f'{indent}  <origin xyz="{_vec(inertia.lever)}" rpy="0 0 0"/>',
        f'{indent}  <mass value="{_num(inertia.mass)}"/>',
        f'{indent}  <inertia ixx="{_num(i[0, 0])}" ixy="{_num(i[0, 1])}" ixz="{_num(i[0, 2])}" '
        f'iyy="{_num(i[1, 1])}" iyz="{_num(i[1, 2])}" izz="{_num(i[2, 2])}"/>',
        f"{indent}</inertial>",
    ]


def _axis(jmodel) -> np.ndarray:
    from .urdf_reader import _axis_local

    axis = _axis_local(jmodel)
    if axis is None:  # index_model already refuses anything but one-coordinate joints
        raise ValueError(f"cannot export joint model {jmodel.shortname()}")
    return axis


def _link_names(leg: LegModel, robot: Robot) -> list[str]:
    """Child link name per leg joint: the segment name, or a BODY frame fixed at the joint origin."""
    model = leg.model
    names = []
    for k, jn in enumerate(leg.joint_names):
        jid = model.getJointId(jn)
        name = robot.segments[k].name if robot.segments else None
        if name is None:
            for f in model.frames:
                if f.type == pin.FrameType.BODY and f.parentJoint == jid and f.placement.isIdentity(1e-12):
                    name = f.name
                    break
        if name is None or name in (BODY_LINK, FOOT_LINK) or name in names:
            name = f"{jn}_link"
        names.append(name)
    return names


def export_urdf(robot: Robot, leg: LegModel | None = None) -> str:
    """The robot's leg model as URDF text (see module docstring for what it holds)."""
    leg = leg or build_leg_model(robot)
    model = leg.model
    base = model.getJointId(BASE_JOINTS[2])
    links = _link_names(leg, robot)
    lines = [
        '<?xml version="1.0"?>',
        f"<!-- Written by legbridge from robot {robot.name!r} ({robot.source}, sha256 {robot.sha256[:16]}). "
        "Sagittal leg only; locked joints are folded into the links. -->",
        f"<robot name={quoteattr(robot.name)}>",
        f"  <link name={quoteattr(BODY_LINK)}>",
        *_inertial(model.inertias[base], "    "),
        "  </link>",
    ]
    parent = BODY_LINK
    for k, jn in enumerate(leg.joint_names):
        jid = model.getJointId(jn)
        joint = robot.joint(jn)
        lines += [f"  <link name={quoteattr(links[k])}>", *_inertial(model.inertias[jid], "    "), "  </link>"]
        lines += [
            f'  <joint name={quoteattr(jn)} type="revolute">',
            f"    <parent link={quoteattr(parent)}/>",
            f"    <child link={quoteattr(links[k])}/>",
            f"    {_origin(model.jointPlacements[jid])}",
            f'    <axis xyz="{_vec(_axis(model.joints[jid]))}"/>',
            f'    <limit lower="{_num(joint.lower_rad)}" upper="{_num(joint.upper_rad)}" '
            f'effort="{_num(max_joint_torque(joint).value)}" velocity="{_num(max_joint_speed(joint).value)}"/>',
            "  </joint>",
        ]
        parent = links[k]
    foot = model.frames[leg.foot_frame_id]
    lines += [
        f"  <link name={quoteattr(FOOT_LINK)}/>",
        '  <joint name="foot_fixed" type="fixed">',
        f"    <parent link={quoteattr(parent)}/>",
        f"    <child link={quoteattr(FOOT_LINK)}/>",
        f"    {_origin(foot.placement)}",
        "  </joint>",
        "</robot>",
        "",
    ]
    return "\n".join(lines)
