"""Checks shared by every plan reader: column names, values, time order, phases, forces.

Every reader turns its file into :class:`legbridge.mapping.readers.raw.RawCase` objects (float
arrays per column, the phase column as strings) and hands them here; the error messages say where
a value sits in *that* file (CSV: line number and column; JSON: the key path; NPZ/MAT: the array
name and 0-based sample index).

Tolerances (stated once, used everywhere):

- ``FORCE_TOLERANCE_FRACTION`` = 1e-3: a ground force counts as zero, and a vertical force as not
  pulling, within 0.1 % of the case's peak ground-force magnitude (plus 1e-9 N, so an all-zero
  case passes). Unit-free, so it applies before or after scaling.

A leg length outside the leg's reach is *not* an input error here (the mapping flags it later);
only a length that is not positive is refused.
"""

from __future__ import annotations
from legbridge.robots.errors import Described

import numpy as np

from legbridge.robots.errors import PlanFormatError

REQUIRED_COLUMNS = ("time_s", "leg_length_m", "leg_angle_rad")
FORCE_XZ_COLUMNS = ("force_x_n", "force_z_n")
AXIAL_FORCE_COLUMN = "axial_force_n"
PHASE_COLUMN = "phase"
OPTIONAL_COLUMNS = (
    "body_x_m",
    "body_z_m",
    "body_vx_m_s",
    "body_vz_m_s",
    "actuator_length_m",
    "spring_deflection_m",
)
#: Columns of one case's table in every format (CSV adds ``case`` and ``ground_height_m``).
KNOWN_COLUMNS = REQUIRED_COLUMNS + FORCE_XZ_COLUMNS + (AXIAL_FORCE_COLUMN, PHASE_COLUMN) + OPTIONAL_COLUMNS
#: Numeric columns (everything except ``phase``).
NUMERIC_COLUMNS = tuple(c for c in KNOWN_COLUMNS if c != PHASE_COLUMN)
PHASE_VALUES = ("stance", "flight")

FORCE_TOLERANCE_FRACTION = 1e-3
FORCE_TOLERANCE_FLOOR_N = 1e-9
MAX_MAGNITUDE = 1e6
"""No plan value of a legged robot exceeds this in any of its units (s, m, rad, N, m/s, or the
nondimensional units): a larger one is an input error (a leg of 1e300 m), refused by the reader."""


def check_column_names(case, path: str) -> None:
    """Refuse unknown columns (listing the known ones), missing required ones, mixed force forms."""
    names = list(case.columns)
    unknown = [n for n in names if n not in KNOWN_COLUMNS]
    if unknown:
        raise PlanFormatError(
            f"unknown column '{unknown[0]}'" + (f" in case '{case.name}'" if case.name else ""),
            path=path,
            key=case.where(unknown[0])["key"],
            row=case.header_row,
            expected=f"only known columns {list(case.known_columns())}",
            found=unknown[0],
        )
    for col in REQUIRED_COLUMNS:
        if col not in case.columns:
            raise PlanFormatError(
                f"missing column '{col}'" + (f" in case '{case.name}'" if case.name else ""),
                path=path,
                row=case.header_row,
                expected=f"columns {list(REQUIRED_COLUMNS)} plus either {list(FORCE_XZ_COLUMNS)} or '{AXIAL_FORCE_COLUMN}'",
                found=names,
            )
    has_xz = [c for c in FORCE_XZ_COLUMNS if c in case.columns]
    has_axial = AXIAL_FORCE_COLUMN in case.columns
    if has_axial and has_xz:
        raise PlanFormatError(
            "ground force given twice" + (f" in case '{case.name}'" if case.name else ""),
            path=path,
            row=case.header_row,
            expected=f"either {list(FORCE_XZ_COLUMNS)} or '{AXIAL_FORCE_COLUMN}', not both",
            found=names,
        )
    if not has_axial and len(has_xz) != 2:
        missing = [c for c in FORCE_XZ_COLUMNS if c not in case.columns]
        raise PlanFormatError(
            f"missing column '{missing[0]}'" + (f" in case '{case.name}'" if case.name else ""),
            path=path,
            row=case.header_row,
            expected=f"either both {list(FORCE_XZ_COLUMNS)} or '{AXIAL_FORCE_COLUMN}'",
            found=names,
        )


def check_values(case, path: str) -> None:
    """Lengths agree, at least two samples, finite numbers, time strictly increasing, leg length > 0,
    phase values only 'stance'/'flight', constant finite ground height."""
    lengths = {c: len(v) for c, v in case.columns.items()}
    n = lengths["time_s"]
    for c, m in lengths.items():
        if m != n:
            raise PlanFormatError(
                f"columns of case '{case.name}' differ in length", path=path, key=case.where(c)["key"],
                expected=f"{n} samples (as time_s)", found=Described(f"{m} samples"),
            )
    if n < 2:
        raise PlanFormatError(f"case '{case.name}' is too short", path=path, key=case.where("time_s")["key"],
                              expected="at least 2 samples", found=Described(f"{n} sample(s)"))
    for c in NUMERIC_COLUMNS:
        if c not in case.columns:
            continue
        v = case.columns[c]
        bad = np.flatnonzero(~np.isfinite(v))
        if bad.size:
            i = int(bad[0])
            raise PlanFormatError("value is not a finite number", path=path, **case.where(c, i),
                                  expected="a finite number", found=float(v[i]))
        bad = np.flatnonzero(np.abs(v) > MAX_MAGNITUDE)
        if bad.size:
            i = int(bad[0])
            raise PlanFormatError("value is not physical for a legged robot", path=path, **case.where(c, i),
                                  expected=f"a magnitude up to {MAX_MAGNITUDE:g} in the file's units", found=float(v[i]))
    t = case.columns["time_s"]
    dt = np.diff(t)
    bad = np.flatnonzero(dt <= 0.0)
    if bad.size:
        i = int(bad[0]) + 1
        raise PlanFormatError(
            f"time does not increase in case '{case.name}'", path=path, **case.where("time_s", i),
            expected=f"a time above the previous sample's {t[i - 1]:g} s (strictly increasing)", found=float(t[i]),
        )
    ll = case.columns["leg_length_m"]
    bad = np.flatnonzero(ll <= 0.0)
    if bad.size:
        i = int(bad[0])
        raise PlanFormatError("leg length is not positive", path=path, **case.where("leg_length_m", i),
                              expected="a leg length > 0", found=float(ll[i]))
    if PHASE_COLUMN in case.columns:
        ph = case.columns[PHASE_COLUMN]
        bad = np.flatnonzero(~np.isin(ph, PHASE_VALUES))
        if bad.size:
            i = int(bad[0])
            raise PlanFormatError("unknown phase", path=path, **case.where(PHASE_COLUMN, i),
                                  expected=f"one of {list(PHASE_VALUES)}", found=str(ph[i]))
    if case.ground_height_m is not None and not np.isfinite(case.ground_height_m):
        raise PlanFormatError(f"ground height of case '{case.name}' is not finite", path=path,
                              **case.where("ground_height_m"), expected="a finite number [m]", found=case.ground_height_m)


def force_tolerance_n(force_x_n: np.ndarray, force_z_n: np.ndarray) -> float:
    """Zero-force tolerance of a case [N]: FORCE_TOLERANCE_FRACTION of its peak |F|, plus 1e-9 N."""
    peak = float(np.max(np.hypot(force_x_n, force_z_n))) if force_x_n.size else 0.0
    return FORCE_TOLERANCE_FRACTION * peak + FORCE_TOLERANCE_FLOOR_N


def check_forces(case, path: str, force_x_n: np.ndarray, force_z_n: np.ndarray, stance: np.ndarray,
                 phase_from_column: bool) -> None:
    """Unilateral contact (force_z >= -tol everywhere; the ground only pushes) and, when the phases
    come from the file's phase column, zero force (|F| <= tol) in every flight sample."""
    tol = force_tolerance_n(force_x_n, force_z_n)
    fz_col = "force_z_n" if "force_z_n" in case.columns else AXIAL_FORCE_COLUMN
    bad = np.flatnonzero(force_z_n < -tol)
    if bad.size:
        i = int(bad[0])
        raise PlanFormatError(
            "the ground pulls on the foot (vertical ground force below zero)", path=path, **case.where(fz_col, i),
            expected=f"force_z_n >= 0 (tolerance {tol:.3g} N, {FORCE_TOLERANCE_FRACTION:g} of the case's peak force)",
            found=Described(f"{force_z_n[i]:g} N"),
        )
    if phase_from_column:
        mag = np.hypot(force_x_n, force_z_n)
        bad = np.flatnonzero(~stance & (mag > tol))
        if bad.size:
            i = int(bad[0])
            col = fz_col if abs(force_z_n[i]) >= abs(force_x_n[i]) or "force_x_n" not in case.columns else "force_x_n"
            raise PlanFormatError(
                "ground force in a flight sample", path=path, **case.where(col, i),
                expected=f"zero force in flight (|F| <= {tol:.3g} N, {FORCE_TOLERANCE_FRACTION:g} of the case's peak force)",
                found=Described(f"|F| = {mag[i]:g} N with phase 'flight'"),
            )
