"""The corrected robot file: the values identified from a hardware log written into a copy of the robot TOML.

The robot file's **text** is edited, line by line, never re-serialised: every comment, the key order,
the alignment and the line endings of the original stay as they were. For each changed key the value
on its line is replaced and ``# identified: was <old> (<log file name>)`` is appended after the line's
own comment; a key the table lacks (e.g. the housing keys of a one-node thermal model) is inserted
right after the table header. A comment block at the top names the log and its SHA-256, the
legbridge version, the UTC date and the original file and its SHA-256, then one line per changed
key (joints, table, key, old -> new, 95 % interval). ``[robot] name`` becomes ``"<old>-identified"``
(kept as it is when it already ends so) so that reviews show which file was used.

Which table a trajectory joint edits (robots.toml_reader, robots.urdf_reader):

* one leg: ``"knee"`` -> ``[joints.knee]`` (a URDF leg's tables are named after its URDF joints);
* a biped (``legs = ["left", "right"]``): ``"left_knee"`` and ``"right_knee"`` both -> ``[joints.knee]``
  (one description for both legs), unless the file has a ``[right]`` leg of its own, whose
  ``[right.joints.knee]`` then takes ``"right_knee"``. Bare position names (``"knee"``) are refused on a
  biped: they do not say which leg was identified.

When both legs map to one table and both have a change of one key, the value written is their
inverse-variance weighted mean, each variance from its 95 % interval: sigma = (ci_high - ci_low) / 2
/ 1.96; the written interval is mean +- 1.96 / sqrt(sum of weights), clipped to the key's bounds. The
applied change's note says so; when the two intervals do not overlap (the legs disagree beyond their
intervals) the mean is still written and ``CorrectedRobot.notes`` warns. A change of one leg alone
on a shared table changes the other leg too; the notes say so.

Motor-constant conventions. An identified torque constant is DC-equivalent (robots.robot.Actuator).
The file keeps its own convention: with ``r = Kt_identified / Kt_file`` (both DC-equivalent),

* ``torque_constant_nm_per_a`` (in ``current_convention``: dc, phase_peak, phase_rms) is written as the
  identified value converted back into that convention (robots.motor_constants: phase_rms Kt =
  sqrt(2) x the DC-equivalent one; dc and phase_peak are the DC-equivalent value itself), which is r
  times the file's value;
* a back-EMF constant (``back_emf_constant_v_s_per_rad`` or ``back_emf_constant_v_per_krpm``) is scaled by
  r and a speed constant (``speed_constant_rpm_per_v``) by 1 / r, in the file's ``back_emf_convention``:
  in SI units Kt and Ke are one constant of the motor (common practice), so a motor whose torque per
  ampere is r times the file's also has r times its back-EMF (Kv = 60 / (2 pi Ke) goes as 1 / r).
  Without a torque-constant key the back-EMF or speed constant alone carries Kt and is written as the
  identified value converted back into its convention and unit. A file whose Kt and Ke disagree keeps
  their ratio (and the loader's warning).

A URDF robot's ``[urdf] file`` is relative to the TOML; when the output lands in another folder the
path is rewritten relative to the new file (absolute where no relative path exists, e.g. another drive).

Refused before anything is written: an unknown joint or key, a value outside the reader's own bounds
(gearbox efficiency in [0.001, 1], positive thermal values and torque constant, magnitudes up to
robots.fields.MAX_MAGNITUDE), a value outside its own interval or without one (a held value), one housing
key without the other on a one-node table, a change identified against another file (its file value is
not the file's), an output that is the robot file, its URDF or the log (whatever ``force`` says), an
existing output without ``force`` (robots.files.check_outputs). The edited text is then checked before
it is written: parsed with tomllib it must equal the original document with exactly the intended
values changed, and the Robot built from it must hold the identified values (Kt to 1e-9 relative,
every other value exactly, values written as ``repr`` of the float: the shortest text that reads back
as the same float) and every other actuator value unchanged.
"""

from __future__ import annotations

import copy
import hashlib
import math
import os
import re
import tomllib
from dataclasses import dataclass, fields, replace
from datetime import datetime, timezone
from pathlib import Path

from legbridge.robots import motor_constants as mc
from legbridge.robots.errors import Described, InputFileNotFound, RobotFileError, UsageError
from legbridge.robots.fields import MAX_MAGNITUDE
from legbridge.robots.files import check_outputs, write_atomic
from legbridge.robots.library import resolve_robot
from legbridge.robots.robot import Actuator, Robot
from legbridge.robots.toml_reader import parse_toml, read_bytes, robot_from_toml

Z_95 = 1.96                      # two-sided 95 % normal quantile: sigma = CI half-width / 1.96
KT_RELATIVE_TOLERANCE = 1e-9     # Kt (and Ke) read back from the written file, relative to the identified value
FILE_VALUE_TOLERANCE = 1e-6      # a change's file_value vs the file's own value (relative)
NAME_SUFFIX = "-identified"
KT_KEY = "torque_constant_nm_per_a"
KE_KEYS = ("back_emf_constant_v_s_per_rad", "back_emf_constant_v_per_krpm", "speed_constant_rpm_per_v")


@dataclass(frozen=True)
class _KeySpec:
    unit: tuple[str, ...]        # accepted unit spellings
    lo: float                    # lower bound (exclusive when lo_open)
    lo_open: bool
    hi: float | None             # upper bound (inclusive)


# The keys identification may change, with the reader's own bounds (robots.actuator_reader).
KEYS: dict[str, _KeySpec] = {
    KT_KEY: _KeySpec(("N m/A",), 0.0, True, None),
    "gearbox_efficiency": _KeySpec(("-", ""), 1e-3, False, 1.0),
    "thermal_resistance_k_per_w": _KeySpec(("K/W",), 0.0, True, None),
    "thermal_time_constant_s": _KeySpec(("s",), 0.0, True, None),
    "housing_thermal_resistance_k_per_w": _KeySpec(("K/W",), 0.0, True, None),
    "housing_thermal_time_constant_s": _KeySpec(("s",), 0.0, True, None),
}
HOUSING_KEYS = ("housing_thermal_resistance_k_per_w", "housing_thermal_time_constant_s")


def actuator_value(act: Actuator, key: str) -> float | None:
    """The Actuator's value of a changeable key (Kt DC-equivalent; None for housing keys of a one-node model)."""
    th = act.thermal
    return {
        KT_KEY: act.torque_constant_nm_per_a,
        "gearbox_efficiency": act.gearbox_efficiency,
        "thermal_resistance_k_per_w": th.winding_resistance_k_per_w,
        "thermal_time_constant_s": th.winding_time_constant_s,
        "housing_thermal_resistance_k_per_w": th.housing_resistance_k_per_w,
        "housing_thermal_time_constant_s": th.housing_time_constant_s,
    }[key]


def _with_value(act: Actuator, key: str, value: float) -> Actuator:
    """``act`` with one key changed the way the written file changes it (Kt also scales Ke)."""
    if key == KT_KEY:
        ratio = value / act.torque_constant_nm_per_a
        return replace(act, torque_constant_nm_per_a=value, back_emf_v_s_per_rad=act.back_emf_v_s_per_rad * ratio)
    if key == "gearbox_efficiency":
        return replace(act, gearbox_efficiency=value)
    attr = {"thermal_resistance_k_per_w": "winding_resistance_k_per_w", "thermal_time_constant_s": "winding_time_constant_s",
            "housing_thermal_resistance_k_per_w": "housing_resistance_k_per_w",
            "housing_thermal_time_constant_s": "housing_time_constant_s"}[key]
    return replace(act, thermal=replace(act.thermal, **{attr: value}))


# --------------------------------------------------------------------------------------------------
# results


@dataclass(frozen=True)
class ParameterChange:
    """One identified value to write.

    joint: a trajectory joint name ('hip', 'knee' on one leg; 'left_knee', 'right_hip'... on a biped);
    key: one of KEYS; value and its 95 % interval [ci_low, ci_high] in ``unit`` (Kt DC-equivalent, as
    robots.robot.Actuator holds it); file_value: the robot file's value the identification started
    from (None: not checked, e.g. a key the file lacks); note: carried into the header line.
    """

    joint: str
    key: str
    value: float
    ci_low: float
    ci_high: float
    file_value: float | None
    unit: str
    note: str = ""


@dataclass(frozen=True)
class AppliedChange:
    """One key written into one table.

    joints: the trajectory joints whose changes made the value (two when both legs were combined);
    table: the TOML table ('joints.knee', 'right.joints.knee'); file_value: the file's value before
    (Kt DC-equivalent; None when the key was absent); value, ci_low, ci_high: what was written (Kt
    DC-equivalent); written: (TOML key, old text or '' when inserted, new text) of every line changed
    for it (a torque constant may change the back-EMF or speed constant line too).
    """

    joints: tuple[str, ...]
    table: str
    key: str
    file_value: float | None
    value: float
    ci_low: float
    ci_high: float
    unit: str
    written: tuple[tuple[str, str, str], ...]
    note: str = ""


@dataclass(frozen=True)
class CorrectedRobot:
    """The corrected robot file written: its path, the SHA-256 of its bytes (hex), the changes applied
    (one per table and key) and notes (legs combined, legs disagreeing, a shared table changed)."""

    path: Path
    sha256: str
    changes_applied: tuple[AppliedChange, ...]
    notes: tuple[str, ...]


# --------------------------------------------------------------------------------------------------
# TOML text: headers, key lines, strings

_BASIC = r'"(?:[^"\\\n]|\\.)*"'
_LITERAL = r"'[^'\n]*'"
_HEADER = re.compile(r"^[ \t]*\[(?P<name>(?:[^\]\[\"'#\n]|" + _BASIC + "|" + _LITERAL + r")+)\][ \t]*(?:#.*)?$")
_ARRAY_HEADER = re.compile(r"^[ \t]*\[\[.*\]\][ \t]*(?:#.*)?$")
_BARE = re.compile(r"[A-Za-z0-9_-]+")
_BASIC_RX = re.compile(_BASIC)
_LITERAL_RX = re.compile(_LITERAL)
_NUMBER_TOKEN = r"[^\s#,\]\}\"']+"
_STRING_TOKEN = _BASIC + "|" + _LITERAL


def _dotted(name: str) -> tuple[str, ...] | None:
    """The keys of a dotted TOML key ('joints.knee', 'right . "joints".knee'), or None when malformed."""
    parts: list[str] = []
    i, n = 0, len(name)
    while True:
        while i < n and name[i] in " \t":
            i += 1
        m = _BASIC_RX.match(name, i) or _LITERAL_RX.match(name, i) or _BARE.match(name, i)
        if not m:
            return None
        tok = m.group(0)
        if tok[0] in "\"'":
            try:
                tok = tomllib.loads(f"k = {tok}")["k"]
            except tomllib.TOMLDecodeError:
                return None
        parts.append(tok)
        i = m.end()
        while i < n and name[i] in " \t":
            i += 1
        if i == n:
            return tuple(parts)
        if name[i] != ".":
            return None
        i += 1


def _split_ending(line: str) -> tuple[str, str]:
    if line.endswith("\r\n"):
        return line[:-2], "\r\n"
    if line.endswith("\n"):
        return line[:-1], "\n"
    return line, ""


def _comment_safe(text: str) -> str:
    """Text fit for a TOML comment on one line: control characters and lone surrogates escaped."""
    out = []
    for c in str(text):
        o = ord(c)
        if c == "\t" or (o >= 0x20 and o != 0x7F and not 0xD800 <= o <= 0xDFFF):
            out.append(c)
        else:
            out.append(f"\\x{o:02x}" if o < 0x100 else f"\\u{o:04x}")
    return "".join(out)


def _toml_string(text: str, key: str, path: str) -> str:
    """``text`` as a TOML basic string."""
    out = ['"']
    for c in text:
        o = ord(c)
        if 0xD800 <= o <= 0xDFFF:
            raise RobotFileError("cannot be written as TOML text (not valid Unicode)", path=path, key=key,
                                 expected="a name or path of valid Unicode", found=Described(_comment_safe(text)))
        if c in '"\\':
            out.append("\\" + c)
        elif o < 0x20 or o == 0x7F:
            out.append(f"\\u{o:04x}")
        else:
            out.append(c)
    return "".join(out) + '"'


class _Text:
    """The robot file as lines (endings kept), edited in place."""

    def __init__(self, text: str, path: str) -> None:
        self.lines = text.splitlines(keepends=True)
        if self.lines and not self.lines[-1].endswith("\n"):
            self.lines[-1] += "\r\n" if "\r\n" in text else "\n"
        self.nl = "\r\n" if "\r\n" in text else "\n"
        self.path = path
        self.inserted: dict[tuple[str, ...], int] = {}

    def _header_of(self, line: str):
        body, _ = _split_ending(line)
        if _ARRAY_HEADER.match(body):
            return ()
        m = _HEADER.match(body)
        if not m:
            return None
        return _dotted(m["name"])

    def span(self, table: tuple[str, ...]) -> tuple[int, int]:
        """(header line, end line exclusive) of a ``[a.b.c]`` table; RobotFileError when not written so."""
        start = None
        for k, line in enumerate(self.lines):
            h = self._header_of(line)
            if h is None:
                continue
            if start is not None:
                return start, k
            if h == table:
                start = k
        if start is not None:
            return start, len(self.lines)
        name = ".".join(table)
        raise RobotFileError("table header not found", path=self.path, key=name, expected=f"a [{name}] table header line",
                             found=Described("the table written another way (inline or dotted keys)"),
                             hint="write the table with its own header line, or edit the file by hand")

    def find(self, table: tuple[str, ...], key: str, value_token: str):
        """(line index, match) of ``key = <value>`` in the table, or None when the key is not there."""
        k_alt = f"(?:{re.escape(key)}|\"{re.escape(key)}\"|'{re.escape(key)}')"
        rx = re.compile(rf"^(?P<lead>[ \t]*{k_alt}[ \t]*=[ \t]*)(?P<value>{value_token})(?P<rest>[ \t]*(?:#.*)?)$")
        loose = re.compile(rf"^[ \t]*{k_alt}[ \t]*=")
        start, end = self.span(table)
        for k in range(start + 1, end):
            body, _ = _split_ending(self.lines[k])
            m = rx.match(body)
            if m:
                return k, m
            if loose.match(body):
                raise RobotFileError("value written in a way this writer cannot edit", path=self.path,
                                     key=".".join(table + (key,)), expected="the value alone on its line (and a comment)",
                                     found=Described(body.strip()))
        return None

    def replace_value(self, table, key, value_token, new_token: str, note) -> str:
        """Replace the value on the key's line; append the comment ``note(old value text)`` after the line's
        own comment. Returns the old value text."""
        found = self.find(table, key, value_token)
        if found is None:
            raise RobotFileError("missing key", path=self.path, key=".".join(table + (key,)))
        k, m = found
        _, ending = _split_ending(self.lines[k])
        rest = m["rest"]
        comment = rest.lstrip(" \t")
        if comment:
            pad = max(1, len(m["value"]) + len(rest) - len(comment) - len(new_token))
            line = f"{m['lead']}{new_token}{' ' * pad}{comment}  {note(m['value'])}"
        else:
            line = f"{m['lead']}{new_token}  {note(m['value'])}"
        self.lines[k] = line + ending
        return m["value"]

    def insert_after_header(self, table, line: str) -> None:
        """Insert a line after the table's header (after the lines inserted there before, in order)."""
        start, _ = self.span(table)
        k = start + 1 + self.inserted.get(table, 0)
        self.lines.insert(k, line + self.nl)
        self.inserted[table] = self.inserted.get(table, 0) + 1

    def text(self, head: list[str]) -> str:
        return "".join(h + self.nl for h in head) + "".join(self.lines)


# --------------------------------------------------------------------------------------------------
# checks of the changes


def _number(x) -> float | None:
    if isinstance(x, bool):
        return None
    try:
        return float(x)
    except (TypeError, ValueError, OverflowError):
        return None


def _check_change(c: ParameterChange, path: str, toml_key: str) -> None:
    """Value, interval and unit of one change against the reader's bounds for its key."""
    spec = KEYS[c.key]
    v = _number(c.value)
    if v is None or not math.isfinite(v):
        raise RobotFileError(f"value for joint '{c.joint}' is not a finite number", path=path, key=toml_key,
                             expected="a finite number", found=c.value)
    low_ok = v > spec.lo if spec.lo_open else v >= spec.lo
    if not low_ok or (spec.hi is not None and v > spec.hi) or abs(v) > MAX_MAGNITUDE:
        lo_txt = f"{'(' if spec.lo_open else '['}{spec.lo:g}"
        hi_txt = f"{spec.hi:g}]" if spec.hi is not None else f"{MAX_MAGNITUDE:g}]"
        raise RobotFileError(f"identified value for joint '{c.joint}' is outside the robot file's bounds", path=path,
                             key=toml_key, expected=f"a value in {lo_txt}, {hi_txt}", found=v)
    lo, hi = _number(c.ci_low), _number(c.ci_high)
    if lo is None or hi is None or not (math.isfinite(lo) and math.isfinite(hi)) or not lo <= v <= hi:
        raise RobotFileError(f"joint '{c.joint}': no 95 % interval around the value", path=path, key=toml_key,
                             expected=f"finite ci_low <= value ({v:g}) <= ci_high",
                             found=Described(f"[{c.ci_low}, {c.ci_high}]"),
                             hint="a value held at the file's value (NaN interval) was not identified: leave it out")
    if c.unit not in spec.unit:
        raise RobotFileError(f"joint '{c.joint}': unit", path=path, key=toml_key,
                             expected=" or ".join(repr(u) for u in spec.unit), found=c.unit)


def _resolve_table(robot: Robot, doc: dict, joint: str, path: str) -> tuple[tuple[str, ...], Actuator, tuple[str, ...]]:
    """(TOML table keys, the table's Actuator, the trajectory joints that table describes) of a joint."""
    if not robot.legs:
        for j in robot.joints:
            if j.name == joint:
                return ("joints", joint), j.actuator, (joint,)
        valid = list(robot.joint_names)
    else:
        valid = list(robot.limb_joint_names)
        for leg in robot.legs:
            if isinstance(joint, str) and joint.startswith(leg + "_") and joint in valid:
                pos = joint[len(leg) + 1:]
                own_right = bool(robot.right_joints) and isinstance(doc.get("right"), dict)
                if leg == "right" and own_right:
                    act = next(j.actuator for j in robot.right_joints if j.name == pos)
                    return ("right", "joints", pos), act, (joint,)
                act = next(j.actuator for j in robot.joints if j.name == pos)
                shared = tuple(f"{lg}_{pos}" for lg in robot.legs if not (lg == "right" and own_right))
                return ("joints", pos), act, shared
    raise RobotFileError(f"robot '{robot.name}' has no joint '{joint}'", path=path, key=str(joint),
                         expected=f"one of {valid}", found=joint,
                         hint="a biped's joints are named '<leg>_<joint>'" if robot.legs else None)


def _combine(group: list[ParameterChange], spec: _KeySpec, where: str, path: str) -> tuple[float, float, float, str, str | None]:
    """Inverse-variance weighted mean of the changes of one key of one table: (value, ci_low, ci_high,
    note, warning or None)."""
    halves = [(float(c.ci_high) - float(c.ci_low)) / 2.0 for c in group]
    for c, h in zip(group, halves):
        if not h > 0.0:
            raise RobotFileError(f"joint '{c.joint}': an interval of zero width cannot be weighted against the other leg's",
                                 path=path, key=where, expected="a 95 % interval of positive width",
                                 found=Described(f"[{c.ci_low}, {c.ci_high}]"))
    weights = [1.0 / (h / Z_95) ** 2 for h in halves]
    total = sum(weights)
    value = sum(w * float(c.value) for w, c in zip(weights, group)) / total
    half = Z_95 / math.sqrt(total)
    lo = max(value - half, spec.lo)
    hi = value + half if spec.hi is None else min(value + half, spec.hi)
    names = " and ".join(f"{c.joint} ({float(c.value):.6g}, 95 % CI {float(c.ci_low):.6g} to {float(c.ci_high):.6g})"
                         for c in group)
    note = (f"inverse-variance weighted mean of {names}, sigma from the 95 % CI half-width / 1.96: "
            f"one table describes both legs")
    warning = None
    disjoint = any(a.ci_high < b.ci_low or b.ci_high < a.ci_low for i, a in enumerate(group) for b in group[i + 1:])
    if disjoint:
        warning = (f"[{where.rsplit('.', 1)[0]}] {group[0].key}: {names} disagree beyond their intervals; their weighted "
                   f"mean {value:.6g} is written for both legs (one table describes both): check the logs, or "
                   f"describe the right leg in a [right] table of its own")
    return value, lo, hi, note, warning


# --------------------------------------------------------------------------------------------------
# torque-constant conventions


def _kt_writes(td: dict, act: Actuator, new_eq: float) -> list[tuple[str, float]]:
    """(TOML key, value) lines that make the file's DC-equivalent Kt equal ``new_eq``, in the file's
    own conventions (module docstring)."""
    cur_conv = td.get("current_convention", "dc")
    emf_conv = td.get("back_emf_convention", "dc")
    ratio = new_eq / act.torque_constant_nm_per_a
    ke_keys = [k for k in KE_KEYS if k in td]
    out: list[tuple[str, float]] = []
    if KT_KEY in td:
        # inverse of robots.motor_constants.torque_constant_to_dc_equivalent
        out.append((KT_KEY, new_eq / float(mc.torque_constant_to_dc_equivalent(1.0, cur_conv))))
        for k in ke_keys:
            old = float(td[k])
            out.append((k, old / ratio if k == "speed_constant_rpm_per_v" else old * ratio))
    else:
        k = ke_keys[0]
        ke_si = new_eq / float(mc.back_emf_to_dc_equivalent(1.0, emf_conv))   # inverse of back_emf_to_dc_equivalent
        if k == "back_emf_constant_v_s_per_rad":
            val = ke_si
        elif k == "back_emf_constant_v_per_krpm":
            val = ke_si / float(mc.v_per_krpm_to_v_s_per_rad(1.0))
        else:
            val = float(mc.rpm_per_v_to_v_s_per_rad(ke_si))   # Kv = 60 / (2 pi Ke): the map is its own inverse
        out.append((k, val))
    return out


# --------------------------------------------------------------------------------------------------
# the corrected file


def _sha256_file(path: Path) -> str:
    if not path.is_file():
        raise InputFileNotFound("hardware log not found", path=str(path), expected="the log the values were identified from",
                                found=Described("nothing"))
    with open(path, "rb") as fh:
        return hashlib.file_digest(fh, "sha256").hexdigest()


def _set(doc: dict, keys: tuple[str, ...], value) -> None:
    for k in keys[:-1]:
        doc = doc[k]
    doc[keys[-1]] = value


def _first_difference(a, b, prefix: str = "") -> str:
    if isinstance(a, dict) and isinstance(b, dict):
        for k in list(a) + [k for k in b if k not in a]:
            if k not in a or k not in b:
                return f"{prefix}{k}"
            if a[k] != b[k]:
                return _first_difference(a[k], b[k], f"{prefix}{k}.")
    if isinstance(a, list) and isinstance(b, list) and len(a) == len(b):
        for i, (x, y) in enumerate(zip(a, b)):
            if x != y:
                return _first_difference(x, y, f"{prefix}[{i}].")
    return prefix.rstrip(".") or "top level"


def _bare_actuator(act: Actuator) -> Actuator:
    return replace(act, notes=())


def _actuators_match(got: Actuator, want: Actuator) -> str | None:
    """The first field where ``got`` differs from ``want`` (Kt and Ke relative 1e-9, the rest exactly), or None."""
    for f in fields(Actuator):
        if f.name == "notes":
            continue
        g, w = getattr(got, f.name), getattr(want, f.name)
        if f.name in ("torque_constant_nm_per_a", "back_emf_v_s_per_rad"):
            if not math.isclose(g, w, rel_tol=KT_RELATIVE_TOLERANCE, abs_tol=0.0):
                return f.name
        elif g != w:
            return f.name
    return None


def write_corrected_robot(robot_path, changes, *, log_path, log_sha256: str, out_path, force: bool = False,
                          tool_version: str = "") -> CorrectedRobot:
    """Write a copy of the robot file ``robot_path`` with the identified ``changes`` (ParameterChange)
    to ``out_path`` (layout, conventions and refusals in the module docstring).

    log_path, log_sha256: the hardware log the values come from (the hash is checked against the file
    and written in the header); tool_version: the legbridge version to name (default: the installed one).
    Returns the CorrectedRobot written. The original file is never touched.
    """
    robot_path = resolve_robot(robot_path)
    out_path = Path(out_path)
    log_path = Path(log_path)
    path = str(robot_path)
    check_outputs([out_path], inputs=[robot_path, log_path], force=force)

    sha_given = str(log_sha256).strip().lower()
    if not re.fullmatch(r"[0-9a-f]{64}", sha_given):
        raise UsageError("not a SHA-256", key="log_sha256", expected="64 hexadecimal digits", found=log_sha256)
    sha_log = _sha256_file(log_path)
    if sha_log != sha_given:
        raise UsageError("the hardware log is not the one the values were identified from", path=str(log_path),
                         key="log_sha256", expected=sha_log, found=sha_given,
                         hint="identify again from this log, or name the log that was used")

    data = read_bytes(robot_path)
    doc = parse_toml(data, path)
    robot_sha = hashlib.sha256(data).hexdigest()
    robot = _load(doc, path, robot_sha)
    text = data.decode("utf-8")

    changes = list(changes)
    if not changes:
        raise UsageError("nothing to write", key="changes", expected="at least one ParameterChange", found=Described("none"))

    # changes -> (table, key) groups
    groups: dict[tuple[tuple[str, ...], str], list[ParameterChange]] = {}
    tables: dict[tuple[str, ...], tuple[Actuator, tuple[str, ...]]] = {}
    for c in changes:
        if not isinstance(c, ParameterChange):
            raise UsageError("not a ParameterChange", key="changes", expected="ParameterChange values",
                             found=Described(type(c).__name__))
        table, act, shared = _resolve_table(robot, doc, c.joint, path)
        if c.key not in KEYS:
            raise RobotFileError(f"joint '{c.joint}': not a key identification changes", path=path,
                                 key=".".join(table + (str(c.key),)), expected=f"one of {list(KEYS)}", found=c.key)
        toml_key = ".".join(table + (c.key,))
        _check_change(c, path, toml_key)
        group = groups.setdefault((table, c.key), [])
        if any(g.joint == c.joint for g in group):
            raise UsageError(f"two changes of one key of joint '{c.joint}'", path=path, key=toml_key,
                             expected="one change per joint and key", found=Described("two"))
        group.append(c)
        tables[table] = (act, shared)

    for (table, key), group in groups.items():
        act = tables[table][0]
        if key in HOUSING_KEYS and actuator_value(act, key) is None:
            other = HOUSING_KEYS[1 - HOUSING_KEYS.index(key)]
            if (table, other) not in groups:
                raise RobotFileError("a two-node thermal model needs both housing keys", path=path,
                                     key=".".join(table + (other,)),
                                     expected=f"a change of {other} too (the file has a one-node model)",
                                     found=Described("none"))
        file_now = actuator_value(act, key)
        for c in group:
            if c.file_value is None:
                continue
            fv = _number(c.file_value)
            if file_now is None or fv is None or not math.isclose(fv, file_now, rel_tol=FILE_VALUE_TOLERANCE, abs_tol=0.0):
                raise RobotFileError(f"joint '{c.joint}' was identified against another robot file", path=path,
                                     key=".".join(table + (key,)),
                                     expected=f"the file's value {file_now!r}" if file_now is not None else "no file value (the key is absent)",
                                     found=c.file_value)

    log_name = _comment_safe(log_path.name)
    lines = _Text(text, path)
    expected_doc = copy.deepcopy(doc)
    expected_acts: dict[tuple[str, ...], Actuator] = {}
    applied: list[AppliedChange] = []
    notes: list[str] = []

    for (table, key), group in groups.items():
        act, shared = tables[table]
        spec = KEYS[key]
        table_name = ".".join(table)
        if len(group) > 1:
            value, lo, hi, note, warning = _combine(group, spec, f"{table_name}.{key}", path)
            if warning:
                notes.append(warning)
        else:
            c = group[0]
            value, lo, hi, note = float(c.value), float(c.ci_low), float(c.ci_high), c.note
        joints = tuple(c.joint for c in group)
        missing = [j for j in shared if j not in joints]
        if missing:
            notes.append(f"[{table_name}] {key}: the value identified for {', '.join(joints)} is written into a table "
                         f"that also describes {', '.join(missing)}, which changes too")
        td = doc
        for k in table:
            td = td[k]
        writes = _kt_writes(td, act, value) if key == KT_KEY else [(key, value)]
        written = []
        for toml_key, v in writes:
            token = repr(float(v))
            if toml_key in td:
                old = lines.replace_value(table, toml_key, _NUMBER_TOKEN, token,
                                          lambda was: f"# identified: was {_comment_safe(was)} ({log_name})")
            else:
                old = ""
                lines.insert_after_header(table, f"{toml_key} = {token}  # identified: new key ({log_name})")
                if toml_key == HOUSING_KEYS[0]:
                    notes.append(f"[{table_name}]: housing keys added: the thermal model becomes two-node, and "
                                 f"thermal_resistance_k_per_w and thermal_time_constant_s now mean winding to housing")
            written.append((toml_key, old, token))
            _set(expected_doc, table + (toml_key,), float(token))
        expected_acts[table] = _with_value(expected_acts.get(table, act), key, value)
        applied.append(AppliedChange(joints=joints, table=table_name, key=key, file_value=actuator_value(act, key),
                                     value=value, ci_low=lo, ci_high=hi, unit=group[0].unit, written=tuple(written),
                                     note=note))

    # [robot] name
    new_name = robot.name if robot.name.endswith(NAME_SUFFIX) else robot.name + NAME_SUFFIX
    if new_name != robot.name:
        token = _toml_string(new_name, "robot.name", path)
        lines.replace_value(("robot",), "name", _STRING_TOKEN, token, lambda was: f"# corrected file: was {_comment_safe(was)}")
        _set(expected_doc, ("robot", "name"), new_name)

    # [urdf] file, relative to the new file
    out_dir = out_path.absolute().parent.resolve()
    if isinstance(doc.get("urdf"), dict) and isinstance(doc["urdf"].get("file"), str):
        rel = doc["urdf"]["file"]
        if not Path(rel).is_absolute() and out_dir != robot_path.absolute().parent.resolve():
            target = (robot_path.absolute().parent / rel).resolve()
            try:
                new_rel = Path(os.path.relpath(target, out_dir)).as_posix()
            except ValueError:                      # no relative path (another drive)
                new_rel = str(target)
            token = _toml_string(new_rel, "urdf.file", path)
            lines.replace_value(("urdf",), "file", _STRING_TOKEN, token,
                                lambda was: f"# rewritten for this file's folder: was {_comment_safe(was)}")
            _set(expected_doc, ("urdf", "file"), new_rel)

    head = _header(robot_path, robot_sha, log_name, sha_log, tool_version, applied)
    new_text = lines.text(head)
    _verify(new_text, expected_doc, expected_acts, robot, out_path, path)

    write_atomic(out_path, new_text, force=force)
    return CorrectedRobot(path=out_path, sha256=hashlib.sha256(new_text.encode("utf-8")).hexdigest(),
                          changes_applied=tuple(applied), notes=tuple(notes))


def _load(doc: dict, path: str, sha: str) -> Robot:
    if "urdf" in doc:
        from legbridge.robots.urdf_reader import robot_from_urdf_toml

        return robot_from_urdf_toml(doc, path, sha)
    return robot_from_toml(doc, path, sha)


def _header(robot_path: Path, robot_sha: str, log_name: str, log_sha: str, tool_version: str,
            applied: list[AppliedChange]) -> list[str]:
    if not tool_version:
        from legbridge.robots.version import tool_version as installed

        tool_version = installed()
    date = datetime.now(timezone.utc).strftime("%Y-%m-%dT%H:%M:%SZ")
    head = [f"# Corrected robot file: identified from hardware log {log_name} (SHA-256 {log_sha}) by legbridge "
            f"{_comment_safe(tool_version)} on {date}; based on {_comment_safe(robot_path.name)} (SHA-256 {robot_sha})"]
    for a in applied:
        old = "absent" if a.file_value is None else f"{a.file_value:.6g}"
        unit = "" if a.unit in ("", "-") else f" {a.unit}"
        line = (f"# {', '.join(a.joints)} [{a.table}] {a.key}: {old} -> {a.value:.6g}{unit} "
                f"(95 % CI {a.ci_low:.6g} to {a.ci_high:.6g})")
        if a.key == KT_KEY:
            line += " DC-equivalent; written as " + ", ".join(f"{k} = {new}" for k, _, new in a.written)
        if a.note:
            line += "; " + a.note
        head.append(_comment_safe(line))
    head += ["#", ""]
    return head


def _verify(new_text: str, expected_doc: dict, expected_acts: dict, robot: Robot, out_path: Path, path: str) -> None:
    """The edited text must parse to the intended document and load to the intended actuators."""
    hint = "the file is laid out in a way this writer cannot edit line by line; edit it by hand"
    try:
        new_doc = tomllib.loads(new_text)
    except tomllib.TOMLDecodeError as exc:
        raise RobotFileError(f"the edited text is not valid TOML ({exc})", path=path, hint=hint) from exc
    if new_doc != expected_doc:
        raise RobotFileError("the edited text does not hold the intended values", path=path,
                             key=_first_difference(new_doc, expected_doc), hint=hint)
    new_robot = _load(new_doc, str(out_path), "")
    pairs = [(("joints", j.name), j, n) for j, n in zip(robot.joints, new_robot.joints)]
    pairs += [(("right", "joints", j.name), j, n) for j, n in zip(robot.right_joints, new_robot.right_joints)]
    if len(new_robot.joints) != len(robot.joints) or len(new_robot.right_joints) != len(robot.right_joints):
        raise RobotFileError("the edited file has other joints", path=path, key="joints", hint=hint)
    for table, old_j, new_j in pairs:
        want = _bare_actuator(expected_acts.get(table, old_j.actuator))
        bad = _actuators_match(new_j.actuator, want)
        if bad or replace(new_j, actuator=want) != replace(old_j, actuator=want):
            raise RobotFileError("the edited file does not load to the identified values", path=path,
                                 key=".".join(table) + (f" ({bad})" if bad else ""), hint=hint)
    if (robot.urdf is None) != (new_robot.urdf is None) or (
            robot.urdf is not None and (robot.urdf.urdf_path, robot.urdf.sha256) != (new_robot.urdf.urdf_path, new_robot.urdf.sha256)):
        raise RobotFileError("the edited file names another URDF", path=path, key="urdf.file", hint=hint)
