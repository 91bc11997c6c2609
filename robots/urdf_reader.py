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

A URDF biped (``[robot] legs = ["left", "right"]``) names both sagittal chains instead of one::

    [urdf]    file, hip_link (the body: both chains start below it), locked (every movable joint
              outside both chains)
    [urdf.legs.left]    foot_link, optional foot_offset_m, optional leg_joints (as for one leg)
    [urdf.legs.right]   the same for the right leg
    [joints.<position>] one table per chain position, hip to foot (e.g. [joints.hip], [joints.knee]),
              used for both legs; the names are the Robot's joints, the biped's are '<leg>_<name>'

Both chains must have the same number of pitch joints and the same sagittal geometry (hips, joint
placements and foot points in x and z, zero pose, to ``SAME_GEOMETRY_M``; y offsets are allowed)
and the links each joint moves the same mass and pitch inertia about the joint (to
``SAME_INERTIA_REL`` relative): one leg description serves both legs (the one-leg model of the inverse
kinematics is the left chain's, with the right chain locked at 0). A joint's limits are the tighter
of its table's and both chains' URDF ``<limit>`` values. The two-leg model
(build_planar_biped_from_urdf) carries the body (everything rigid with the root: the chains
excluded) on the planar base, both chains with joints renamed '<leg>_<position>', their own URDF
inertias, frames '<leg>_foot' (foot link + offset) and 'hip' at the left chain's first joint (x, z).
"""

from __future__ import annotations
from legbridge.robots.errors import Described

import hashlib
import math
import xml.etree.ElementTree as ET
from dataclasses import dataclass, replace
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
SAME_GEOMETRY_M = 1e-6  # a biped's two chains: largest x or z difference of hips, joints and feet [m]
SAME_INERTIA_REL = 1e-9  # a biped's two chains: largest relative difference of link mass and pitch inertia [-]


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


def _check_inertial(link, path: str) -> None:
    """A link's <inertial> as physics: a finite mass >= 0 and a finite, positive semi-definite inertia
    tensor obeying the triangle inequality (each principal moment at most the sum of the other two;
    any rigid body's does), refused here with the link named before Pinocchio sees it."""
    inertial = link.find("inertial")
    if inertial is None:
        return
    name = link.get("name")
    mass_el = inertial.find("mass")
    try:
        mass = float(mass_el.get("value")) if mass_el is not None else 0.0
    except (TypeError, ValueError):
        mass = float("nan")
    if not (math.isfinite(mass) and 0.0 <= mass <= 1e6):
        raise RobotFileError(f"link '{name}' has no physical mass", path=path, key=f"link '{name}' <mass>",
                             expected="a finite mass >= 0 kg", found=mass_el.get("value") if mass_el is not None else None)
    el = inertial.find("inertia")
    if el is None:
        return
    try:
        vals = {k: float(el.get(k, "0")) for k in ("ixx", "ixy", "ixz", "iyy", "iyz", "izz")}
    except ValueError:
        vals = {"ixx": float("nan")}
    if not all(math.isfinite(v) and abs(v) <= 1e6 for v in vals.values()):
        raise RobotFileError(f"link '{name}' has no physical inertia", path=path, key=f"link '{name}' <inertia>",
                             expected="finite entries [kg m^2]", found=dict(el.attrib))
    tensor = np.array([[vals["ixx"], vals["ixy"], vals["ixz"]], [vals["ixy"], vals["iyy"], vals["iyz"]],
                       [vals["ixz"], vals["iyz"], vals["izz"]]])
    eig = np.linalg.eigvalsh(tensor)
    tol = 1e-9 * max(1.0, float(np.max(np.abs(eig))))
    if eig[0] < -tol or eig[2] > eig[0] + eig[1] + tol:
        raise RobotFileError(f"link '{name}' has an inertia no rigid body has", path=path, key=f"link '{name}' <inertia>",
                             expected="a positive semi-definite tensor whose principal moments obey the triangle inequality",
                             found=Described(f"principal moments {np.round(eig, 9).tolist()}"))


def parse_urdf(text: str, path: str) -> UrdfTree:
    """Read the link and joint tree of a URDF document; refuse what is not one."""
    try:
        root = ET.fromstring(text)
    except ET.ParseError as exc:
        raise RobotFileError(f"not valid XML ({exc})", path=path) from exc
    if root.tag != "robot":
        raise RobotFileError("not a URDF", path=path, expected="a <robot> root element", found=Described(f"<{root.tag}>"))
    links = tuple(el.get("name") for el in root.findall("link"))
    for el in root.findall("link"):
        _check_inertial(el, path)
    taken = ("universe", "base_x", "base_z", "base_pitch")  # names legbridge's model gives its own joints
    for kind, names in (("link", links), ("joint", tuple(el.get("name") for el in root.findall("joint")))):
        clash = [n for n in names if n in taken]
        if clash:
            raise RobotFileError(f"{kind} name taken by the model", path=path, key=f"{kind} '{clash[0]}'",
                                 expected=f"a name other than {list(taken)}", found=clash[0])
    jtype, jparent, jchild = {}, {}, {}
    for el in root.findall("joint"):
        name = el.get("name")
        p, c = el.find("parent"), el.find("child")
        if name is None or p is None or c is None:
            raise RobotFileError("joint without name, parent or child", path=path, found=ET.tostring(el, encoding="unicode")[:80])
        jtype[name], jparent[name], jchild[name] = el.get("type"), p.get("link"), c.get("link")
    children = set(jchild.values())
    twice = sorted({c for c in jchild.values() if list(jchild.values()).count(c) > 1}) if len(children) < len(jchild) else []
    if twice:
        raise RobotFileError("URDF must be one tree", path=path, expected="one parent joint per link",
                             found=Described(f"links with two parents: {twice[:5]}"))
    roots = [lk for lk in links if lk not in children]
    if len(roots) != 1:
        raise RobotFileError("URDF must be one tree", path=path, expected="exactly one root link", found=roots)
    # every link reached from the root once (breadth first, linear in the joints): no cycle, nothing apart
    below: dict = {}
    for j, parent in jparent.items():
        below.setdefault(parent, []).append(jchild[j])
    seen, frontier = {roots[0]}, [roots[0]]
    while frontier:
        frontier = [c for lk in frontier for c in below.get(lk, ()) if c not in seen and not seen.add(c)]
    missing = [lk for lk in links if lk not in seen]
    unknown = sorted({x for x in list(jparent.values()) + list(jchild.values()) if x not in set(links)})
    if missing or unknown:
        raise RobotFileError("URDF must be one tree", path=path, expected="every link below the root, joints between links",
                             found=Described(f"not reached from '{roots[0]}': {missing[:5]}") if missing else f"unknown links: {unknown[:5]}")
    return UrdfTree(path, text, links, jtype, jparent, jchild, roots[0])


@dataclass(frozen=True)
class UrdfLegInfo:
    """What building the model found: effective body inertia and the URDF's joint limits."""

    body_mass_kg: float
    body_pitch_inertia_kgm2: float
    hip_offset_m: tuple[float, float]
    urdf_limits: dict  # joint -> (lower, upper, velocity, effort), None where not given
    warnings: tuple[str, ...]
    leg_mass_kg: float = 0.0  # the chain's links (one leg) [kg]


def _limit(value: float) -> float | None:
    v = float(value)
    return None if not math.isfinite(v) or abs(v) >= NOT_GIVEN else v


def _chain(tree: UrdfTree, hip_link: str, foot_link: str, locked: dict, toml_path: str,
           prefix: str = "urdf") -> list[str]:
    for key, link in (("urdf.hip_link", hip_link), (f"{prefix}.foot_link", foot_link)):
        if link not in tree.links:
            raise RobotFileError(f"no link '{link}' in {tree.path}", path=toml_path, key=key,
                                 hint=f"links: {list(tree.links)}")
    path_joints = []
    link = foot_link
    while link != hip_link:
        j = tree.joint_above(link)
        if j is None:
            raise RobotFileError(f"foot link '{foot_link}' is not below hip link '{hip_link}'", path=toml_path,
                                 key=f"{prefix}.foot_link")
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


def _full_model(tree: UrdfTree) -> pin.Model:
    try:
        with _native_stderr_captured() as said:
            return pin.buildModelFromXML(tree.text)
    except Exception as exc:  # Pinocchio raises plain RuntimeError / ValueError on bad URDF
        first = next((ln.strip() for ln in said() if ln.strip()), "")
        detail = f"{exc}" + (f"; the URDF parser said: {first}" if first else "")
        raise RobotFileError(f"Pinocchio could not read the URDF ({detail})", path=tree.path) from exc


class _native_stderr_captured:
    """Capture what native code writes to file descriptor 2 (the URDF parser prints its complaints
    there, in several lines, before Pinocchio raises): the message then stays one line of ours.
    Entering yields a callable returning the captured lines."""

    def __enter__(self):
        import os
        import tempfile

        self._lines: list[str] = []
        try:
            self._saved = os.dup(2)
            self._tmp = tempfile.TemporaryFile()
            os.dup2(self._tmp.fileno(), 2)
        except OSError:
            self._saved = None
        return lambda: self._lines

    def __exit__(self, *exc):
        import os

        if self._saved is not None:
            os.dup2(self._saved, 2)
            os.close(self._saved)
            self._tmp.seek(0)
            self._lines = self._tmp.read(20000).decode("utf-8", "replace").splitlines()
            self._tmp.close()
        return False


def _reduced_model(full: pin.Model, locked: dict, toml_path: str) -> pin.Model:
    """The URDF model with the ``locked`` joints (name -> value) fixed at their values."""
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
    return pin.buildReducedModel(full, lock_ids, q_ref) if lock_ids else full


def _urdf_limits(full: pin.Model, names) -> dict:
    """joint -> (lower, upper, velocity, effort) from the URDF <limit>, None where not given."""
    out = {}
    for name in names:
        jm = full.joints[full.getJointId(name)]
        out[name] = (
            _limit(full.lowerPositionLimit[jm.idx_q]), _limit(full.upperPositionLimit[jm.idx_q]),
            _limit(full.velocityLimit[jm.idx_v]), _limit(full.effortLimit[jm.idx_v]),
        )
    return out


def _pitch_chain_ids(red: pin.Model, data, names, hip_link: str, tree: UrdfTree) -> list[int]:
    """Joint ids of a serial chain from the body whose every axis is +y in the locked zero pose
    (``data``: forward kinematics of ``red`` at its neutral configuration)."""
    ids = [red.getJointId(n) for n in names]
    for k, (name, jid) in enumerate(zip(names, ids)):
        want_parent = 0 if k == 0 else ids[k - 1]
        if red.parents[jid] != want_parent:
            raise RobotFileError(f"joint '{name}' does not follow '{names[k - 1] if k else hip_link}' in the tree",
                                 path=tree.path)
        axis = _axis_local(red.joints[jid])
        world_axis = None if axis is None else data.oMi[jid].rotation @ axis
        if world_axis is None or not np.allclose(world_axis, (0.0, 1.0, 0.0), atol=1e-9):
            hint = ("the axis is -y: flip the joint axis to +y in the URDF (and negate its limits)"
                    if world_axis is not None and np.allclose(world_axis, (0.0, -1.0, 0.0), atol=1e-9)
                    else "lock it in [urdf] locked, or name the sagittal chain that is left")
            raise RobotFileError(f"joint '{name}' is not a pitch joint", path=tree.path, key=f"joint '{name}'",
                                 expected="a revolute joint about +y (after locking the other joints)",
                                 found=Described(f"{red.joints[jid].shortname()} with world axis "
                                                 f"{None if world_axis is None else np.round(world_axis, 6).tolist()}"),
                                 hint=hint)
    return ids


def _foot_link_frame(red: pin.Model, foot_link: str, last_joint: str, last_id: int, toml_path: str, key: str) -> pin.Frame:
    frame = red.frames[red.getFrameId(foot_link, pin.FrameType.BODY)]
    if frame.parentJoint != last_id:
        raise RobotFileError(f"foot link '{foot_link}' does not move with the last chain joint '{last_joint}'",
                             path=toml_path, key=key)
    return frame


def _body_at_com(red: pin.Model, src: UrdfSource, tree: UrdfTree, toml_path: str, what: str = "the hip"):
    """(body inertia about its centre of mass, centre of mass in the root frame): everything rigid
    with the URDF root after locking, or the robot TOML's body values when given."""
    body = red.inertias[0]
    if src.body_mass_kg is not None:
        com = body.lever.copy() if body.mass > 0 else np.zeros(3)
        ib = src.body_pitch_inertia_kgm2
        return pin.Inertia(src.body_mass_kg, np.zeros(3), np.diag([ib, ib, 1e-3 * ib])), com
    if body.mass <= 0:
        raise RobotFileError(f"the links above {what} carry no mass in {tree.path}", path=toml_path, key="robot.body_mass_kg",
                             hint="give robot.body_mass_kg and robot.body_pitch_inertia_kgm2")
    return pin.Inertia(body.mass, np.zeros(3), body.inertia.copy()), body.lever.copy()


def _hangs_straight(points_x: np.ndarray) -> bool:
    return bool(np.max(np.abs(points_x - points_x[0])) <= 1e-6)


def build_planar_from_urdf(src: UrdfSource, tree: UrdfTree, toml_path: str, ranges: dict | None = None,
                           names: tuple[str, ...] | None = None):
    """Planar-base Pinocchio model of the locked URDF leg -> (LegModel, UrdfLegInfo).

    names: the chain joints' names in the model (default: their URDF names, src.leg_joints)
    ranges: joint (by its name in the model) -> (lower_rad, upper_rad) stored as the model's
    configuration limits (default: the URDF's, or +-inf).
    """
    full = _full_model(tree)
    red = _reduced_model(full, dict(src.locked_joints), toml_path)
    names = tuple(src.leg_joints) if names is None else tuple(names)
    urdf_limits = _urdf_limits(full, src.leg_joints)

    # the chain after locking: a serial chain from the body, every axis along +y
    data = red.createData()
    pin.forwardKinematics(red, data, pin.neutral(red))
    if red.njoints - 1 != len(src.leg_joints):
        extra = [n for n in list(red.names)[1:] if n not in src.leg_joints]
        raise RobotFileError("movable joints left outside the leg chain", path=toml_path, key="urdf.locked",
                             expected="a value for every joint not in the chain", found=extra)
    ids = _pitch_chain_ids(red, data, src.leg_joints, src.hip_link, tree)
    foot_link_frame = _foot_link_frame(red, src.foot_frame, src.leg_joints[-1], ids[-1], toml_path, "urdf.foot_link")

    # body: everything rigid with the URDF root, re-expressed at its centre of mass
    body_new, com = _body_at_com(red, src, tree, toml_path)
    shift = pin.SE3(np.eye(3), -com)
    warnings = []

    ident = pin.SE3.Identity()
    model, jp = planar_base(red.name, body_new)
    new_id = {0: jp}
    for k, (urdf_name, name, jid) in enumerate(zip(src.leg_joints, names, ids)):
        placement = red.jointPlacements[jid]
        if k == 0:
            placement = shift * placement
            model.addFrame(pin.Frame(HIP_FRAME, jp, placement, pin.FrameType.OP_FRAME))
        lo, hi = (ranges or {}).get(name, urdf_limits[urdf_name][:2])
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
    leg = index_model(model, names, FOOT_FRAME, HIP_FRAME)

    # zero pose: the project's convention is every segment hanging straight down; say so if the URDF differs
    d = model.createData()
    pin.framesForwardKinematics(model, d, pin.neutral(model))
    pts = np.array([d.oMi[model.getJointId(n)].translation for n in names] + [d.oMf[leg.foot_frame_id].translation])
    if not _hangs_straight(pts[:, 0]):
        warnings.append(f"{tree.path}: the leg does not hang straight down at zero joint angles; "
                        "joint angles follow the URDF's zero, not the hanging-straight convention")
    hip = d.oMf[leg.hip_frame_id].translation
    info = UrdfLegInfo(
        body_mass_kg=float(body_new.mass),
        body_pitch_inertia_kgm2=float(body_new.inertia[1, 1]),
        hip_offset_m=(float(hip[0]), float(hip[2])),
        urdf_limits=urdf_limits,
        warnings=tuple(warnings),
        leg_mass_kg=float(sum(red.inertias[j].mass for j in ids)),
    )
    return leg, info


@dataclass(frozen=True, eq=False)
class UrdfBipedParts:
    """The two-leg model of a URDF biped and what building it found.

    model: planar base carrying the body, both chains (joints '<leg>_<position>', leg after leg),
        frames '<leg>_foot' and 'hip'
    joint_names: the chain joints in model order; foot_frame_ids: leg -> frame id; hip_frame_id
    body_mass_kg, body_pitch_inertia_kgm2: the body without either chain (about its centre of mass)
    hip_offset_m: the left chain's first joint from the body centre of mass, (x, z) [m]
    urdf_limits: leg -> one (urdf joint, (lower, upper, velocity, effort)) per chain position
    """

    model: pin.Model
    joint_names: tuple[str, ...]
    foot_frame_ids: dict
    hip_frame_id: int
    body_mass_kg: float
    body_pitch_inertia_kgm2: float
    hip_offset_m: tuple[float, float]
    urdf_limits: dict
    warnings: tuple[str, ...]


def _differ(toml_path: str, leg: str, tree: UrdfTree, what: str) -> RobotFileError:
    return RobotFileError(f"two different leg descriptions are not supported yet: {what}", path=toml_path,
                          key=f"urdf.legs.{leg}",
                          hint=f"URDF {tree.path}; one leg description serves both legs of the sagittal model "
                               "(y offsets are allowed)")


def _xz(v) -> str:
    return f"({v[0]:.6g}, {v[1]:.6g})"


def build_planar_biped_from_urdf(src: UrdfSource, tree: UrdfTree, toml_path: str, positions: tuple[str, ...],
                                 ranges: dict | None = None) -> UrdfBipedParts:
    """Planar-base Pinocchio model of both chains of a URDF biped (module docstring), after checking
    that the chains are alike.

    positions: the Robot's joint names, one per chain position ('hip', 'knee'[, ...])
    ranges: position name -> (lower_rad, upper_rad) for both legs' configuration limits (default: each
    chain joint's URDF limits, or +-inf)
    """
    chains = {leg: tuple(joints) for leg, joints, _, _ in src.leg_chains}
    legs = tuple(chains)
    full = _full_model(tree)
    red = _reduced_model(full, dict(src.locked_joints), toml_path)
    all_chain = [n for leg in legs for n in chains[leg]]
    if red.njoints - 1 != len(all_chain):
        extra = [n for n in list(red.names)[1:] if n not in all_chain]
        raise RobotFileError("movable joints left outside the leg chains", path=toml_path, key="urdf.locked",
                             expected="a value for every joint not in either chain", found=extra)
    data = red.createData()
    pin.forwardKinematics(red, data, pin.neutral(red))
    ids = {leg: _pitch_chain_ids(red, data, chains[leg], src.hip_link, tree) for leg in legs}
    foot_frames = {leg: _foot_link_frame(red, foot, chains[leg][-1], ids[leg][-1], toml_path, f"urdf.legs.{leg}.foot_link")
                   for leg, _, foot, _ in src.leg_chains}
    limits = _urdf_limits(full, all_chain)

    body_new, com = _body_at_com(red, src, tree, toml_path, what="both chains")
    shift = pin.SE3(np.eye(3), -com)
    ident = pin.SE3.Identity()
    model, jp = planar_base(red.name, body_new)
    first = shift * red.jointPlacements[ids[legs[0]][0]]
    hip_pl = pin.SE3(np.eye(3), np.array([first.translation[0], 0.0, first.translation[2]]))
    hip_id = model.addFrame(pin.Frame(HIP_FRAME, jp, hip_pl, pin.FrameType.OP_FRAME))
    new_id = {0: jp}
    names = []
    for leg in legs:
        for k, (urdf_name, jid) in enumerate(zip(chains[leg], ids[leg])):
            placement = red.jointPlacements[jid]
            if k == 0:
                placement = shift * placement
            name = f"{leg}_{positions[k]}"
            lo, hi = (ranges or {}).get(positions[k], limits[urdf_name][:2])
            nid = model.addJoint(new_id[red.parents[jid]], red.joints[jid], placement, name,
                                 max_effort=np.array([np.inf]), max_velocity=np.array([np.inf]),
                                 min_config=np.array([-np.inf if lo is None else lo]),
                                 max_config=np.array([np.inf if hi is None else hi]))
            model.appendBodyToJoint(nid, red.inertias[jid], ident)
            new_id[jid] = nid
            names.append(name)
    reserved = RESERVED_FRAMES + tuple(f"{leg}_{FOOT_FRAME}" for leg in legs)
    for f in red.frames:
        if f.type == pin.FrameType.BODY and f.name not in reserved and f.parentJoint in new_id:
            pl = shift * f.placement if f.parentJoint == 0 else f.placement
            model.addFrame(pin.Frame(f.name, new_id[f.parentJoint], pl, pin.FrameType.BODY))
    feet = {}
    for leg, _, _, offset in src.leg_chains:
        pl = foot_frames[leg].placement * pin.SE3(np.eye(3), np.array(offset, dtype=float))
        feet[leg] = model.addFrame(pin.Frame(f"{leg}_{FOOT_FRAME}", new_id[ids[leg][-1]], pl, pin.FrameType.OP_FRAME))

    # the chains must be alike in the sagittal plane (zero pose): hips, joints, feet, link inertias
    d = model.createData()
    pin.framesForwardKinematics(model, d, pin.neutral(model))
    jids = {leg: [new_id[i] for i in ids[leg]] for leg in legs}
    pts = {leg: np.array([d.oMi[j].translation for j in jids[leg]] + [d.oMf[feet[leg]].translation])[:, [0, 2]]
           for leg in legs}
    a, b = legs
    if not np.allclose(pts[a][0], pts[b][0], rtol=0.0, atol=SAME_GEOMETRY_M):
        raise _differ(toml_path, b, tree, f"the hips (first chain joints '{chains[a][0]}', '{chains[b][0]}') are at "
                      f"(x, z) = {_xz(pts[a][0])} m and {_xz(pts[b][0])} m from the body centre of mass "
                      f"(tolerance {SAME_GEOMETRY_M:g} m)")
    labels = [f"joint '{positions[k]}' ('{chains[a][k]}' / '{chains[b][k]}')" for k in range(1, len(positions))]
    labels.append(f"foot point ('{foot_frames[a].name}' / '{foot_frames[b].name}' + foot_offset_m)")
    for k, label in enumerate(labels, start=1):
        ra, rb = pts[a][k] - pts[a][0], pts[b][k] - pts[b][0]
        if not np.allclose(ra, rb, rtol=0.0, atol=SAME_GEOMETRY_M):
            raise _differ(toml_path, b, tree, f"the {label} is at (x, z) = {_xz(ra)} m from the hip in the {a} chain "
                          f"and {_xz(rb)} m in the {b} chain (zero pose, tolerance {SAME_GEOMETRY_M:g} m)")
    warnings = []
    for k, pos in enumerate(positions):
        m, iyy, c = {}, {}, {}
        for leg in legs:
            j = jids[leg][k]
            world = d.oMi[j].act(model.inertias[j])          # about its centre of mass, world axes
            p = d.oMi[j].translation
            rel = world.lever - p
            m[leg] = float(world.mass)
            iyy[leg] = float(world.inertia[1, 1] + world.mass * (rel[0] ** 2 + rel[2] ** 2))  # about the joint axis
            c[leg] = rel[[0, 2]]
        for label, va, vb, unit in (("mass", m[a], m[b], "kg"), ("pitch inertia about the joint", iyy[a], iyy[b], "kg m^2")):
            if abs(va - vb) > SAME_INERTIA_REL * max(abs(va), abs(vb)):
                raise _differ(toml_path, b, tree, f"the links moved by joint '{pos}' ('{chains[a][k]}' / '{chains[b][k]}') "
                              f"have {label} {va:.9g} {unit} in the {a} chain and {vb:.9g} {unit} in the {b} chain "
                              f"(tolerance {SAME_INERTIA_REL:g} relative)")
        if m[a] > 0 and not np.allclose(c[a], c[b], rtol=0.0, atol=SAME_GEOMETRY_M):
            warnings.append(f"{tree.path}: the links moved by '{chains[a][k]}' and '{chains[b][k]}' have their centres of "
                            f"mass at (x, z) = {_xz(c[a])} m and {_xz(c[b])} m from the joint (same mass and pitch "
                            "inertia); the two-leg model uses each chain's own inertia")
    if not _hangs_straight(pts[a][:, 0]):
        warnings.append(f"{tree.path}: the legs do not hang straight down at zero joint angles; "
                        "joint angles follow the URDF's zero, not the hanging-straight convention")
    return UrdfBipedParts(
        model=model, joint_names=tuple(names), foot_frame_ids=feet, hip_frame_id=hip_id,
        body_mass_kg=float(body_new.mass), body_pitch_inertia_kgm2=float(body_new.inertia[1, 1]),
        hip_offset_m=(float(hip_pl.translation[0]), float(hip_pl.translation[2])),
        urdf_limits={leg: tuple((n, limits[n]) for n in chains[leg]) for leg in legs},
        warnings=tuple(warnings),
    )


def one_leg_source(src: UrdfSource, tree: UrdfTree) -> UrdfSource:
    """A biped's UrdfSource for the one-leg model of the left chain: every other chain locked at 0
    (at the nearer URDF limit when 0 is outside them; the pose does not change the left chain's
    kinematics)."""
    if not src.leg_chains:
        return src
    full = _full_model(tree)
    others = [n for _, joints, _, _ in src.leg_chains[1:] for n in joints]
    lim = _urdf_limits(full, others)
    extra = tuple((n, float(min(max(0.0, -np.inf if lim[n][0] is None else lim[n][0]),
                                np.inf if lim[n][1] is None else lim[n][1]))) for n in others)
    return replace(src, locked_joints=tuple(src.locked_joints) + extra)


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


def _read_chain_joint(name: str, t: Table, urdf_lim: tuple, urdf_path: str, warnings: list,
                      sources: dict | None = None) -> Joint:
    """One chain joint: its table's actuator and limits, the tighter of the table's and ``urdf_lim``.

    sources: for a biped, where each URDF limit came from ('lower', 'upper', 'velocity', 'effort' ->
    e.g. "URDF joint 'FR_HFE'"; 'joints' -> the URDF joints at this position), for messages and the
    Joint's *_source; None: one URDF joint, ``name``.
    """
    from .toml_reader import read_spring

    src = sources or {}
    u_lo, u_hi, u_vel, u_eff = urdf_lim
    for label, v in (("velocity", u_vel), ("effort", u_eff)):
        if v is not None and v <= 0:
            warnings.append(f"{urdf_path}: joint '{name}': URDF {label} limit {v:g} treated as not given")
    u_vel = u_vel if u_vel is not None and u_vel > 0 else None
    u_eff = u_eff if u_eff is not None and u_eff > 0 else None
    t_lo, t_hi = t.number("lower_rad", None), t.number("upper_rad", None)
    lower = _tighter(t_lo, u_lo, max)
    upper = _tighter(t_hi, u_hi, min)
    if lower is None or upper is None:
        raise RobotFileError("missing key", path=t.path, key=t.key("lower_rad" if lower is None else "upper_rad"),
                             hint=f"the URDF gives no position limit for {src.get('joints', f'joint {name!r}')}")
    if lower >= upper:
        detail = ""
        if sources is not None:
            lo_from = "the robot file" if lower == t_lo else src["lower"]
            hi_from = "the robot file" if upper == t_hi else src["upper"]
            detail = f": lower {lower:g} from {lo_from}, upper {upper:g} from {hi_from}"
        raise RobotFileError(f"empty joint range (TOML and URDF {urdf_path} limits combined{detail})", path=t.path,
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
        velocity_limit_source="robot file" if vel is not None and vel == toml_vel else src.get("velocity", "URDF"),
        effort_limit_source="robot file" if eff is not None and eff == toml_eff else src.get("effort", "URDF"),
    )
    t.refuse_unknown()
    return joint


def _combined_urdf_limits(named: tuple, urdf_path: str, warnings: list) -> tuple[tuple, dict]:
    """The tighter of several URDF joints' limits -> ((lower, upper, velocity, effort), sources):
    named: ((urdf joint, (lower, upper, velocity, effort)), ...); sources says which joint gave each."""
    def pick(k, best, keep=lambda v: True):
        vals = [(lim[k], jn) for jn, lim in named if lim[k] is not None and keep(lim[k])]
        if not vals:
            return None, None
        v = best(x for x, _ in vals)
        who = [jn for x, jn in vals if x == v]
        return v, ("URDF joint " if len(who) == 1 else "URDF joints ") + ", ".join(f"'{w}'" for w in who)

    for jn, lim in named:
        for label, v in (("velocity", lim[2]), ("effort", lim[3])):
            if v is not None and v <= 0:
                warnings.append(f"{urdf_path}: joint '{jn}': URDF {label} limit {v:g} treated as not given")
    (lo, lo_from), (hi, hi_from) = pick(0, max), pick(1, min)
    (vel, vel_from), (eff, eff_from) = pick(2, min, lambda v: v > 0), pick(3, min, lambda v: v > 0)
    sources = {"lower": lo_from, "upper": hi_from, "velocity": vel_from, "effort": eff_from,
               "joints": "joints " + " and ".join(f"'{jn}'" for jn, _ in named)}
    return (lo, hi, vel, eff), sources


def _string_list(u: Table, key: str) -> tuple[str, ...] | None:
    val = u.raw(key, None)
    if val is None:
        return None
    if not isinstance(val, list) or not all(isinstance(v, str) for v in val):
        raise RobotFileError(path=u.path, key=u.key(key), expected="a list of joint names", found=val)
    return tuple(val)


def _foot_offset(t: Table) -> tuple[float, float, float]:
    offset = t.raw("foot_offset_m", [0.0, 0.0, 0.0])
    if (not isinstance(offset, list) or len(offset) != 3
            or not all(isinstance(v, (int, float)) and not isinstance(v, bool) and math.isfinite(v) for v in offset)):
        raise RobotFileError(path=t.path, key=t.key("foot_offset_m"), expected="a list of 3 numbers [x, y, z] in metres",
                             found=offset)
    return tuple(float(v) for v in offset)


def _check_locked(tree: UrdfTree, locked: dict, path: str, urdf_path: Path) -> None:
    for jn in locked:
        if jn not in tree.joint_type:
            raise RobotFileError(f"no joint '{jn}' in {urdf_path}", path=path, key=f"urdf.locked.{jn}",
                                 hint=f"joints: {sorted(tree.joint_type)}")
        if tree.joint_type[jn] in ("fixed", "floating", "planar"):
            raise RobotFileError(f"joint '{jn}' cannot be locked", path=path, key=f"urdf.locked.{jn}",
                                 expected="a revolute, continuous or prismatic joint", found=tree.joint_type[jn])


def _checked_chain(tree: UrdfTree, hip_link: str, foot_link: str, locked: dict, given, path: str, urdf_path: Path,
                   prefix: str) -> list[str]:
    """The chain from hip_link to foot_link: checked against ``given`` leg_joints, 2 or 3 revolute joints."""
    chain = _chain(tree, hip_link, foot_link, locked, path, prefix)
    if given is not None and tuple(given) != tuple(chain):
        raise RobotFileError("leg_joints do not match the chain from hip_link to foot_link", path=path, key=f"{prefix}.leg_joints",
                             expected=str(chain), found=list(given))
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
    return chain


def robot_from_urdf_toml(doc: dict, path: str, sha256: str) -> Robot:
    """Build a Robot from a parsed robot TOML that has a ``[urdf]`` section (layout in this module)."""
    from .toml_reader import read_legs

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
    legs = read_legs(r, path)
    if legs and body_mass is not None:
        raise RobotFileError("body values are not supported for a URDF biped yet", path=path, key="robot.body_mass_kg",
                             expected="no body keys (the body is the URDF's links above both chains)", found=body_mass)
    r.refuse_unknown()
    common = dict(name=name, knee=knee, ground_friction=mu, source=path, sha256=sha256, nominal_leg_length_m=l0,
                  foot_pitch_rad=foot_pitch)

    u = top.table("urdf")
    if legs:
        return _biped_from_urdf_toml(top, u, path, legs, common)
    if u.has("legs"):
        raise RobotFileError("per-leg chains describe a biped", path=path, key="urdf.legs",
                             expected='[robot] legs = ["left", "right"] with [urdf.legs.left] and [urdf.legs.right], '
                                      "or foot_link in [urdf] for one leg",
                             found=Described("[urdf.legs] without [robot] legs"))
    file_rel = u.string("file")
    hip_link = u.string("hip_link")
    foot_link = u.string("foot_link")
    offset = _foot_offset(u)
    leg_joints_given = _string_list(u, "leg_joints")
    lk = u.table("locked", {})
    locked = {jn: lk.number(jn) for jn in list(lk.data)}
    u.refuse_unknown()

    urdf_path = (Path(path).parent / file_rel).resolve()
    text = _read_urdf_text(urdf_path, path)
    tree = parse_urdf(text, str(urdf_path))
    _check_locked(tree, locked, path, urdf_path)
    chain = _checked_chain(tree, hip_link, foot_link, locked, leg_joints_given, path, urdf_path, "urdf")
    others = sorted(j for j, t in tree.joint_type.items() if t not in ("fixed",) and j not in chain and j not in locked)
    if others:
        raise RobotFileError("movable joints outside the leg chain must be locked", path=path, key="urdf.locked",
                             expected="a value for every joint not in the chain", found=others)

    src = UrdfSource(
        urdf_path=str(urdf_path), hip_link=hip_link, foot_frame=foot_link, leg_joints=tuple(chain),
        locked_joints=tuple(locked.items()), base_link=tree.root,
        foot_offset_m=offset, body_mass_kg=body_mass, body_pitch_inertia_kgm2=body_inertia,
        sha256=hashlib.sha256(text.encode("utf-8")).hexdigest(),
    )
    _, info = build_planar_from_urdf(src, tree, path)
    src = replace(src, leg_mass_kg=info.leg_mass_kg)

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
        body_mass_kg=info.body_mass_kg,
        body_pitch_inertia_kgm2=info.body_pitch_inertia_kgm2,
        segments=(),
        joints=tuple(joints),
        hip_offset_m=info.hip_offset_m,
        urdf=src,
        warnings=tuple(warnings) + tuple(w for j in joints for w in j.actuator.notes),
        **common,
    )


def _biped_from_urdf_toml(top: Table, u: Table, path: str, legs: tuple[str, ...], common: dict) -> Robot:
    """The URDF biped branch of robot_from_urdf_toml: [urdf] with [urdf.legs.<leg>] chains."""
    file_rel = u.string("file")
    hip_link = u.string("hip_link")
    for key in ("foot_link", "foot_offset_m", "leg_joints"):
        if u.has(key):
            raise RobotFileError(f"a biped names its chains per leg: '{key}' goes in [urdf.legs.<leg>]", path=path,
                                 key=f"urdf.{key}", expected=f"[urdf.legs.{legs[0]}] and [urdf.legs.{legs[1]}] tables",
                                 found=Described(f"'{key}' in [urdf]"))
    lk = u.table("locked", {})
    locked = {jn: lk.number(jn) for jn in list(lk.data)}
    if not u.has("legs"):
        raise RobotFileError("missing key", path=path, key="urdf.legs",
                             expected=f"[urdf.legs.{legs[0]}] and [urdf.legs.{legs[1]}] tables (foot_link, optional "
                                      "foot_offset_m and leg_joints), one per leg",
                             found=Described("no [urdf.legs] tables"))
    lt = u.table("legs")
    given = {}
    for leg in legs:
        if not lt.has(leg):
            raise RobotFileError("missing leg chain", path=path, key=f"urdf.legs.{leg}",
                                 expected=f"a [urdf.legs.{leg}] table with foot_link (optional foot_offset_m, leg_joints)",
                                 found=Described(f"tables for {sorted(lt.data)}"))
        t = lt.table(leg)
        given[leg] = (t.string("foot_link"), _foot_offset(t), _string_list(t, "leg_joints"))
        t.refuse_unknown()
    lt.refuse_unknown()
    u.refuse_unknown()

    urdf_path = (Path(path).parent / file_rel).resolve()
    text = _read_urdf_text(urdf_path, path)
    tree = parse_urdf(text, str(urdf_path))
    _check_locked(tree, locked, path, urdf_path)
    chains = {leg: _checked_chain(tree, hip_link, given[leg][0], locked, given[leg][2], path, urdf_path, f"urdf.legs.{leg}")
              for leg in legs}
    a, b = legs
    shared = [j for j in chains[b] if j in chains[a]]
    if shared:
        raise RobotFileError("the two legs' chains share joints", path=path, key=f"urdf.legs.{b}.foot_link",
                             expected="two chains from hip_link with no joint in common", found=shared)
    if len(chains[a]) != len(chains[b]):
        raise RobotFileError(f"two different leg descriptions are not supported yet: the {a} chain has "
                             f"{len(chains[a])} pitch joints {chains[a]}, the {b} chain {len(chains[b])} {chains[b]}",
                             path=path, key=f"urdf.legs.{b}")
    in_chains = set(chains[a]) | set(chains[b])
    others = sorted(j for j, t in tree.joint_type.items() if t != "fixed" and j not in in_chains and j not in locked)
    if others:
        raise RobotFileError("movable joints outside the leg chains must be locked", path=path, key="urdf.locked",
                             expected="a value for every joint not in either chain", found=others)

    jt = top.table("joints")
    positions = tuple(jt.data)
    n = len(chains[a])
    if len(positions) != n:
        raise RobotFileError(path=path, key="joints",
                             expected=f"{n} joint tables named by chain position, hip to foot (e.g. [joints.hip], "
                                      "[joints.knee]), each used for both legs",
                             found=Described(f"{len(positions)} ({list(positions)})"))
    named_after_urdf = [p for p in positions if p in tree.joint_type]
    if named_after_urdf:
        raise RobotFileError("a biped's joint tables are named by chain position (one table for both legs), "
                             "not after a URDF joint", path=path, key=f"joints.{named_after_urdf[0]}",
                             expected="names of our own, e.g. 'hip', 'knee'", found=named_after_urdf[0])

    src = UrdfSource(
        urdf_path=str(urdf_path), hip_link=hip_link, foot_frame=given[a][0], leg_joints=tuple(chains[a]),
        locked_joints=tuple(locked.items()), base_link=tree.root, foot_offset_m=given[a][1],
        sha256=hashlib.sha256(text.encode("utf-8")).hexdigest(),
        leg_chains=tuple((leg, tuple(chains[leg]), given[leg][0], given[leg][1]) for leg in legs),
    )
    parts = build_planar_biped_from_urdf(src, tree, path, positions)
    _, one_info = build_planar_from_urdf(one_leg_source(src, tree), tree, path, names=positions)  # the one-leg model builds too
    src = replace(src, leg_mass_kg=one_info.leg_mass_kg)

    warnings = list(parts.warnings)
    joints = []
    for k, pos in enumerate(positions):
        jt.used.add(pos)
        lim, sources = _combined_urdf_limits(tuple(parts.urdf_limits[leg][k] for leg in legs), str(urdf_path), warnings)
        joints.append(_read_chain_joint(pos, jt.table(pos), lim, str(urdf_path), warnings, sources=sources))
    top.refuse_unknown()
    return Robot(
        body_mass_kg=parts.body_mass_kg,
        body_pitch_inertia_kgm2=parts.body_pitch_inertia_kgm2,
        segments=(),
        joints=tuple(joints),
        hip_offset_m=parts.hip_offset_m,
        urdf=src,
        warnings=tuple(warnings) + tuple(w for j in joints for w in j.actuator.notes),
        legs=legs,
        **common,
    )


def _checked_urdf(robot: Robot) -> UrdfTree:
    src = robot.urdf
    text = _read_urdf_text(Path(src.urdf_path), robot.source)
    if src.sha256 and hashlib.sha256(text.encode("utf-8")).hexdigest() != src.sha256:
        raise RobotFileError("URDF changed since the robot was loaded; load the robot again", path=src.urdf_path)
    return parse_urdf(text, src.urdf_path)


def build_urdf_leg_model(robot: Robot) -> LegModel:
    """Pinocchio LegModel of a URDF-described robot (re-reads the URDF; refuses one changed since loading).
    For a biped: the left chain's, joints named as the Robot's, the other chain locked (one_leg_source)."""
    tree = _checked_urdf(robot)
    ranges = {j.name: (j.lower_rad, j.upper_rad) for j in robot.joints}
    leg, _ = build_planar_from_urdf(one_leg_source(robot.urdf, tree), tree, robot.source, ranges, names=robot.joint_names)
    return leg


def build_urdf_biped_parts(robot: Robot) -> UrdfBipedParts:
    """The two-leg model of a URDF biped (re-reads the URDF; refuses one changed since loading)."""
    tree = _checked_urdf(robot)
    ranges = {j.name: (j.lower_rad, j.upper_rad) for j in robot.joints}
    return build_planar_biped_from_urdf(robot.urdf, tree, robot.source, robot.joint_names, ranges)
