"""The native TOML leg description: planar serial legs with 2 or 3 pitch joints.

Layout (keys carry their unit; see robots/library/*.toml for complete, invented examples)::

    [robot]      name, body_mass_kg, body_pitch_inertia_kgm2, knee, ground_friction,
                 optional hip_offset_x_m, hip_offset_z_m, nominal_leg_length_m, foot_pitch_rad
    [[segments]] name, length_m, mass_kg, com_m, inertia_kgm2      (hip to foot, 2 or 3 of them)
    [joints.<name>]  lower_rad, upper_rad, actuator keys (robots.actuator_reader),
                 optional spring_stiffness_nm_per_rad, spring_damping_nms_per_rad

Joint i moves segment i; joint tables are matched to segments in file order. A file with a
``[urdf]`` section instead describes a URDF leg (layout in robots.urdf_reader).
"""

from __future__ import annotations
from legbridge.robots.errors import Described

import hashlib
import tomllib
from pathlib import Path

from .actuator_reader import read_actuator
from .errors import InputFileNotFound, RobotFileError
from .fields import Table
from .robot import KNEE_BRANCHES, Joint, Robot, Segment, Spring


# Frame names the leg model creates itself (robots.leg_model); a segment may not use them.
RESERVED_NAMES = ("body", "hip", "foot", "universe", "base_x", "base_z", "base_pitch")


MAX_ROBOT_FILE_BYTES = 50_000_000
"""A robot TOML or URDF larger than this is refused before it is read (a stripped URDF of a humanoid
is well under a megabyte)."""


def read_bytes(path: str | Path) -> bytes:
    """The bytes of an input file; InputFileNotFound when it does not exist."""
    p = Path(path)
    if p.is_dir():
        raise InputFileNotFound("this is a folder", path=str(p), expected="a robot file", found=Described("a folder"))
    if not p.is_file():
        raise InputFileNotFound("file not found", path=str(p))
    if p.stat().st_size > MAX_ROBOT_FILE_BYTES:
        raise RobotFileError("robot file too large", path=str(p), expected=f"at most {MAX_ROBOT_FILE_BYTES // 1_000_000} MB",
                             found=Described(f"{p.stat().st_size / 1e6:.1f} MB"))
    try:
        return p.read_bytes()
    except OSError as exc:
        raise InputFileNotFound(f"cannot read the file ({exc.strerror})", path=str(p)) from exc


def parse_toml(data: bytes, path: str) -> dict:
    """A parsed TOML document; RobotFileError naming the file for bad UTF-8 or TOML."""
    try:
        return tomllib.loads(data.decode("utf-8"))
    except UnicodeDecodeError as exc:
        raise RobotFileError("not UTF-8 text", path=path) from exc
    except tomllib.TOMLDecodeError as exc:
        raise RobotFileError(f"not valid TOML ({exc})", path=path) from exc
    except RecursionError as exc:
        raise RobotFileError("TOML nested too deeply", path=path, expected="tables a few levels deep",
                             found=Described("thousands of nested levels")) from exc


def read_spring(t: Table) -> Spring | None:
    """The series spring of a joint table, or None when it has none."""
    k = t.number("spring_stiffness_nm_per_rad", None, positive=True)
    c = t.number("spring_damping_nms_per_rad", None, nonneg=True)
    if k is None:
        if c is not None:
            raise RobotFileError("spring damping given without stiffness", path=t.path, key=t.key("spring_stiffness_nm_per_rad"))
        return None
    return Spring(stiffness_nm_per_rad=k, damping_nms_per_rad=c or 0.0)


def read_joint(name: str, t: Table) -> Joint:
    """One ``[joints.<name>]`` table: hard stops, actuator, optional spring and joint-side limits."""
    lower = t.number("lower_rad")
    upper = t.number("upper_rad")
    if lower >= upper:
        raise RobotFileError(path=t.path, key=t.key("upper_rad"), expected=f"a value above lower_rad ({lower:g})", found=upper)
    joint = Joint(
        name=name,
        lower_rad=lower,
        upper_rad=upper,
        actuator=read_actuator(t),
        spring=read_spring(t),
        velocity_limit_rad_s=t.number("velocity_limit_rad_s", None, positive=True),
        effort_limit_nm=t.number("effort_limit_nm", None, positive=True),
    )
    t.refuse_unknown()
    return joint


def read_segment(t: Table) -> Segment:
    """One ``[[segments]]`` table (lengths in m, mass in kg, inertia in kg m^2)."""
    seg = Segment(
        name=t.string("name"),
        length_m=t.number("length_m", positive=True),
        mass_kg=t.number("mass_kg", positive=True),
        com_m=t.number("com_m"),
        inertia_kgm2=t.number("inertia_kgm2", positive=True),
    )
    if not 0.0 <= seg.com_m <= seg.length_m:
        raise RobotFileError(path=t.path, key=t.key("com_m"), expected=f"a value in [0, length_m = {seg.length_m:g}]", found=seg.com_m)
    t.refuse_unknown()
    return seg


BIPED_LEGS = ("left", "right")


def read_legs(r, path: str) -> tuple[str, ...]:
    """``[robot] legs``: absent (one leg) or ["left", "right"] (a biped, both legs this description)."""
    if not r.has("legs"):
        return ()
    legs = r.raw("legs")
    if not (isinstance(legs, list) and tuple(legs) == BIPED_LEGS):
        raise RobotFileError(path=path, key=r.key("legs"), expected=f"{list(BIPED_LEGS)} (a biped) or no key (one leg)",
                             found=legs)
    return BIPED_LEGS


def read_leg(top: Table, path: str, prefix: str) -> tuple[tuple[Segment, ...], tuple[Joint, ...]]:
    """A leg description: ``[[segments]]`` and ``[joints]`` of ``top`` (the file, or its ``[right]``
    table, whose keys then start with ``prefix``)."""
    segs_raw = top.raw("segments")
    if not isinstance(segs_raw, list) or not 2 <= len(segs_raw) <= 3:
        raise RobotFileError(path=path, key=prefix + "segments", expected="2 or 3 [[segments]] tables (hip to foot)",
                             found=Described(f"{len(segs_raw) if isinstance(segs_raw, list) else type(segs_raw).__name__}"))
    segments = tuple(read_segment(Table(s, path, f"{prefix}segments[{i}]")) for i, s in enumerate(segs_raw))
    names = [s.name for s in segments]
    for i, n in enumerate(names):
        if n in RESERVED_NAMES:
            raise RobotFileError("segment name is taken by a model frame", path=path, key=f"{prefix}segments[{i}].name",
                                 expected=f"a name other than {list(RESERVED_NAMES)}", found=n)
    if len(set(names)) != len(names):
        raise RobotFileError(path=path, key=prefix + "segments", expected="unique segment names", found=names)
    jt = top.table("joints")
    if len(jt.data) != len(segments):
        raise RobotFileError(path=path, key=prefix + "joints", expected=f"{len(segments)} joint tables (one per segment)",
                             found=Described(f"{len(jt.data)} ({list(jt.data)})"))
    joints = []
    for jname in jt.data:
        jt.used.add(jname)
        joints.append(read_joint(jname, jt.table(jname)))
    if prefix:
        top.refuse_unknown()
    return segments, tuple(joints)


def robot_from_toml(doc: dict, path: str, sha256: str, *, extra_sections: tuple[str, ...] = ()) -> Robot:
    """Build a Robot from a parsed native TOML document (``[robot]``, ``[[segments]]``, ``[joints]``)."""
    top = Table(doc, path, "")
    r = top.table("robot")
    name = r.string("name")
    body_mass = r.number("body_mass_kg", positive=True)
    body_inertia = r.number("body_pitch_inertia_kgm2", positive=True)
    knee = r.string("knee", choices=KNEE_BRANCHES)
    mu = r.number("ground_friction", positive=True)
    hip = (r.number("hip_offset_x_m", 0.0), r.number("hip_offset_z_m", 0.0))
    l0 = r.number("nominal_leg_length_m", None, positive=True)
    foot_pitch = r.number("foot_pitch_rad", 0.0)
    legs = read_legs(r, path)
    r.refuse_unknown()

    segments, joints = read_leg(top, path, "")
    right_segments, right_joints = (), ()
    if top.has("right"):
        if not legs:
            raise RobotFileError("a [right] leg needs a biped", path=path, key="right",
                                 expected='legs = ["left", "right"] in [robot]', found=Described("one leg"))
        right_segments, right_joints = read_leg(top.table("right"), path, "right.")
        if tuple(j.name for j in right_joints) != tuple(j.name for j in joints):
            raise RobotFileError("the right leg's joints are not the left leg's", path=path, key="right.joints",
                                 expected=str([j.name for j in joints]), found=[j.name for j in right_joints])
    for sec in extra_sections:
        top.used.add(sec)
    top.refuse_unknown()
    return Robot(
        name=name,
        body_mass_kg=body_mass,
        body_pitch_inertia_kgm2=body_inertia,
        knee=knee,
        ground_friction=mu,
        segments=segments,
        joints=tuple(joints),
        source=path,
        sha256=sha256,
        hip_offset_m=hip,
        nominal_leg_length_m=l0,
        foot_pitch_rad=foot_pitch,
        warnings=tuple(w for j in joints + right_joints for w in j.actuator.notes),
        legs=legs,
        right_segments=right_segments,
        right_joints=right_joints,
    )


def load_robot(path: str | Path) -> Robot:
    """Load and validate a robot description file, or a bundled robot by name ('lab-biped-leg').

    A native TOML (``[[segments]]``), or a TOML with a ``[urdf]`` section naming a URDF file and
    its sagittal chain (robots.urdf_reader). A bare ``.urdf`` is refused: the actuator data live in
    the TOML.
    """
    from .library import resolve_robot

    path = resolve_robot(path)
    data = read_bytes(path)
    if str(path).lower().endswith(".urdf"):
        raise RobotFileError("a URDF alone does not describe the actuators", path=str(path),
                             hint="write a robot TOML with a [urdf] section naming this file and [joints.<name>] actuator tables")
    doc = parse_toml(data, str(path))
    sha = hashlib.sha256(data).hexdigest()
    if "urdf" in doc:
        from .urdf_reader import robot_from_urdf_toml

        return robot_from_urdf_toml(doc, str(path), sha)
    return robot_from_toml(doc, str(path), sha)
