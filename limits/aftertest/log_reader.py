"""Hardware logs (CSV, NPZ, MAT-file) -> a HardwareLog in SI units (limits/aftertest/log.py).

One column (CSV header name, NPZ array name, MAT-file variable or struct field) per logged quantity,
one value per sample. Without a mapping file the columns are named by convention, unit in the name::

    time_s                                 log clock [s], finite, strictly increasing, >= 10 samples
    <joint>_position_rad                   joint-side angle
    <joint>_velocity_rad_s                 joint-side speed
    <joint>_current_a                      drive current, DC-equivalent convention
    <joint>_torque_nm                      joint-side torque
    <joint>_winding_temp_c, <joint>_housing_temp_c     degC
    bus_voltage_v
    <leg>_contact                          0 / 1
    <leg>_ground_force_x_n, <leg>_ground_force_z_n
    sync                                   optional trigger column (any numbers; 0 -> nonzero marks an event)

``<joint>`` is one of the trajectory's joint names and ``<leg>`` one of its legs (``read_log``'s
``joints`` and ``legs``). Any other column is an error that names it; a log with columns to be
ignored, other names or other units needs a mapping file (TOML)::

    [time]
    column = "t"
    unit = "ms"                       # s | ms | us                              required
    sync = "trigger"                  # the sync column                          optional
    ignore = ["cpu_load"]             # log columns to skip                      optional
    [joints.left_knee]                # a joint of the trajectory
    position = { column = "lk_q", unit = "deg" }               # rad | deg | rev (turns)
    velocity = { column = "lk_qd", unit = "rpm" }              # rad/s | deg/s | rpm
    current = { column = "lk_iq", unit = "A", convention = "phase_peak" }   # A | mA; dc | phase_peak | phase_rms
    torque = { column = "lk_tau", unit = "N m" }
    winding_temp = { column = "lk_Tw", unit = "degC" }         # degC | K
    housing_temp = { column = "lk_Th", unit = "degC" }
    [legs.left]                       # a leg of the trajectory
    contact = { column = "lc" }                                # 0 / 1, no unit
    ground_force_x = { column = "fx_l", unit = "N" }
    ground_force_z = { column = "fz_l", unit = "N" }
    [robot]
    bus_voltage = { column = "vbus", unit = "V" }

Position and velocity measured on the motor side: ``side = "motor"`` and ``gear_ratio = N`` (a
positive number, motor turns per joint turn) in the entry; the value is divided by N. Every entry
names its unit (contact has none); currents default to the DC convention. With a mapping file,
every log column must be mapped or ignored.

Checks: empty cells (NaN in NPZ / MAT-files) are allowed except in time and contact; infinite values
are not; every value within MAX_MAGNITUDE in SI; contact 0 or 1; temperatures within
TEMPERATURE_RANGE_C after conversion. Rows in messages are CSV file line numbers (1-based); NPZ
samples are named ``column[i]`` (0-based), MAT-file samples ``column(i)`` (1-based). Nothing is
written: the files are only read.
"""

from __future__ import annotations

import csv
import hashlib
import io
import tomllib
from dataclasses import dataclass
from pathlib import Path

import numpy as np

from legbridge.mapping.plan import frozen_array
from legbridge.mapping.readers.npz_reader import check_declared_size  # NPZ and MAT sizes bounded as for plans
from legbridge.mapping.readers.raw import MAX_PLAN_FILE_BYTES
from legbridge.mapping.readers.validation import MAX_MAGNITUDE
from legbridge.robots.errors import Described, InputFileNotFound, LogFormatError, UsageError
from legbridge.robots.motor_constants import current_to_dc_equivalent

from .log import JOINT_QUANTITIES, LEG_QUANTITIES, ROBOT_QUANTITIES, Channel, HardwareLog

MAX_LOG_FILE_BYTES = MAX_PLAN_FILE_BYTES
"""A log (or mapping) file larger than this is refused before it is read, as a plan file is."""
MIN_SAMPLES = 10
"""Fewer samples than this are not a log worth holding against a plan."""
TEMPERATURE_RANGE_C = (-60.0, 400.0)
"""Winding and housing temperatures outside this range [degC] are a unit or sensor error (the
coldest storage rating and well above any insulation class)."""
FORMATS = (".csv", ".npz", ".mat")

TIME_COLUMN = "time_s"
SYNC_COLUMN = "sync"
#: Conventional column-name suffix per quantity (``<owner>_<suffix>``; the robot's have no owner prefix).
SUFFIXES = {
    "position": "position_rad", "velocity": "velocity_rad_s", "current": "current_a", "torque": "torque_nm",
    "winding_temp": "winding_temp_c", "housing_temp": "housing_temp_c",
    "contact": "contact", "ground_force_x": "ground_force_x_n", "ground_force_z": "ground_force_z_n",
    "bus_voltage": "bus_voltage_v",
}
TEMPERATURES = ("winding_temp", "housing_temp")
#: Accepted units per quantity: unit -> (factor, offset) with SI = value * factor + offset.
UNITS = {
    "time": {"s": (1.0, 0.0), "ms": (1e-3, 0.0), "us": (1e-6, 0.0)},
    "position": {"rad": (1.0, 0.0), "deg": (np.pi / 180.0, 0.0), "rev": (2.0 * np.pi, 0.0)},
    "velocity": {"rad/s": (1.0, 0.0), "deg/s": (np.pi / 180.0, 0.0), "rpm": (2.0 * np.pi / 60.0, 0.0)},
    "current": {"A": (1.0, 0.0), "mA": (1e-3, 0.0)},
    "torque": {"N m": (1.0, 0.0)},
    "winding_temp": {"degC": (1.0, 0.0), "K": (1.0, -273.15)},
    "housing_temp": {"degC": (1.0, 0.0), "K": (1.0, -273.15)},
    "contact": {"-": (1.0, 0.0)},
    "ground_force_x": {"N": (1.0, 0.0)},
    "ground_force_z": {"N": (1.0, 0.0)},
    "bus_voltage": {"V": (1.0, 0.0)},
}
CURRENT_CONVENTIONS = ("dc", "phase_peak", "phase_rms")
SIDES = ("joint", "motor")
MAPPING_SECTIONS = ("time", "joints", "legs", "robot")
TIME_KEYS = ("column", "unit", "sync", "ignore")


@dataclass(frozen=True)
class _Entry:
    """One mapped quantity: where it is in the log and how to bring it to SI."""

    column: str
    owner: str
    quantity: str
    unit: str
    convention: str = "dc"
    gear_ratio: float | None = None
    key: str | None = None          # the mapping-file key, for messages (None: conventional name)


@dataclass(frozen=True)
class _Layout:
    """Which log column is what: time, sync, ignored columns and the quantities."""

    time_column: str
    time_unit: str
    sync_column: str | None
    ignore: tuple[str, ...]
    entries: tuple[_Entry, ...]
    mapping_path: str | None


@dataclass(frozen=True)
class _Table:
    """A log file's columns as found (raw arrays or CSV text cells) and how to name a sample."""

    columns: dict
    kind: str                       # "csv" | "npz" | "mat"
    rows: np.ndarray | None = None  # CSV: the file line number of each sample
    header_row: int | None = None
    prefix: str = ""                # MAT-file struct name + "."

    def where(self, column: str, index: int | None = None) -> dict:
        """``row=`` / ``key=`` arguments naming ``column`` (or its sample ``index``, 0-based)."""
        if self.kind == "csv":
            return {"row": self.header_row if index is None else int(self.rows[index]), "key": column}
        name = self.prefix + column
        if index is None:
            return {"row": None, "key": name}
        return {"row": None, "key": f"{name}[{index}]" if self.kind == "npz" else f"{name}({index + 1})"}


# --------------------------------------------------------------------------------------------- files

def _read_bytes(path, what: str) -> tuple[bytes, str]:
    p = Path(path)
    if p.is_dir():
        raise InputFileNotFound(f"{what} is a folder", path=str(p), expected="a file", found=Described("a folder"))
    if not p.is_file():
        raise InputFileNotFound(f"{what} not found", path=str(p), expected="an existing file", found=Described("nothing"))
    size = p.stat().st_size
    if size > MAX_LOG_FILE_BYTES:
        raise LogFormatError(f"{what} too large", path=str(p), expected=f"at most {MAX_LOG_FILE_BYTES / 1e9:g} GB",
                             found=Described(f"{size / 1e9:.2f} GB"), hint="Split the log into shorter parts")
    try:
        data = p.read_bytes()
    except OSError as exc:
        raise LogFormatError(f"{what} cannot be read ({exc.strerror or exc})", path=str(p)) from exc
    return data, hashlib.sha256(data).hexdigest()


def _decode(data: bytes, path: str, what: str) -> str:
    try:
        text = data.decode("utf-8-sig")
    except UnicodeDecodeError as exc:
        raise LogFormatError("not UTF-8 text", path=path, expected=f"a UTF-8 {what}",
                             found=Described(f"byte 0x{data[exc.start]:02x} at offset {exc.start}")) from exc
    if "\x00" in text:
        raise LogFormatError("NUL byte in text", path=path, expected=f"a UTF-8 {what}",
                             found=Described(f"a NUL byte at offset {text.index(chr(0))}"))
    return text


def _csv_table(data: bytes, path: str) -> _Table:
    lines = _decode(data, path, "CSV file").splitlines()
    head = 0
    while head < len(lines) and (not lines[head].strip() or lines[head].lstrip().startswith("#")):
        head += 1
    if head == len(lines):
        raise LogFormatError("no header row", path=path, expected="a header row naming the columns",
                             found=Described("an empty file" if not lines else "only comments and blank lines"))
    header_row = head + 1
    try:
        header = [h.strip() for h in next(csv.reader([lines[head]]))]
    except csv.Error as exc:
        raise LogFormatError(f"unreadable header row ({exc})", path=path, row=header_row) from exc
    for j, name in enumerate(header):
        if not name:
            raise LogFormatError(f"empty column name (column {j + 1})", path=path, row=header_row,
                                 expected="a name for every column", found=header)
        if name in header[:j]:
            raise LogFormatError(f"column '{name}' given twice", path=path, row=header_row, key=name,
                                 expected="each column name once", found=header)
    body = lines[head + 1:]
    filled = np.array([i for i, line in enumerate(body) if line.strip()], dtype=int)
    if filled.size:
        try:  # the common case, every cell a number: NumPy's own parser, several times faster
            fast = np.loadtxt(io.StringIO("\n".join(body)), delimiter=",", comments=None, ndmin=2, dtype=float)
        except ValueError:  # an empty or text cell, a quote, a ragged row: the reader below names it
            fast = None
        if fast is not None and fast.shape == (filled.size, len(header)):
            return _Table(columns={name: fast[:, j] for j, name in enumerate(header)}, kind="csv",
                          rows=filled + header_row + 1, header_row=header_row)
    try:
        records = list(csv.reader(body))
    except csv.Error as exc:  # a cell beyond the csv module's field limit...
        raise LogFormatError(f"unreadable row ({exc})", path=path, expected="numbers separated by commas",
                             found=Described("text the CSV reader refuses")) from exc
    if len(records) != len(body):
        raise LogFormatError("a quoted cell spans lines", path=path, expected="one sample per line",
                             found=Described(f"{len(records)} records on {len(body)} lines"))
    lengths = np.fromiter(map(len, records), dtype=int, count=len(records))
    rows = np.arange(len(body)) + header_row + 1
    single = np.flatnonzero(lengths == 1)
    blank = lengths == 0
    if single.size:
        blank[single] = np.char.strip(np.array([records[i][0] for i in single], dtype=str)) == ""
    bad = np.flatnonzero(~blank & (lengths != len(header)))
    if bad.size:
        i = int(bad[0])
        raise LogFormatError("wrong number of cells", path=path, row=int(rows[i]),
                             expected=f"{len(header)} cells as in the header (row {header_row})",
                             found=Described(f"{lengths[i]} cells"))
    keep = np.flatnonzero(~blank)
    if keep.size == 0:
        raise LogFormatError("no data rows", path=path, row=header_row,
                             expected=f"at least {MIN_SAMPLES} rows below the header", found=Described("none"))
    table = np.array([records[i] for i in keep], dtype=str).reshape(keep.size, len(header))
    columns = {name: table[:, j] for j, name in enumerate(header)}
    return _Table(columns=columns, kind="csv", rows=rows[keep], header_row=header_row)


def _npz_table(data: bytes, path: str) -> _Table:
    try:
        npz = np.load(io.BytesIO(data), allow_pickle=False)
    except Exception as exc:  # numpy raises ValueError, OSError, EOFError, BadZipFile... on other bytes
        raise LogFormatError("not a readable NPZ archive", path=path, expected="a .npz archive of named 1-D arrays",
                             found=Described("other bytes (pickled data is never loaded)" if "pickle" in str(exc)
                                             else f"{type(exc).__name__}: {exc}")) from exc
    if not isinstance(npz, np.lib.npyio.NpzFile):
        raise LogFormatError("not an NPZ archive", path=path, expected="a .npz archive of named 1-D arrays",
                             found=Described("a single .npy array"))
    out = {}
    with npz:
        for name in npz.files:
            # the declared shape first: a header may claim more than the machine holds
            check_declared_size(npz, name, path, LogFormatError, "a log")
            try:
                out[name] = npz[name]
            except LogFormatError:
                raise
            except ValueError as exc:
                if "pickle" in str(exc) or "object" in str(exc):
                    raise LogFormatError("pickled (object) array refused", path=path, key=name,
                                         expected="numeric arrays (loaded with allow_pickle=False)",
                                         found=Described("an object array")) from exc
                raise LogFormatError(f"damaged NPZ entry ({exc})", path=path, key=name) from exc
            except Exception as exc:  # KeyError, OSError, EOFError, BadZipFile, SyntaxError on damaged members
                raise LogFormatError(f"damaged NPZ entry ({type(exc).__name__}: {exc})", path=path, key=name) from exc
    return _Table(columns=out, kind="npz")


def _mat_table(data: bytes, path: str) -> _Table:
    from legbridge.mapping.readers.mat_reader import load_mat

    doc = load_mat(data, path, LogFormatError, "a log")
    doc = {k: v for k, v in doc.items() if not k.startswith("__")}
    if len(doc) == 1 and isinstance(next(iter(doc.values())), dict):
        name, fields = next(iter(doc.items()))
        return _Table(columns=dict(fields), kind="mat", prefix=name + ".")
    for k, v in doc.items():
        if isinstance(v, dict):
            raise LogFormatError("a struct among other variables", path=path, key=k,
                                 expected="one 1-D variable per column, or a single struct whose fields are the columns",
                                 found=Described(f"struct '{k}' and {len(doc) - 1} other variable(s)"))
    return _Table(columns=doc, kind="mat")


# ------------------------------------------------------------------------------------------- mapping

def _conventional_layout(columns, joints, legs, path: str, table: _Table) -> _Layout:
    known = {}
    for j in joints:
        for q in JOINT_QUANTITIES:
            known[f"{j}_{SUFFIXES[q]}"] = (j, q)
    for leg in legs:
        for q in LEG_QUANTITIES:
            known[f"{leg}_{SUFFIXES[q]}"] = (leg, q)
    for q in ROBOT_QUANTITIES:
        known[SUFFIXES[q]] = ("robot", q)
    accepted = [TIME_COLUMN, SYNC_COLUMN] + list(known)
    unknown = [c for c in columns if c not in known and c not in (TIME_COLUMN, SYNC_COLUMN)]
    if unknown:
        shown = ", ".join(repr(c) for c in unknown[:5]) + (f" and {len(unknown) - 5} more" if len(unknown) > 5 else "")
        raise LogFormatError(f"unknown column(s) {shown}", path=path, **table.where(unknown[0]),
                             expected=f"only the conventional names {accepted}", found=unknown[0],
                             hint="To read other names or units, or to ignore columns, pass a mapping file (--log-map MAP.toml)")
    if TIME_COLUMN not in columns:
        raise LogFormatError(f"missing column '{TIME_COLUMN}'", path=path, **table.where(TIME_COLUMN), expected=f"a column '{TIME_COLUMN}' [s]",
                             found=Described(f"columns {list(columns)}"), hint="Or pass a mapping file naming the time column (--log-map MAP.toml)")
    entries = []
    for c in columns:
        if c in known:
            owner, q = known[c]
            entries.append(_Entry(column=c, owner=owner, quantity=q, unit=next(iter(UNITS[q]))))
    return _Layout(TIME_COLUMN, "s", SYNC_COLUMN if SYNC_COLUMN in columns else None, (), tuple(entries), None)


def _text(value, path: str, key: str, expected: str) -> str:
    if not isinstance(value, str) or not value.strip():
        raise LogFormatError(path=path, key=key, expected=expected,
                             found=value if isinstance(value, str) else Described(f"a {type(value).__name__}"))
    return value


def _one_of(value, choices, path: str, key: str, what: str) -> str:
    if not isinstance(value, str) or value not in choices:
        raise LogFormatError(f"unknown {what}", path=path, key=key, expected=f"one of {list(choices)}",
                             found=value if isinstance(value, str) else Described(f"a {type(value).__name__}"))
    return value


def _table_of(value, path: str, key: str, expected: str) -> dict:
    if not isinstance(value, dict):
        raise LogFormatError(path=path, key=key, expected=expected, found=Described(f"a {type(value).__name__}"))
    return value


def _unknown_keys(table: dict, allowed, path: str, key: str) -> None:
    extra = [k for k in table if k not in allowed]
    if extra:
        raise LogFormatError(f"unknown key '{extra[0]}'", path=path, key=f"{key}.{extra[0]}" if key else extra[0],
                             expected=f"only {list(allowed)}", found=extra[0])


def _entry(spec, owner: str, quantity: str, path: str, key: str) -> _Entry:
    spec = _table_of(spec, path, key, "an inline table such as { column = \"...\", unit = \"...\" }")
    allowed = ["column"] + ([] if quantity == "contact" else ["unit"])
    if quantity == "current":
        allowed.append("convention")
    if quantity in ("position", "velocity"):
        allowed += ["side", "gear_ratio"]
    _unknown_keys(spec, allowed, path, key)
    if "column" not in spec:
        raise LogFormatError("no column named", path=path, key=f"{key}.column", expected="the log column's name",
                             found=Described("nothing"))
    column = _text(spec["column"], path, f"{key}.column", "the log column's name (text)")
    if quantity == "contact":
        unit = "-"
    elif "unit" not in spec:
        raise LogFormatError("no unit given", path=path, key=f"{key}.unit", expected=f"one of {list(UNITS[quantity])}",
                             found=Described("nothing"))
    else:
        unit = _one_of(spec["unit"], UNITS[quantity], path, f"{key}.unit", f"unit for {quantity}")
    convention = _one_of(spec.get("convention", "dc"), CURRENT_CONVENTIONS, path, f"{key}.convention", "current convention")
    side = _one_of(spec.get("side", "joint"), SIDES, path, f"{key}.side", "side")
    ratio = None
    if side == "motor":
        if "gear_ratio" not in spec:
            raise LogFormatError("motor side without a gear ratio", path=path, key=f"{key}.gear_ratio",
                                 expected="a positive number (motor turns per joint turn)", found=Described("nothing"))
        r = spec["gear_ratio"]
        if isinstance(r, bool) or not isinstance(r, (int, float)) or not np.isfinite(r) or r <= 0:
            raise LogFormatError("not a gear ratio", path=path, key=f"{key}.gear_ratio",
                                 expected="a positive finite number (motor turns per joint turn)",
                                 found=r if isinstance(r, (int, float, str)) else Described(f"a {type(r).__name__}"))
        ratio = float(r)
    elif "gear_ratio" in spec:
        raise LogFormatError("gear ratio on the joint side", path=path, key=f"{key}.gear_ratio",
                             expected="gear_ratio only with side = \"motor\"", found=Described(f"side = {side!r}"))
    return _Entry(column=column, owner=owner, quantity=quantity, unit=unit, convention=convention, gear_ratio=ratio, key=key)


def _mapping_layout(mpath: str, joints, legs) -> _Layout:
    data, _ = _read_bytes(mpath, "mapping file")
    text = _decode(data, mpath, "TOML mapping file")
    try:
        doc = tomllib.loads(text)
    except tomllib.TOMLDecodeError as exc:
        raise LogFormatError(f"not valid TOML ({exc})", path=mpath) from exc
    _unknown_keys(doc, MAPPING_SECTIONS, mpath, "")
    if "time" not in doc:
        raise LogFormatError("no [time] table", path=mpath, key="time", expected="a [time] table with column and unit",
                             found=Described(f"tables {list(doc)}"))
    tt = _table_of(doc["time"], mpath, "time", "a table [time]")
    _unknown_keys(tt, TIME_KEYS, mpath, "time")
    for k in ("column", "unit"):
        if k not in tt:
            raise LogFormatError(f"no time {k}", path=mpath, key=f"time.{k}",
                                 expected="the time column's name" if k == "column" else f"one of {list(UNITS['time'])}",
                                 found=Described("nothing"))
    tcol = _text(tt["column"], mpath, "time.column", "the time column's name (text)")
    tunit = _one_of(tt["unit"], UNITS["time"], mpath, "time.unit", "time unit")
    sync = _text(tt["sync"], mpath, "time.sync", "the sync column's name (text)") if "sync" in tt else None
    ignore = tt.get("ignore", [])
    if not isinstance(ignore, list):
        raise LogFormatError(path=mpath, key="time.ignore", expected="a list of column names",
                             found=Described(f"a {type(ignore).__name__}"))
    for i, c in enumerate(ignore):
        _text(c, mpath, f"time.ignore[{i}]", "a column name (text)")
    entries = []
    for section, names, quantities in (("joints", joints, JOINT_QUANTITIES), ("legs", legs, LEG_QUANTITIES)):
        groups = _table_of(doc.get(section, {}), mpath, section, f"tables [{section}.<name>]")
        for owner, table in groups.items():
            if owner not in names:
                raise LogFormatError(f"unknown {section[:-1]} '{owner}'", path=mpath, key=f"{section}.{owner}",
                                     expected=f"one of the trajectory's {section} {list(names)}", found=owner)
            table = _table_of(table, mpath, f"{section}.{owner}", f"a table [{section}.{owner}]")
            _unknown_keys(table, quantities, mpath, f"{section}.{owner}")
            entries += [_entry(spec, owner, q, mpath, f"{section}.{owner}.{q}") for q, spec in table.items()]
    robot = _table_of(doc.get("robot", {}), mpath, "robot", "a table [robot]")
    _unknown_keys(robot, ROBOT_QUANTITIES, mpath, "robot")
    entries += [_entry(spec, "robot", q, mpath, f"robot.{q}") for q, spec in robot.items()]

    seen = {tcol: "time.column"}
    if sync is not None:
        seen.setdefault(sync, "time.sync")
        if seen[sync] != "time.sync":
            raise LogFormatError("column mapped twice", path=mpath, key="time.sync",
                                 expected="each log column for one quantity", found=Described(f"'{sync}' also at time.column"))
    for e in entries:
        key = f"{e.key}.column"
        if e.column in seen:
            raise LogFormatError("column mapped twice", path=mpath, key=key, expected="each log column for one quantity",
                                 found=Described(f"'{e.column}' also at {seen[e.column]}"))
        seen[e.column] = key
    for i, c in enumerate(ignore):
        if c in seen:
            raise LogFormatError("column both mapped and ignored", path=mpath, key=f"time.ignore[{i}]",
                                 expected="a column that is not mapped", found=Described(f"'{c}', mapped at {seen[c]}"))
    return _Layout(tcol, tunit, sync, tuple(ignore), tuple(entries), mpath)


def _check_mapping_against_log(layout: _Layout, table: _Table, path: str) -> None:
    cols = list(table.columns)
    named = [("time.column", layout.time_column)] + ([("time.sync", layout.sync_column)] if layout.sync_column else [])
    named += [(f"{e.key}.column", e.column) for e in layout.entries]
    named += [(f"time.ignore[{i}]", c) for i, c in enumerate(layout.ignore)]
    shown = cols[:20] + (["..."] if len(cols) > 20 else [])
    for key, c in named:
        if c not in table.columns:
            raise LogFormatError(f"mapped column missing from the log {path}", path=layout.mapping_path, key=key,
                                 expected=f"a column of the log, one of {shown}", found=c)
    used = {c for _, c in named}
    extra = [c for c in cols if c not in used]
    if extra:
        raise LogFormatError(f"column neither mapped nor ignored in {layout.mapping_path}", path=path, **table.where(extra[0]),
                             expected="every log column mapped to a quantity or listed in [time] ignore", found=extra[0],
                             hint=f"Add it to ignore = [...] in {layout.mapping_path} to skip it")


# -------------------------------------------------------------------------------------------- values

def _numbers(table: _Table, column: str, path: str) -> np.ndarray:
    """A column as float (NaN where empty); text or non-1-D arrays are refused naming the column."""
    v = table.columns[column]
    if table.kind == "csv" and v.dtype.kind == "U":
        cells = np.char.strip(v)
        empty = cells == ""
        cells = np.where(empty, "nan", cells)
        try:
            return cells.astype(float)
        except ValueError:
            for i, cell in enumerate(cells.tolist()):  # error path only: find the cell to name
                try:
                    float(cell)
                except ValueError:
                    raise LogFormatError("not a number", path=path, **table.where(column, i),
                                         expected="a number or an empty cell", found=cell) from None
            raise
    if isinstance(v, (bool, np.bool_)) or not isinstance(v, (int, float, np.integer, np.floating, np.ndarray)):
        raise LogFormatError(path=path, **table.where(column), expected="a 1-D numeric array",
                             found=Described(f"a {type(v).__name__}"))
    a = np.atleast_1d(np.asarray(v))
    if a.ndim == 2 and 1 in a.shape:
        a = a.ravel()
    if a.dtype.kind not in "iufb":
        raise LogFormatError(path=path, **table.where(column), expected="a 1-D numeric array",
                             found=Described(f"dtype {a.dtype}"))
    if a.ndim != 1:
        raise LogFormatError(path=path, **table.where(column), expected="a 1-D array (one value per sample)",
                             found=Described(f"shape {a.shape}"))
    return a.astype(float)


def _empty(table: _Table) -> Described:
    return Described("an empty cell" if table.kind == "csv" else "NaN (an empty sample)")


def _first(mask: np.ndarray) -> int | None:
    bad = np.flatnonzero(mask)
    return int(bad[0]) if bad.size else None


def _to_si(raw: np.ndarray, unit: str, quantity: str) -> np.ndarray:
    factor, offset = UNITS[quantity][unit]
    return raw * factor + offset


def _si_unit(quantity: str) -> str:
    return {"time": "s", **JOINT_QUANTITIES, **LEG_QUANTITIES, **ROBOT_QUANTITIES}[quantity]


def _check_magnitude(si: np.ndarray, raw: np.ndarray, unit: str, quantity: str, column: str, table: _Table, path: str) -> None:
    i = _first(np.abs(si) > MAX_MAGNITUDE)
    if i is not None:
        raise LogFormatError("value is not physical for a legged robot", path=path, **table.where(column, i),
                             expected=f"a magnitude up to {MAX_MAGNITUDE:g} {_si_unit(quantity)}",
                             found=Described(f"{raw[i]:g} {unit}"))


def _time(table: _Table, layout: _Layout, path: str) -> np.ndarray:
    col = layout.time_column
    raw = _numbers(table, col, path)
    i = _first(~np.isfinite(raw))
    if i is not None:
        raise LogFormatError("time is not a finite number", path=path, **table.where(col, i), expected="a finite time",
                             found=_empty(table) if np.isnan(raw[i]) else float(raw[i]))
    if raw.size < MIN_SAMPLES:
        raise LogFormatError("log too short", path=path, **table.where(col), expected=f"at least {MIN_SAMPLES} samples",
                             found=Described(f"{raw.size} sample(s)"))
    t = _to_si(raw, layout.time_unit, "time")
    _check_magnitude(t, raw, layout.time_unit, "time", col, table, path)
    i = _first(np.diff(t) <= 0.0)
    if i is not None:
        raise LogFormatError("time does not increase", path=path, **table.where(col, i + 1),
                             expected=f"a time above the previous sample's {raw[i]:g} {layout.time_unit} (strictly increasing)",
                             found=float(raw[i + 1]))
    return t


def _channel(e: _Entry, table: _Table, n: int, path: str, notes: list) -> Channel:
    raw = _numbers(table, e.column, path)
    if raw.size != n:
        raise LogFormatError("column length differs from the time column's", path=path, **table.where(e.column),
                             expected=f"{n} samples (as the time column)", found=Described(f"{raw.size} samples"))
    i = _first(np.isinf(raw))
    if i is not None:
        raise LogFormatError("value is not finite", path=path, **table.where(e.column, i),
                             expected="a finite number or an empty cell", found=float(raw[i]))
    if e.quantity == "contact":
        i = _first(~np.isin(raw, (0.0, 1.0)))
        if i is not None:
            raise LogFormatError("contact is not 0 or 1", path=path, **table.where(e.column, i), expected="0 or 1 in every sample",
                                 found=_empty(table) if np.isnan(raw[i]) else float(raw[i]))
        return Channel(owner=e.owner, quantity=e.quantity, values=frozen_array(raw == 1.0, dtype=bool), column=e.column)
    si = _to_si(raw, e.unit, e.quantity)
    if e.quantity == "current":
        si = current_to_dc_equivalent(si, e.convention)
    if e.gear_ratio is not None:
        si = si / e.gear_ratio
    _check_magnitude(si, raw, e.unit, e.quantity, e.column, table, path)
    if e.quantity in TEMPERATURES:
        lo, hi = TEMPERATURE_RANGE_C
        i = _first((si < lo) | (si > hi))
        if i is not None:
            raise LogFormatError("temperature out of range", path=path, **table.where(e.column, i),
                                 expected=f"{lo:g} to {hi:g} degC",
                                 found=Described(f"{raw[i]:g} {e.unit}" + (f" (= {si[i]:g} degC)" if e.unit != "degC" else "")))
    done = []
    if e.unit != next(iter(UNITS[e.quantity])):
        done.append(f"{e.unit} -> {_si_unit(e.quantity)}")
    if e.quantity == "current" and e.convention != "dc":
        done.append(f"{e.convention} -> DC-equivalent current")
    if e.gear_ratio is not None:
        done.append(f"motor side / gear ratio {e.gear_ratio:g}")
    empty = int(np.count_nonzero(np.isnan(raw)))
    if empty:
        done.append(f"{empty} empty sample(s) kept as NaN")
    if done:
        notes.append(f"{e.owner} {e.quantity} (column '{e.column}'): " + ", ".join(done))
    return Channel(owner=e.owner, quantity=e.quantity, values=frozen_array(si), column=e.column)


def _names(values, what: str) -> tuple[str, ...]:
    if isinstance(values, str) or not values or not all(isinstance(v, str) and v for v in values):
        raise UsageError(f"read_log needs the trajectory's {what} names", key=what,
                         expected="a non-empty sequence of names", found=Described(repr(values)))
    return tuple(values)


def read_log(path, mapping=None, *, joints, legs) -> HardwareLog:
    """Read a hardware log (.csv, .npz or .mat) into SI units, optionally through a TOML column mapping.

    ``joints`` are the trajectory's joint names (the legal owners of joint quantities), ``legs`` its
    leg names. The layout and the checks are in the module docstring; every problem is a
    LogFormatError (InputFileNotFound for a missing file) naming the file and the column, key or row.
    """
    joints, legs = _names(joints, "joints"), _names(legs, "legs")
    path = str(path)
    ext = Path(path).suffix.lower()
    if ext not in FORMATS:
        raise LogFormatError("unknown log format", path=path, expected=f"a file ending in one of {list(FORMATS)}",
                             found=ext or Described("no extension"))
    layout = _mapping_layout(str(mapping), joints, legs) if mapping is not None else None
    data, sha = _read_bytes(path, "log file")
    if not data:
        raise LogFormatError("empty file", path=path, expected=f"a {ext[1:].upper()} log", found=Described("0 bytes"))
    table = {".csv": _csv_table, ".npz": _npz_table, ".mat": _mat_table}[ext](data, path)
    if not table.columns:
        raise LogFormatError("no columns", path=path, expected="one column per logged quantity", found=Described("none"))
    if layout is None:
        layout = _conventional_layout(list(table.columns), joints, legs, path, table)
    else:
        _check_mapping_against_log(layout, table, path)
    t = _time(table, layout, path)
    notes: list[str] = []
    if layout.time_unit != "s":
        notes.append(f"time (column '{layout.time_column}'): {layout.time_unit} -> s")
    if layout.ignore:
        notes.append("ignored columns: " + ", ".join(layout.ignore))
    if layout.mapping_path:
        notes.append(f"columns mapped by {layout.mapping_path}")
    channels = tuple(_channel(e, table, t.size, path, notes) for e in layout.entries)
    sync = None
    if layout.sync_column is not None:
        raw = _numbers(table, layout.sync_column, path)
        if raw.size != t.size:
            raise LogFormatError("column length differs from the time column's", path=path, **table.where(layout.sync_column),
                                 expected=f"{t.size} samples (as the time column)", found=Described(f"{raw.size} samples"))
        i = _first(np.isinf(raw) | (np.abs(raw) > MAX_MAGNITUDE))
        if i is not None:
            raise LogFormatError("sync value is not a finite number", path=path, **table.where(layout.sync_column, i),
                                 expected=f"a finite number up to {MAX_MAGNITUDE:g}, or an empty cell", found=float(raw[i]))
        sync = frozen_array(raw)
    return HardwareLog(path=path, sha256=sha, time_s=frozen_array(t), channels=channels, sync=sync, notes=tuple(notes))
