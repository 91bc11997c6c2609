"""CSV plans: optional ``# key = value`` metadata lines, a header row, one row per sample.

Layout::

    # format = legbridge.plan/1          optional; when given it must be this
    # units = si                         'si' (default) or 'nondimensional'
    # nominal_leg_length_m = 0.7         optional scaling values (numbers)
    # mass_kg = 25
    # gravity_m_s2 = 9.81
    # model.stiffness_n_per_m = 20000    'model.<key>' -> Plan.metadata['model'][key]
    # any_other_key = text               -> Plan.metadata[key] (numbers when they read as numbers)
    case,ground_height_m,time_s,leg_length_m,leg_angle_rad,force_x_n,force_z_n,phase
    nominal,0.0,0.00,0.70,0.30,0.0,0.0,flight
    ...

Columns: required ``time_s``, ``leg_length_m``, ``leg_angle_rad`` and either ``force_x_n`` +
``force_z_n`` or ``axial_force_n``; optional ``case`` (rows grouped by case; cases in order of first
appearance; without it the single case is named 'nominal'), ``ground_height_m`` (constant per case,
default 0), ``phase`` ('stance'/'flight'), ``body_x_m``, ``body_z_m``, ``body_vx_m_s``,
``body_vz_m_s``, ``actuator_length_m``, ``spring_deflection_m``. Other comment lines (no '=', or
no identifier before it) and blank lines are skipped. Rows in error messages are file line numbers
(1-based, as an editor or a spreadsheet shows them: the header is row 1 when there are no comment
lines).
"""

from __future__ import annotations
from legbridge.robots.errors import Described

import csv
import re

import numpy as np

from legbridge.robots.errors import PlanFormatError

from . import scaling, validation
from .json_reader import FORMAT_TAG
from .raw import RawCase, RawPlan, read_file_bytes

CASE_COLUMN = "case"
GROUND_COLUMN = "ground_height_m"
CSV_COLUMNS = (CASE_COLUMN, GROUND_COLUMN) + validation.KNOWN_COLUMNS
DEFAULT_CASE_NAME = "nominal"
#: A metadata line is '# key = value' with key of letters, digits, '_' and '.'; other comments are skipped.
METADATA_KEY = re.compile(r"^[A-Za-z_][A-Za-z0-9_.]*$")


def _meta_value(text: str):
    for conv in (int, float):
        try:
            return conv(text)
        except ValueError:
            pass
    return text


def _parse_metadata(lines: list[tuple[int, str]], path: str):
    units, given, metadata, model = "si", {}, {}, None
    seen: dict[str, int] = {}
    for row, line in lines:
        body = line.lstrip("#").strip()
        if "=" not in body:
            continue
        key, _, value = (s.strip() for s in body.partition("="))
        if not METADATA_KEY.match(key):
            continue  # a free comment that happens to contain '='
        if key in seen:
            raise PlanFormatError(f"metadata key '{key}' given twice", path=path, row=row, key=key,
                                  expected="each key once", found=Described(f"also on row {seen[key]}"))
        seen[key] = row
        if key == "units":
            try:
                units = scaling.check_units(value, path, key)
            except PlanFormatError as exc:
                raise PlanFormatError("unknown unit system", path=path, row=row, key=key,
                                      expected=f"one of {list(scaling.UNITS)}", found=value) from exc
        elif key == "format":
            if value != FORMAT_TAG:
                raise PlanFormatError("not a legbridge plan", path=path, row=row, key=key, expected=repr(FORMAT_TAG), found=value)
        elif key in scaling.SCALE_KEYS:
            try:
                given[key] = scaling.positive_number(value, path, key)
            except PlanFormatError as exc:
                raise PlanFormatError(path=path, row=row, key=key, expected="a positive number", found=value) from exc
        elif key.startswith("model."):
            model = model or {}
            model[key[len("model."):]] = _meta_value(value)
        else:
            metadata[key] = _meta_value(value)
    return units, given, metadata, model


def _numeric(cells: np.ndarray, rows: np.ndarray, column: str, path: str) -> np.ndarray:
    """Text cells -> floats; the first cell that is not a number is named by row and column."""
    stripped = np.char.strip(cells)
    try:
        if np.any(stripped == ""):
            raise ValueError
        return stripped.astype(float)
    except ValueError:
        for i, cell in enumerate(stripped.tolist()):  # error path only: find the cell to name
            try:
                float(cell)
            except ValueError:
                raise PlanFormatError("not a number", path=path, row=int(rows[i]), key=column, expected="a number",
                                      found=cell if cell else "an empty cell") from None
        raise


def read_csv_raw(path: str) -> RawPlan:
    """Read and check a CSV plan file; file units (layout in the module docstring)."""
    data, sha = read_file_bytes(path)
    try:
        text = data.decode("utf-8-sig")
    except UnicodeDecodeError as exc:
        raise PlanFormatError("not UTF-8 text", path=path, expected="a UTF-8 CSV file", found=Described("other bytes")) from exc
    lines = text.splitlines()
    head = 0
    meta_lines = []
    while head < len(lines) and (not lines[head].strip() or lines[head].lstrip().startswith("#")):
        if lines[head].strip():
            meta_lines.append((head + 1, lines[head].strip()))
        head += 1
    if head == len(lines):
        raise PlanFormatError("no header row", path=path, expected="a header row naming the columns", found=Described("an empty table"))
    units, given, metadata, model = _parse_metadata(meta_lines, path)

    header_row = head + 1
    try:
        header = [h.strip() for h in next(csv.reader([lines[head]]))]
    except csv.Error as exc:
        raise PlanFormatError(f"unreadable header row ({exc})", path=path, row=head + 1) from exc
    for j, name in enumerate(header):
        if not name:
            raise PlanFormatError(f"empty column name (column {j + 1})", path=path, row=header_row,
                                  expected="a name for every column", found=header)
        if name not in CSV_COLUMNS:
            raise PlanFormatError(f"unknown column '{name}'", path=path, row=header_row, key=name,
                                  expected=f"only known columns {list(CSV_COLUMNS)}", found=name)
        if name in header[:j]:
            raise PlanFormatError(f"column '{name}' given twice", path=path, row=header_row, key=name,
                                  expected="each column once", found=header)
    rows, cells = [], []
    for k, line in enumerate(lines[head + 1:], start=header_row + 1):
        if not line.strip():
            continue
        try:
            fields = next(csv.reader([line]))
        except csv.Error as exc:  # a cell beyond the csv module's field limit, a NUL byte...
            raise PlanFormatError(f"unreadable row ({exc})", path=path, row=k,
                                  expected="numbers separated by commas", found=Described(f"{len(line)} characters")) from exc
        if len(fields) != len(header):
            raise PlanFormatError("wrong number of cells", path=path, row=k,
                                  expected=f"{len(header)} cells as in the header (row {header_row})", found=Described(f"{len(fields)} cells"))
        rows.append(k)
        cells.append(fields)
    if not cells:
        raise PlanFormatError("no data rows", path=path, row=header_row, expected="at least 2 rows below the header",
                              found=Described("none"))
    rows_arr = np.asarray(rows)
    table = np.asarray(cells, dtype=str)
    col = {name: table[:, j] for j, name in enumerate(header)}

    if CASE_COLUMN in col:
        names = np.char.strip(col.pop(CASE_COLUMN))
        bad = np.flatnonzero(names == "")
        if bad.size:
            raise PlanFormatError("case without a name", path=path, row=int(rows_arr[bad[0]]), key=CASE_COLUMN,
                                  expected="a case name in every row", found=Described("an empty cell"))
    else:
        names = np.full(len(rows), DEFAULT_CASE_NAME)
    starts = np.concatenate(([0], np.flatnonzero(names[1:] != names[:-1]) + 1))
    run_names = names[starts].tolist()
    for r, n in enumerate(run_names):
        if n in run_names[:r]:
            first = run_names.index(n)
            raise PlanFormatError(f"rows of case '{n}' are not together", path=path, row=int(rows_arr[starts[r]]),
                                  key=CASE_COLUMN, expected="rows grouped by case",
                                  found=Described(f"case '{n}' again (its first rows start at row {int(rows_arr[starts[first]])})"))
    ends = np.concatenate((starts[1:], [len(rows)]))

    numeric = {}
    for name, cells_ in col.items():
        if name == validation.PHASE_COLUMN:
            numeric[name] = np.char.lower(np.char.strip(cells_))
        else:
            numeric[name] = _numeric(cells_, rows_arr, name, path)
    cases = []
    for n, a, b in zip(run_names, starts, ends):
        case_cols = {k: v[a:b] for k, v in numeric.items() if k != GROUND_COLUMN}
        gh = None
        if GROUND_COLUMN in numeric:
            g = numeric[GROUND_COLUMN][a:b]
            bad = np.flatnonzero(~np.isfinite(g))
            if bad.size:
                raise PlanFormatError("value is not a finite number", path=path, row=int(rows_arr[a + bad[0]]),
                                      key=GROUND_COLUMN, expected="a finite number [m]", found=float(g[bad[0]]))
            diff = np.flatnonzero(g != g[0])
            if diff.size:
                i = int(diff[0])
                raise PlanFormatError(f"ground height changes within case '{n}'", path=path, row=int(rows_arr[a + i]),
                                      key=GROUND_COLUMN, expected=f"{g[0]:g} m for every row of the case", found=float(g[i]))
            gh = float(g[0])
        cases.append(RawCase(name=n, columns=case_cols, ground_height_m=gh, rows=rows_arr[a:b], header_row=header_row,
                             extra_known=(CASE_COLUMN, GROUND_COLUMN)))
    return RawPlan(path=path, sha256=sha, units=units, cases=cases, given=given, metadata=metadata, model=model)
