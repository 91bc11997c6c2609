"""What every reader produces (a RawPlan of RawCases, file units) and the shared step to a Plan.

``build_plan`` runs, per case: column-name checks, value checks, scaling to SI, the axial-force
conversion, phase detection, the force checks, and builds the frozen ReducedTrajectory.

Axial force (the README's conventions): the hip-to-foot vector is l (sin a, -cos a) with a the leg
angle from the downward vertical, positive with the foot ahead (+x). A positive axial force pushes
the body away from the foot, so the ground pushes the foot along the foot-to-hip unit vector:
``force_x_n = -axial sin a``, ``force_z_n = axial cos a``.
"""

from __future__ import annotations
from legbridge.robots.errors import Described

from dataclasses import dataclass, field

import numpy as np

from legbridge.robots.errors import PlanFormatError
from legbridge.mapping.plan import Plan, Policy, ReducedTrajectory, frozen_array

from . import phases, scaling, validation

POLICY_COLUMNS = ("time_s", "actuator_length_m", "touchdown_angle_rad")
#: Keys the reader adds to Plan.metadata (writers leave them out).
READER_METADATA_KEYS = ("phase_source",)


@dataclass
class RawCase:
    """One case as found in the file: float arrays per column (``phase`` as strings), file units.

    rows: CSV only, the file line number of each sample (1-based); header_row: the header's line
    key_template: non-CSV formats, how to name a column, e.g. "cases[0].columns.{column}"
    ground_height_key: how to name the case's ground height in the file
    extra_known: names the format accepts besides validation.KNOWN_COLUMNS (CSV: case, ground_height_m)
    index_format: how to name sample ``index`` (0-based) / ``index1`` (1-based) after the column key
    """

    name: str
    columns: dict
    ground_height_m: float | None = None
    rows: np.ndarray | None = None
    header_row: int | None = None
    key_template: str = "{column}"
    ground_height_key: str = "ground_height_m"
    extra_known: tuple = ()
    index_format: str = "[{index}]"

    def known_columns(self) -> tuple:
        return self.extra_known + validation.KNOWN_COLUMNS

    def where(self, column: str, index: int | None = None) -> dict:
        """``row=`` / ``key=`` arguments naming sample ``index`` (0-based) of ``column`` in the file."""
        if self.rows is not None:
            row = self.header_row if index is None else int(self.rows[index])
            return {"row": row, "key": column}
        base = self.ground_height_key if column == "ground_height_m" else self.key_template.format(column=column)
        return {"row": None, "key": base if index is None else base + self.index_format.format(index=index, index1=index + 1)}


@dataclass
class RawPlan:
    """A plan file as found: unit system, scale values, free metadata, model, policy, cases.

    given: the file's nominal_leg_length_m / mass_kg / gravity_m_s2 (validated positive floats)
    policy: column -> float array, or None; policy_key: how to name the policy in the file
    """

    path: str
    sha256: str
    units: str
    cases: list
    given: dict = field(default_factory=dict)
    metadata: dict = field(default_factory=dict)
    model: dict | None = None
    policy: dict | None = None
    policy_key: str = "policy"
    policy_sep: str = "."


def axial_to_xz(axial_force_n, leg_angle_rad) -> tuple[np.ndarray, np.ndarray]:
    """Ground force (x, z) [N] from the axial leg force [N] (positive pushing the body off the foot)."""
    a = np.asarray(leg_angle_rad, dtype=float)
    f = np.asarray(axial_force_n, dtype=float)
    return -f * np.sin(a), f * np.cos(a)


def _check_threshold(force_threshold_n) -> float | None:
    if force_threshold_n is None:
        return None
    try:
        thr = float(force_threshold_n)
    except (TypeError, ValueError) as exc:
        raise PlanFormatError(key="force_threshold_n", expected="a positive force [N]", found=force_threshold_n) from exc
    if not (np.isfinite(thr) and thr > 0.0):
        raise PlanFormatError(key="force_threshold_n", expected="a positive finite force [N]", found=thr)
    return thr


def _policy(raw: RawPlan, sc) -> Policy | None:
    if raw.policy is None:
        return None
    p = raw.policy
    unknown = [k for k in p if k not in POLICY_COLUMNS]
    if unknown:
        raise PlanFormatError(f"unknown policy entry '{unknown[0]}'", path=raw.path, key=f"{raw.policy_key}{raw.policy_sep}{unknown[0]}",
                              expected=f"only {list(POLICY_COLUMNS)}", found=unknown[0])
    for k in POLICY_COLUMNS:
        if k not in p:
            raise PlanFormatError(f"policy entry '{k}' missing", path=raw.path, key=raw.policy_key,
                                  expected=f"entries {list(POLICY_COLUMNS)}", found=sorted(p))
    n = len(p["time_s"])
    for k in POLICY_COLUMNS:
        v = p[k]
        key = f"{raw.policy_key}{raw.policy_sep}{k}"
        if len(v) != n:
            raise PlanFormatError("policy entries differ in length", path=raw.path, key=key,
                                  expected=f"{n} values (as time_s)", found=Described(f"{len(v)} values"))
        bad = np.flatnonzero(~np.isfinite(v))
        if bad.size:
            i = int(bad[0])
            raise PlanFormatError("value is not a finite number", path=raw.path, key=f"{key}[{i}]",
                                  expected="a finite number", found=float(v[i]))
    if n < 1:
        raise PlanFormatError("empty policy", path=raw.path, key=raw.policy_key, expected="at least one sample", found=0)
    t = p["time_s"]
    bad = np.flatnonzero(np.diff(t) <= 0)
    if bad.size:
        i = int(bad[0]) + 1
        raise PlanFormatError("policy time does not increase", path=raw.path, key=f"{raw.policy_key}{raw.policy_sep}time_s[{i}]",
                              expected=f"a time above {t[i - 1]:g} (strictly increasing)", found=float(t[i]))
    if t[0] < 0:
        raise PlanFormatError("policy time is measured from the apex", path=raw.path, key=f"{raw.policy_key}{raw.policy_sep}time_s[0]",
                              expected="a time >= 0", found=float(t[0]))
    bad = np.flatnonzero(p["actuator_length_m"] <= 0)
    if bad.size:
        i = int(bad[0])
        raise PlanFormatError("actuator length is not positive", path=raw.path,
                              key=f"{raw.policy_key}{raw.policy_sep}actuator_length_m[{i}]", expected="a length > 0",
                              found=float(p["actuator_length_m"][i]))
    si = scaling.scale_columns(p, sc)
    # the simulator's own rules (start at the apex, t = 0; at least two samples; |angle| < pi/2), so
    # a policy read here is one a sweep can run
    from legbridge.mapping.slip.policy import make_policy
    from legbridge.robots.errors import SlipInputError

    try:
        make_policy(si["time_s"], si["actuator_length_m"], si["touchdown_angle_rad"])
    except SlipInputError as exc:
        key = exc.key.replace("policy.", f"{raw.policy_key}{raw.policy_sep}", 1) if exc.key else raw.policy_key
        raise PlanFormatError("the open-loop policy cannot be simulated", path=raw.path, key=key,
                              expected=exc.expected, found=exc.found) from exc
    return Policy(**{k: frozen_array(si[k]) for k in POLICY_COLUMNS})


def build_plan(raw: RawPlan, *, robot=None, force_threshold_n=None) -> Plan:
    """Validate ``raw``, scale it to SI, detect phases and return the frozen Plan."""
    thr = _check_threshold(force_threshold_n)
    if not raw.cases:
        raise PlanFormatError("the plan has no cases", path=raw.path, expected="at least one case", found=Described("none"))
    names = [c.name for c in raw.cases]
    for i, n in enumerate(names):
        if not isinstance(n, str) or not n.strip():
            raise PlanFormatError("case without a name", path=raw.path, key=raw.cases[i].where("case")["key"],
                                  row=raw.cases[i].where("time_s", 0)["row"], expected="a non-empty case name", found=n)
        if n in names[:i]:
            raise PlanFormatError(f"case '{n}' appears twice", path=raw.path, row=raw.cases[i].where("time_s", 0)["row"],
                                  key="case", expected="unique case names (CSV: rows grouped by case)", found=n)
    for c in raw.cases:
        validation.check_column_names(c, raw.path)
        validation.check_values(c, raw.path)

    sc = scaling.resolve_scaling(raw.units, raw.given, robot, raw.path)
    mass = sc.mass_kg if sc else raw.given.get("mass_kg")
    gravity = sc.gravity_m_s2 if sc else raw.given.get("gravity_m_s2", scaling.STANDARD_GRAVITY_M_S2)
    if mass is None and robot is not None:
        mass = float(robot.total_mass_kg)

    metadata = dict(raw.metadata)
    if raw.units == "si":
        metadata.update({k: v for k, v in raw.given.items()})
    if raw.model is not None:
        metadata["model"] = dict(raw.model)
    phase_source = {}
    cases = []
    from .plausibility import check_leg_angle_units

    for c in raw.cases:
        col = scaling.scale_columns(c.columns, sc)
        # a leg angle in degrees is named as such before it turns an axial force the wrong way
        check_leg_angle_units(col["leg_angle_rad"], path=raw.path, case=c.name, time_s=col.get("time_s"))
        if validation.AXIAL_FORCE_COLUMN in col:
            fx, fz = axial_to_xz(col[validation.AXIAL_FORCE_COLUMN], col["leg_angle_rad"])
        else:
            fx, fz = col["force_x_n"], col["force_z_n"]
        from_column = validation.PHASE_COLUMN in col
        if from_column:
            stance = phases.stance_from_phase(col[validation.PHASE_COLUMN])
            phase_source[c.name] = "phase column"
        elif thr is not None:
            stance = phases.detect_phases(fz, thr)
            phase_source[c.name] = f"force_z_n > {thr:.4g} N (threshold given)"
        else:
            t_n, text = phases.default_threshold_n(mass, gravity, fz)
            stance = phases.detect_phases(fz, t_n)
            phase_source[c.name] = text
        validation.check_forces(c, raw.path, fx, fz, stance, from_column)
        gh = 0.0 if c.ground_height_m is None else float(c.ground_height_m)
        if sc is not None:
            gh *= sc.length_m
        opt = {k: (frozen_array(col[k]) if k in col else None) for k in validation.OPTIONAL_COLUMNS}
        cases.append(
            ReducedTrajectory(
                name=c.name,
                time_s=frozen_array(col["time_s"]),
                leg_length_m=frozen_array(col["leg_length_m"]),
                leg_angle_rad=frozen_array(col["leg_angle_rad"]),
                force_x_n=frozen_array(fx),
                force_z_n=frozen_array(fz),
                stance=frozen_array(stance, dtype=bool),
                ground_height_m=gh,
                **opt,
            )
        )
    metadata["phase_source"] = phase_source
    return Plan(path=raw.path, sha256=raw.sha256, cases=tuple(cases), scaling=sc, metadata=metadata,
                policy=_policy(raw, sc))


def read_file_bytes(path) -> tuple[bytes, str]:
    """The file's bytes and their SHA-256 (hex); InputFileNotFound when it is not a file."""
    import hashlib
    from pathlib import Path

    from legbridge.robots.errors import InputFileNotFound

    p = Path(path)
    if not p.is_file():
        raise InputFileNotFound("plan file not found", path=str(p), expected="an existing file", found=Described("nothing"))
    size = p.stat().st_size
    if size > MAX_PLAN_FILE_BYTES:
        raise PlanFormatError("plan file too large", path=str(p), expected=f"at most {MAX_PLAN_FILE_BYTES / 1e9:g} GB",
                              found=Described(f"{size / 1e9:.2f} GB"), hint="split the plan into shorter parts")
    data = p.read_bytes()
    return data, hashlib.sha256(data).hexdigest()


MAX_PLAN_FILE_BYTES = 2_000_000_000
"""A plan file larger than this is refused before it is read (a 2 GB CSV is days of samples at 1 kHz)."""


def as_float_array(values, path: str, key: str) -> np.ndarray:
    """A flat list (or 1-D numeric array) of numbers -> float array; bool, None, text and nested
    lists are refused with PlanFormatError naming the first bad item."""
    if isinstance(values, np.ndarray):
        if values.dtype.kind not in "iuf":
            raise PlanFormatError(path=path, key=key, expected="an array of numbers", found=Described(f"dtype {values.dtype}"))
        if values.ndim != 1:
            raise PlanFormatError(path=path, key=key, expected="a 1-D array", found=Described(f"shape {values.shape}"))
        return values.astype(float)
    if not isinstance(values, (list, tuple)):
        raise PlanFormatError(path=path, key=key, expected="a list of numbers", found=type(values).__name__)
    bad = next((i for i, v in enumerate(values) if isinstance(v, bool) or not isinstance(v, (int, float))), None)
    if bad is not None:
        v = values[bad]
        raise PlanFormatError("not a number", path=path, key=f"{key}[{bad}]", expected="a number",
                              found=v)
    return np.asarray(values, dtype=float)


def merge_json_entries(flat: dict | None, texts: dict, path: str, group: str, sep: str) -> dict | None:
    """``flat`` plus each JSON text in ``texts`` decoded (NPZ/MAT ``<group>_json`` entries)."""
    import json

    if not texts:
        return flat
    out = dict(flat or {})
    for k, text in texts.items():
        key = f"{group}_json{sep}{k}"
        if k in out:
            raise PlanFormatError(f"'{k}' given twice", path=path, key=key, expected=f"each key once in {group} and {group}_json",
                                  found=Described(f"also {group}{sep}{k}"))
        if not isinstance(text, str):
            raise PlanFormatError(path=path, key=key, expected="JSON text", found=type(text).__name__)
        try:
            out[k] = json.loads(text)
        except json.JSONDecodeError as exc:
            raise PlanFormatError(f"not valid JSON ({exc.msg})", path=path, key=key) from exc
    return out
