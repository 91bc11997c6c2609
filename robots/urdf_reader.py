"""URDF legs: a URDF file plus a robot TOML naming the sagittal chain and holding the actuator tables.

TOML layout (keys carry units; robots/library/spatial-leg.toml is a complete, invented example)::

    [robot]   name, knee, ground_friction, optional nominal_leg_length_m, foot_pitch_rad,
              optional body_mass_kg + body_pitch_inertia_kgm2 (both or neither; they replace the
              URDF's inertia of the links above the hip)
    [urdf]    file = "leg.urdf"            (relative to the TOML file)
              hip_link = "pelvis"          (the chain starts below this link)
              foot_link = "foot"           (the link holding the contact point)
              foot_offset_m = [x, y, z]    (contact point in foot_link's frame, default 0)
              leg_joints = ["hip_pitch", "knee"]   (optional: checked against the chain found)
              locked = { hip_yaw = 0.0, hip_roll = 0.05 }   (every other movable joint [rad or m])
    [joints.<urdf joint name>]  actuator keys (robots.actuator_reader), optional lower_rad,
              upper_rad, velocity_limit_rad_s, effort_limit_nm, spring keys

The chain is the path of joints from ``hip_link`` down to ``foot_link``, without fixed and locked
joints; it must hold 2 or 3 revolute joints about the +y axis (after locking) and every movable
joint that is not in it must be locked. URDF ``continuous`` joints (nq = 2 in Pinocchio) are
refused in the chain (declare them ``revolute`` with limits); they may be locked. Where the URDF
``<limit>`` and the TOML both bound a quantity, the tighter value wins: position limits become
the hard stops, velocity and effort the joint-side bounds of robots.actuator_limits.

Model: the locked URDF (``pin.buildReducedModel``) is re-rooted on the planar base of
robots.leg_model (``base_x`` PX, ``base_z`` PZ, ``base_pitch`` RY) at the body centre of mass; the
body is everything rigid with the URDF root once the other joints are locked (e.g. the other leg),
frames ``body``, ``hip`` (first chain joint) and ``foot`` (foot_link + offset) are added.
"""

from __future__ import annotations

import hashlib
import math
import xml.etree.ElementTree as ET
from dataclasses import dataclass
from pathlib import Path

import numpy as np
import pinocchio as pin

from .actuator_reader import read_actuator
from .errors import InputFileNotFound, RobotFileError
from .fields import Table
from .leg_model import FOOT_FRAME, HIP_FRAME, LegModel, index_model, planar_base
from .robot import KNEE_BRANCHES, Joint, Robot, UrdfSource

RESERVED_FRAMES = ("body", HIP_FRAME, FOOT_FRAME, "universe")
NOT_GIVEN = 1e300  # |limit| at or above this (Pinocchio fills unset limits with +-1.797e308 or inf)


@dataclass(frozen=True)
class UrdfTree:
    """The joint tree of a URDF file, read with the standard-library XML parser."""

    path: str
    text: str
    links: tuple[str, ...]
    joint_type: dict
    joint_parent: dict
    joint_child: dict
    root: str

    def joint_above(self, link: str) -> str | None:
        for j, c in self.joint_child.items():
            if c == link:
                return j
        return None


def parse_urdf(text: str, path: str) -> UrdfTree:
    """Read the link and joint tree of a URDF document; refuse what is not one."""
    try:
        root = ET.fromstring(text)
    except ET.ParseError as exc:
        raise RobotFileError(f"not valid XML ({exc})", path=path) from exc
    if root.tag != "robot":
        raise RobotFileError("not a URDF", path=path, expected="a <robot> root element", found=f"<{root.tag}>")
    links = tuple(el.get("name") for el in root.findall("link"))
    jtype, jparent, jchild = {}, {}, {}
    for el in root.findall("joint"):
        name = el.get("name")
        p, c = el.find("parent"), el.find("child")
        if name is None or p is None or c is None:
            raise RobotFileError("joint without name, parent or child", path=path, found=ET.tostring(el, encoding="unicode")[:80])
        jtype[name], jparent[name], jchild[name] = el.get("type"), p.get("link"), c.get("link")
    children = set(jchild.values())
    roots = [lk for lk in links if lk not in children]
    if len(roots) != 1:
        raise RobotFileError("URDF must be one tree", path=path, expected="exactly one root link", found=roots)
    return UrdfTree(path, text, links, jtype, jparent, jchild, roots[0])


@dataclass(frozen=True)
class UrdfLegInfo:
    """What building the model found: effective body inertia and the URDF's joint limits."""

    body_mass_kg: float
    body_pitch_inertia_kgm2: float
    hip_offset_m: tuple[float, float]
    urdf_limits: dict  # joint -> (lower, upper, velocity, effort), None where not given
    warnings: tuple[str, ...]


def _limit(value: float) -> float | None:
    v = float(value)
    return None if not math.isfinite(v) or abs(v) >= NOT_GIVEN else v


def _chain(tree: UrdfTree, hip_link: str, foot_link: str, locked: dict, toml_path: str) -> list[str]:
    for key, link in (("urdf.hip_link", hip_link), ("urdf.foot_link", foot_link)):
        if link not in tree.links:
            raise RobotFileError(f"no link '{link}' in {tree.path}", path=toml_path, key=key,
                                 hint=f"links: {list(tree.links)}")
    path_joints = []
    link = foot_link
    while link != hip_link:
        j = tree.joint_above(link)
        if j is None:
            raise RobotFileError(f"foot link '{foot_link}' is not below hip link '{hip_link}'", path=toml_path,
                                 key="urdf.foot_link")
        path_joints.append(j)
        link = tree.joint_parent[j]
    path_joints.reverse()
    return [j for j in path_joints if tree.joint_type[j] != "fixed" and j not in locked]


def _axis_local(jmodel) -> np.ndarray:
    short = jmodel.shortname()
    fixed_axes = {"JointModelRX": (1, 0, 0), "JointModelRY": (0, 1, 0), "JointModelRZ": (0, 0, 1)}
    if short in fixed_axes:
        return np.array(fixed_axes[short], dtype=float)
    if short == "JointModelRevoluteUnaligned":
        return np.array(jmodel.extract().axis, dtype=float)
    return None


def build_planar_from_urdf(src: UrdfSource, tree: UrdfTree, toml_path: str, ranges: dict | None = None):
    """Planar-base Pinocchio model of the locked URDF leg -> (LegModel, UrdfLegInfo).

    ranges: joint -> (lower_rad, upper_rad) stored as the model's configuration limits (default:
    the URDF's, or +-inf).
    """
    try:
        full = pin.buildModelFromXML(tree.text)
    except Exception as exc:  # Pinocchio raises plain RuntimeError / ValueError on bad URDF
        raise RobotFileError(f"Pinocchio could not read the URDF ({exc})", path=tree.path) from exc
    locked = dict(src.locked_joints)
    q_ref = pin.neutral(full)
    lock_ids = []
    for name, value in locked.items():
        jid = full.getJointId(name)
        jm = full.joints[jid]
        if jm.nq == 1:
            lo, hi = _limit(full.lowerPositionLimit[jm.idx_q]), _limit(full.upperPositionLimit[jm.idx_q])
            if (lo is not None and value < lo) or (hi is not None and value > hi):
                raise RobotFileError(path=toml_path, key=f"urdf.locked.{name}",
                                     expected=f"a value within the URDF limits [{lo:g}, {hi:g}]", found=value)
            q_ref[jm.idx_q] = value
        elif jm.nq == 2 and jm.nv == 1:  # continuous: (cos, sin)
            q_ref[jm.idx_q:jm.idx_q + 2] = (math.cos(value), math.sin(value))
        else:
            raise RobotFileError(f"joint '{name}' has {jm.nq} coordinates and cannot be locked by one value",
                                 path=toml_path, key=f"urdf.locked.{name}")
        lock_ids.append(jid)
    red = pin.buildReducedModel(full, lock_ids, q_ref) if lock_ids else full

    # URDF limits of the chain joints, by name (the order of the model follows the tree)
    urdf_limits = {}
    for name in src.leg_joints:
        jm = full.joints[full.getJointId(name)]
        urdf_limits[name] = (
            _limit(full.lowerPositionLimit[jm.idx_q]), _limit(full.upperPositionLimit[jm.idx_q]),
            _limit(full.velocityLimit[jm.idx_v]), _limit(full.effortLimit[jm.idx_v]),
        )

    # the chain after locking: a serial chain from the body, every axis along +y
    data = red.createData()
    pin.forwardKinematics(red, data, pin.neutral(red))
    ids = [red.getJointId(n) for n in src.leg_joints]
    if red.njoints - 1 != len(ids):
        extra = [n for n in list(red.names)[1:] if n not in src.leg_joints]
        raise RobotFileError("movable joints left outside the leg chain", path=toml_path, key="urdf.locked",
                             expected="a value for every joint not in the chain", found=extra)
    for k, (name, jid) in enumerate(zip(src.leg_joints, ids)):
        want_parent = 0 if k == 0 else ids[k - 1]
        if red.parents[jid] != want_parent:
            raise RobotFileError(f"joint '{name}' does not follow '{src.leg_joints[k - 1] if k else src.hip_link}' in the tree",
                                 path=tree.path)
        axis = _axis_local(red.joints[jid])
        world_axis = None if axis is None else data.oMi[jid].rotation @ axis
        if world_axis is None or not np.allclose(world_axis, (0.0, 1.0, 0.0), atol=1e-9):
            hint = ("the axis is -y: flip the joint axis to +y in the URDF (and negate its limits)"
                    if world_axis is not None and np.allclose(world_axis, (0.0, -1.0, 0.0), atol=1e-9)
                    else "lock it in [urdf] locked, or name the sagittal chain that is left")
            raise RobotFileError(f"joint '{name}' is not a pitch joint", path=tree.path, key=f"joint '{name}'",
                                 expected="a revolute joint about +y (after locking the other joints)",
                                 found=f"{red.joints[jid].shortname()} with world axis "
                                       f"{None if world_axis is None else np.round(world_axis, 6).tolist()}",
                                 hint=hint)
    foot_link_id = red.getFrameId(src.foot_frame, pin.FrameType.BODY)
    foot_link_frame = red.frames[foot_link_id]
    if foot_link_frame.parentJoint != ids[-1]:
        raise RobotFileError(f"foot link '{src.foot_frame}' does not move with the last chain joint '{src.leg_joints[-1]}'",
                             path=toml_path, key="urdf.foot_link")

    # body: everything rigid with the URDF root, re-expressed at its centre of mass
    body = red.inertias[0]
    warnings = []
    if src.body_mass_kg is not None:
        com = body.lever.copy() if body.mass > 0 else np.zeros(3)
        ib = src.body_pitch_inertia_kgm2
        body_new = pin.Inertia(src.body_mass_kg, np.zeros(3), np.diag([ib, ib, 1e-3 * ib]))
    else:
        if body.mass <= 0:
            raise RobotFileError(f"the links above the hip carry no mass in {tree.path}", path=toml_path, key="robot.body_mass_kg",
                                 hint="give robot.body_mass_kg and robot.body_pitch_inertia_kgm2")
        com = body.lever.copy()
        body_new = pin.Inertia(body.mass, np.zeros(3), body.inertia.copy())
    shift = pin.SE3(np.eye(3), -com)

    ident = pin.SE3.Identity()
    model, jp = planar_base(red.name, body_new)
    new_id = {0: jp}
    for k, (name, jid) in enumerate(zip(src.leg_joints, ids)):
        placement = red.jointPlacements[jid]
        if k == 0:
            placement = shift * placement
            model.addFrame(pin.Frame(HIP_FRAME, jp, placement, pin.FrameType.OP_FRAME))
        lo, hi = (ranges or {}).get(name, urdf_limits[name][:2])
        nid = model.addJoint(new_id[red.parents[jid]], red.joints[jid], placement, name,
                             max_effort=np.array([np.inf]), max_velocity=np.array([np.inf]),
                             min_config=np.array([-np.inf if lo is None else lo]),
                             max_config=np.array([np.inf if hi is None else hi]))
        model.appendBodyToJoint(nid, red.inertias[jid], ident)
        new_id[jid] = nid
    for f in red.frames:
        if f.type == pin.FrameType.BODY and f.name not in RESERVED_FRAMES and f.parentJoint in new_id:
            pl = shift * f.placement if f.parentJoint == 0 else f.placement
            model.addFrame(pin.Frame(f.name, new_id[f.parentJoint], pl, pin.FrameType.BODY))
    foot_pl = foot_link_frame.placement * pin.SE3(np.eye(3), np.array(src.foot_offset_m, dtype=float))
    model.addFrame(pin.Frame(FOOT_FRAME, new_id[ids[-1]], foot_pl, pin.FrameType.OP_FRAME))
    leg = index_model(model, tuple(src.leg_joints), FOOT_FRAME, HIP_FRAME)

    # zero pose: the project's convention is every segment hanging straight down; say so if the URDF differs
    d = model.createData()
    pin.framesForwardKinematics(model, d, pin.neutral(model))
    pts = np.array([d.oMi[model.getJointId(n)].translation for n in src.leg_joints] + [d.oMf[leg.foot_frame_id].translation])
    if np.max(np.abs(pts[:, 0] - pts[0, 0])) > 1e-6:
        warnings.append(f"{tree.path}: the leg does not hang straight down at zero joint angles; "
                        "joint angles follow the URDF's zero, not the hanging-straight convention")
    hip = d.oMf[leg.hip_frame_id].translation
    info = UrdfLegInfo(
        body_mass_kg=float(body_new.mass),
        body_pitch_inertia_kgm2=float(body_new.inertia[1, 1]),
        hip_offset_m=(float(hip[0]), float(hip[2])),
        urdf_limits=urdf_limits,
        warnings=tuple(warnings),
    )
    return leg, info


def _read_urdf_text(path: Path, toml_path: str) -> str:
    if not path.is_file():
        raise InputFileNotFound(f"URDF file not found: {path}", path=toml_path, key="urdf.file")
    try:
        return path.read_text(encoding="utf-8")
    except UnicodeDecodeError as exc:
        raise RobotFileError("not UTF-8 text", path=str(path)) from exc


def _tighter(a, b, pick):
    vals = [v for v in (a, b) if v is not None]
    return pick(vals) if vals else None


def _read_chain_joint(name: str, t: Table, urdf_lim: tuple, urdf_path: str, warnings: list) -> Joint:
    from .toml_reader import read_spring

    u_lo, u_hi, u_vel, u_eff = urdf_lim
    for label, v in (("velocity", u_vel), ("effort", u_eff)):
        if v is not None and v <= 0:
            warnings.append(f"{urdf_path}: joint '{name}': URDF {label} limit {v:g} treated as not given")
    u_vel = u_vel if u_vel is not None and u_vel > 0 else None
    u_eff = u_eff if u_eff is not None and u_eff > 0 else None
    lower = _tighter(t.number("lower_rad", None), u_lo, max)
    upper = _tighter(t.number("upper_rad", None), u_hi, min)
    if lower is None or upper is None:
        raise RobotFileError("missing key", path=t.path, key=t.key("lower_rad" if lower is None else "upper_rad"),
                             hint=f"the URDF gives no position limit for joint '{name}'")
    if lower >= upper:
        raise RobotFileError(f"empty joint range (TOML and URDF {urdf_path} limits combined)", path=t.path,
                             key=t.key("upper_rad"), expected=f"a value above lower_rad ({lower:g})", found=upper)
    toml_vel = t.number("velocity_limit_rad_s", None, positive=True)
    toml_eff = t.number("effort_limit_nm", None, positive=True)
    vel = _tighter(toml_vel, u_vel, min)
    eff = _tighter(toml_eff, u_eff, min)
    joint = Joint(
        name=name,
        lower_rad=lower,
        upper_rad=upper,
        actuator=read_actuator(t),
        spring=read_spring(t),
        velocity_limit_rad_s=vel,
        effort_limit_nm=eff,
        velocity_limit_source="robot file" if vel is not None and vel == toml_vel else "URDF",
        effort_limit_source="robot file" if eff is not None and eff == toml_eff else "URDF",
    )
    t.refuse_unknown()
    return joint


def _string_list(u: Table, key: str) -> tuple[str, ...] | None:
    val = u.raw(key, None)
    if val is None:
        return None
    if not isinstance(val, list) or not all(isinstance(v, str) for v in val):
        raise RobotFileError(path=u.path, key=u.key(key), expected="a list of joint names", found=val)
    return tuple(val)


def robot_from_urdf_toml(doc: dict, path: str, sha256: str) -> Robot:
    """Build a Robot from a parsed robot TOML that has a ``[urdf]`` section (layout in this module)."""
    top = Table(doc, path, "")
    r = top.table("robot")
    name = r.string("name")
    knee = r.string("knee", choices=KNEE_BRANCHES)
    mu = r.number("ground_friction", positive=True)
    l0 = r.number("nominal_leg_length_m", None, positive=True)
    foot_pitch = r.number("foot_pitch_rad", 0.0)
    body_mass = r.number("body_mass_kg", None, positive=True)
    body_inertia = r.number("body_pitch_inertia_kgm2", None, positive=True)
    if (body_mass is None) != (body_inertia is None):
        missing = "body_pitch_inertia_kgm2" if body_inertia is None else "body_mass_kg"
        raise RobotFileError("give both body keys or neither (then the URDF's links above the hip are the body)",
                             path=path, key=f"robot.{missing}")
    r.refuse_unknown()

    u = top.table("urdf")
    file_rel = u.string("file")
    hip_link = u.string("hip_link")
    foot_link = u.string("foot_link")
    offset = u.raw("foot_offset_m", [0.0, 0.0, 0.0])
    if (not isinstance(offset, list) or len(offset) != 3
            or not all(isinstance(v, (int, float)) and not isinstance(v, bool) and math.isfinite(v) for v in offset)):
        raise RobotFileError(path=path, key="urdf.foot_offset_m", expected="a list of 3 numbers [x, y, z] in metres", found=offset)
    leg_joints_given = _string_list(u, "leg_joints")
    lk = u.table("locked", {})
    locked = {jn: lk.number(jn) for jn in list(lk.data)}
    u.refuse_unknown()

    urdf_path = (Path(path).parent / file_rel).resolve()
    text = _read_urdf_text(urdf_path, path)
    tree = parse_urdf(text, str(urdf_path))
    for jn in locked:
        if jn not in tree.joint_type:
            raise RobotFileError(f"no joint '{jn}' in {urdf_path}", path=path, key=f"urdf.locked.{jn}",
                                 hint=f"joints: {sorted(tree.joint_type)}")
        if tree.joint_type[jn] in ("fixed", "floating", "planar"):
            raise RobotFileError(f"joint '{jn}' cannot be locked", path=path, key=f"urdf.locked.{jn}",
                                 expected="a revolute, continuous or prismatic joint", found=tree.joint_type[jn])
    chain = _chain(tree, hip_link, foot_link, locked, path)
    if leg_joints_given is not None and tuple(leg_joints_given) != tuple(chain):
        raise RobotFileError("leg_joints do not match the chain from hip_link to foot_link", path=path, key="urdf.leg_joints",
                             expected=str(chain), found=list(leg_joints_given))
    if not 2 <= len(chain) <= 3:
        raise RobotFileError(f"the chain from '{hip_link}' to '{foot_link}' has {len(chain)} unlocked joints",
                             path=path, key="urdf.locked", expected="2 or 3 pitch joints (lock the others)", found=chain)
    for jn in chain:
        jt = tree.joint_type[jn]
        if jt == "continuous":
            raise RobotFileError(f"joint '{jn}' is continuous (Pinocchio nq = 2)", path=str(urdf_path), key=f"joint '{jn}'",
                                 expected="a revolute joint with limits in the leg chain", found=jt,
                                 hint="declare it revolute with <limit lower upper>, or lock it")
        if jt != "revolute":
            raise RobotFileError(f"joint '{jn}' is not a pitch joint", path=str(urdf_path), key=f"joint '{jn}'",
                                 expected="a revolute joint about +y", found=jt)
    others = sorted(j for j, t in tree.joint_type.items() if t not in ("fixed",) and j not in chain and j not in locked)
    if others:
        raise RobotFileError("movable joints outside the leg chain must be locked", path=path, key="urdf.locked",
                             expected="a value for every joint not in the chain", found=others)

    src = UrdfSource(
        urdf_path=str(urdf_path), hip_link=hip_link, foot_frame=foot_link, leg_joints=tuple(chain),
        locked_joints=tuple(locked.items()), base_link=tree.root,
        foot_offset_m=tuple(float(v) for v in offset), body_mass_kg=body_mass, body_pitch_inertia_kgm2=body_inertia,
        sha256=hashlib.sha256(text.encode("utf-8")).hexdigest(),
    )
    _, info = build_planar_from_urdf(src, tree, path)

    jt = top.table("joints")
    unknown = [j for j in jt.data if j not in chain]
    if unknown:
        raise RobotFileError(f"joint table for '{unknown[0]}', which is not in the leg chain", path=path, key=f"joints.{unknown[0]}",
                             expected=f"tables for {chain}", found=list(jt.data))
    warnings = list(info.warnings)
    joints = []
    for jn in chain:
        if jn not in jt.data:
            raise RobotFileError("missing actuator table", path=path, key=f"joints.{jn}")
        jt.used.add(jn)
        joints.append(_read_chain_joint(jn, jt.table(jn), info.urdf_limits[jn], str(urdf_path), warnings))
    top.refuse_unknown()
    return Robot(
        name=name,
        body_mass_kg=info.body_mass_kg,
        body_pitch_inertia_kgm2=info.body_pitch_inertia_kgm2,
        knee=knee,
        ground_friction=mu,
        segments=(),
        joints=tuple(joints),
        source=path,
        sha256=sha256,
        hip_offset_m=info.hip_offset_m,
        nominal_leg_length_m=l0,
        foot_pitch_rad=foot_pitch,
        urdf=src,
        warnings=tuple(warnings) + tuple(w for j in joints for w in j.actuator.notes),
    )


def build_urdf_leg_model(robot: Robot) -> LegModel:
    """Pinocchio LegModel of a URDF-described robot (re-reads the URDF; refuses one changed since loading)."""
    src = robot.urdf
    text = _read_urdf_text(Path(src.urdf_path), robot.source)
    if src.sha256 and hashlib.sha256(text.encode("utf-8")).hexdigest() != src.sha256:
        raise RobotFileError("URDF changed since the robot was loaded; load the robot again", path=src.urdf_path)
    ranges = {j.name: (j.lower_rad, j.upper_rad) for j in robot.joints}
    leg, _ = build_planar_from_urdf(src, parse_urdf(text, src.urdf_path), robot.source, ranges)
    return leg
