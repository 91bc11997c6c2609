"""A generated corpus of bad hardware logs and column-mapping files (imported by test_log_reader.py).

Every case is made here from a small valid log (an INVENTED one-leg robot, joints hip and knee, 20
samples) in CSV, NPZ or MAT-file form, with or without a mapping file, then damaged in one way:
empty, header only, ragged, text in a number, duplicate or unknown columns, bad bytes, bad time,
absurd values, pickles, a version 7.3 MAT-file signature, mapping keys, units, joints and columns
that do not exist. Each must raise a LegbridgeError naming the file at fault (``blame``) and leave
every input byte-identical.
"""

from __future__ import annotations

import io
import struct
import zipfile
from dataclasses import dataclass, field

import numpy as np

JOINTS = ("hip", "knee")
LEGS = ("leg",)
N = 20


@dataclass
class LogCase:
    """files: name -> bytes (a value of None makes a folder); log / mapping: file names in the case folder;
    blame: which of the two the message must name ("log" or "mapping")."""

    name: str
    files: dict = field(default_factory=dict)
    log: str = "log.csv"
    mapping: str | None = None
    blame: str = "log"


def good_columns() -> dict:
    """The valid conventional log as column -> list of numbers (INVENTED values)."""
    t = np.round(np.arange(N) * 0.002, 6)
    return {
        "time_s": t.tolist(),
        "hip_position_rad": np.round(0.3 * np.sin(2 * np.pi * t / 0.04), 6).tolist(),
        "knee_position_rad": np.round(-0.8 + 0.2 * np.cos(2 * np.pi * t / 0.04), 6).tolist(),
        "knee_current_a": np.round(3.0 + np.sin(t * 50), 6).tolist(),
        "knee_winding_temp_c": [41.5] * N,
        "leg_contact": [0] * 8 + [1] * 8 + [0] * 4,
        "bus_voltage_v": [48.0] * N,
        "sync": [0] * 3 + [1] * (N - 3),
    }


def mapped_columns() -> dict:
    """The same log with its own column names and units, for MAPPING below."""
    g = good_columns()
    return {
        "t": [round(x * 1000, 6) for x in g["time_s"]],
        "hq": [round(float(np.rad2deg(x)), 6) for x in g["hip_position_rad"]],
        "kq": g["knee_position_rad"],
        "ki": g["knee_current_a"],
        "kT": [x + 273.15 for x in g["knee_winding_temp_c"]],
        "lc": g["leg_contact"],
        "vbus": g["bus_voltage_v"],
        "cpu": [0.5] * N,
    }


MAPPING = """\
[time]
column = "t"
unit = "ms"
ignore = ["cpu"]
[joints.hip]
position = { column = "hq", unit = "deg" }
[joints.knee]
position = { column = "kq", unit = "rad" }
current = { column = "ki", unit = "A", convention = "phase_rms" }
winding_temp = { column = "kT", unit = "K" }
[legs.leg]
contact = { column = "lc" }
[robot]
bus_voltage = { column = "vbus", unit = "V" }
"""


def csv_bytes(cols: dict, comments: str = "# invented log\n") -> bytes:
    """Columns -> CSV text (cells as given: numbers or strings)."""
    names = list(cols)
    lines = [",".join(names)] + [",".join(str(cols[c][i]) for c in names) for i in range(len(cols[names[0]]))]
    return (comments + "\n".join(lines) + "\n").encode()


def npz_bytes(arrays: dict) -> bytes:
    """Arrays -> NPZ bytes (numpy.savez, pickling allowed on write so that object arrays can be made)."""
    buf = io.BytesIO()
    np.savez(buf, **arrays)
    return buf.getvalue()


def mat_bytes(variables: dict) -> bytes:
    """Variables -> MAT-file (level 5) bytes."""
    import scipy.io

    buf = io.BytesIO()
    scipy.io.savemat(buf, variables)
    return buf.getvalue()


def _npy_member(shape: tuple) -> bytes:
    """A .npy header declaring ``shape`` of float64, with no data behind it."""
    header = f"{{'descr': '<f8', 'fortran_order': False, 'shape': {shape}, }}".encode()
    header += b" " * (63 - (10 + len(header)) % 64) + b"\n"
    return b"\x93NUMPY\x01\x00" + struct.pack("<H", len(header)) + header


def _zip(members: dict) -> bytes:
    buf = io.BytesIO()
    with zipfile.ZipFile(buf, "w") as z:
        for name, data in members.items():
            z.writestr(name, data)
    return buf.getvalue()


def _with(cols: dict, **changes) -> dict:
    out = {k: list(v) for k, v in cols.items()}
    for k, v in changes.items():
        if v is None:
            out.pop(k)
        else:
            out[k] = v
    return out


def _set(cols: dict, column: str, index: int, value) -> dict:
    out = {k: list(v) for k, v in cols.items()}
    out[column][index] = value
    return out


def _mapped(name: str, mapping: str, cols: dict | None = None, blame: str = "mapping") -> LogCase:
    return LogCase(name, {"log.csv": csv_bytes(cols or mapped_columns()), "map.toml": mapping.encode()},
                   mapping="map.toml", blame=blame)


def cases() -> list[LogCase]:
    """Every bad input, each one damage away from a valid log."""
    g = good_columns()
    floats = {k: np.asarray(v, dtype=float) for k, v in g.items()}
    out = [
        # ---- CSV, conventional names
        LogCase("csv-empty", {"log.csv": b""}),
        LogCase("csv-header-only", {"log.csv": b"time_s,hip_position_rad\n"}),
        LogCase("csv-only-comments", {"log.csv": b"# nothing logged\n\n# still nothing\n"}),
        LogCase("csv-ragged-row", {"log.csv": csv_bytes(g).replace(b"\n0.004,", b"\n0.004,1,", 1)}),
        LogCase("csv-text-in-number", {"log.csv": csv_bytes(_set(g, "knee_current_a", 5, "3.5A"))}),
        LogCase("csv-duplicate-column", {"log.csv": csv_bytes(g).replace(b"knee_current_a", b"hip_position_rad", 1)}),
        LogCase("csv-non-utf8", {"log.csv": csv_bytes(g).replace(b"invented", b"invent\xe9d\xff")}),
        LogCase("csv-nul-byte", {"log.csv": csv_bytes(g).replace(b"48.0", b"48\x00", 1)}),
        LogCase("csv-empty-column-name", {"log.csv": csv_bytes(g).replace(b"bus_voltage_v", b"", 1)}),
        LogCase("csv-unknown-column", {"log.csv": csv_bytes(_with(g, cpu_load=[0.1] * N))}),
        LogCase("csv-unknown-joint-column", {"log.csv": csv_bytes(_with(g, ankle_position_rad=[0.0] * N))}),
        LogCase("csv-no-time-column", {"log.csv": csv_bytes(_with(g, time_s=None))}),
        LogCase("csv-empty-time-cell", {"log.csv": csv_bytes(_set(g, "time_s", 7, ""))}),
        LogCase("csv-time-goes-back", {"log.csv": csv_bytes(_set(g, "time_s", 9, 0.001))}),
        LogCase("csv-time-repeats", {"log.csv": csv_bytes(_set(g, "time_s", 9, g["time_s"][8]))}),
        LogCase("csv-too-few-samples", {"log.csv": csv_bytes({k: v[:9] for k, v in g.items()})}),
        LogCase("csv-infinite-value", {"log.csv": csv_bytes(_set(g, "hip_position_rad", 4, "inf"))}),
        LogCase("csv-absurd-magnitude", {"log.csv": csv_bytes(_set(g, "bus_voltage_v", 4, 3e7))}),
        LogCase("csv-contact-two", {"log.csv": csv_bytes(_set(g, "leg_contact", 4, 2))}),
        LogCase("csv-contact-empty", {"log.csv": csv_bytes(_set(g, "leg_contact", 4, ""))}),
        LogCase("csv-temperature-absurd", {"log.csv": csv_bytes(_set(g, "knee_winding_temp_c", 4, 500))}),
        LogCase("csv-quoted-cell-spans-lines", {"log.csv": csv_bytes(_set(g, "hip_position_rad", 4, '"0.1\n0.2"'))}),
        LogCase("csv-folder-not-file", {"log.csv": None}),
        LogCase("csv-missing-file", {}),
        LogCase("unknown-extension", {"log.txt": csv_bytes(g)}, log="log.txt"),
        # ---- NPZ
        LogCase("npz-garbage", {"log.npz": b"PK\x03\x04 not really a zip archive"}, log="log.npz"),
        LogCase("npz-pickled-object", {"log.npz": npz_bytes({**floats, "sync": np.array([{"a": 1}] * N, dtype=object)})},
                log="log.npz"),
        LogCase("npz-2d-column", {"log.npz": npz_bytes({**floats, "hip_position_rad": np.ones((N, 2))})}, log="log.npz"),
        LogCase("npz-text-column", {"log.npz": npz_bytes({**floats, "knee_current_a": np.array(["3 A"] * N)})}, log="log.npz"),
        LogCase("npz-length-mismatch", {"log.npz": npz_bytes({**floats, "knee_current_a": floats["knee_current_a"][:-2]})},
                log="log.npz"),
        LogCase("npz-truncated", {"log.npz": npz_bytes(floats)[:300]}, log="log.npz"),
        LogCase("npz-huge-declared-shape", {"log.npz": _zip({"time_s.npy": _npy_member((10**12,))})}, log="log.npz"),
        LogCase("npz-time-with-nan", {"log.npz": npz_bytes({**floats, "time_s": np.where(np.arange(N) == 3, np.nan, floats["time_s"])})},
                log="log.npz"),
        # ---- MAT-file
        LogCase("mat-v73-signature", {"log.mat": (b"MAT-file, version 7.3, HDF5 schema 1.00 .".ljust(116, b" ") + b"\x00" * 8
                                                   + b"\x00\x02IM").ljust(512, b"\x00") + b"\x89HDF\r\n\x1a\n" * 8}, log="log.mat"),
        LogCase("mat-garbage", {"log.mat": b"\x00\x01not a MAT-file at all" * 10}, log="log.mat"),
        LogCase("mat-struct-and-variable", {"log.mat": mat_bytes({"log": dict(floats), "extra": floats["time_s"]})}, log="log.mat"),
        LogCase("mat-char-column", {"log.mat": mat_bytes({**floats, "bus_voltage_v": "forty-eight"})}, log="log.mat"),
        LogCase("mat-unknown-variable", {"log.mat": mat_bytes({**floats, "cpu": floats["time_s"]})}, log="log.mat"),
        # ---- mapping files (the CSV log of mapped_columns)
        _mapped("map-not-toml", "[time\ncolumn = t"),
        LogCase("map-non-utf8", {"log.csv": csv_bytes(mapped_columns()),
                                 "map.toml": MAPPING.encode().replace(b'"ms"', b'"\xb5s"')}, mapping="map.toml", blame="mapping"),
        _mapped("map-unknown-section", MAPPING + "[motors]\nx = 1\n"),
        _mapped("map-unknown-time-unit", MAPPING.replace('unit = "ms"', 'unit = "min"')),
        _mapped("map-unknown-position-unit", MAPPING.replace('unit = "deg"', 'unit = "degree"')),
        _mapped("map-unknown-joint", MAPPING.replace("[joints.hip]", "[joints.ankle]")),
        _mapped("map-unknown-leg", MAPPING.replace("[legs.leg]", "[legs.left]")),
        _mapped("map-unknown-quantity", MAPPING.replace("winding_temp =", "winding_temperature =")),
        _mapped("map-unknown-entry-key", MAPPING.replace('{ column = "kq", unit = "rad" }', '{ column = "kq", unit = "rad", scale = 2 }')),
        _mapped("map-no-time-unit", MAPPING.replace('unit = "ms"\n', "")),
        _mapped("map-no-unit", MAPPING.replace('{ column = "vbus", unit = "V" }', '{ column = "vbus" }')),
        _mapped("map-column-missing-from-log", MAPPING.replace('"vbus"', '"v_bus"')),
        _mapped("map-log-column-not-mapped", MAPPING.replace('ignore = ["cpu"]', "ignore = []"), blame="log"),
        _mapped("map-gear-ratio-on-joint-side", MAPPING.replace('{ column = "kq", unit = "rad" }', '{ column = "kq", unit = "rad", gear_ratio = 9 }')),
        _mapped("map-motor-side-without-ratio", MAPPING.replace('{ column = "kq", unit = "rad" }', '{ column = "kq", unit = "rad", side = "motor" }')),
        _mapped("map-negative-gear-ratio", MAPPING.replace('{ column = "kq", unit = "rad" }',
                                                           '{ column = "kq", unit = "rad", side = "motor", gear_ratio = -9 }')),
        _mapped("map-unknown-convention", MAPPING.replace('"phase_rms"', '"line_rms"')),
        _mapped("map-contact-with-unit", MAPPING.replace('{ column = "lc" }', '{ column = "lc", unit = "-" }')),
        _mapped("map-column-mapped-twice", MAPPING.replace('{ column = "vbus", unit = "V" }', '{ column = "ki", unit = "V" }')),
        _mapped("map-ignore-not-a-list", MAPPING.replace('ignore = ["cpu"]', 'ignore = "cpu"')),
        _mapped("map-ignored-and-mapped", MAPPING.replace('ignore = ["cpu"]', 'ignore = ["cpu", "kq"]')),
        _mapped("map-entry-not-a-table", MAPPING.replace('{ column = "vbus", unit = "V" }', '"vbus"')),
        _mapped("map-kelvin-too-cold", MAPPING, cols=_with(mapped_columns(), kT=[10.0] * N), blame="log"),
        LogCase("map-missing-file", {"log.csv": csv_bytes(mapped_columns())}, mapping="map.toml", blame="mapping"),
        LogCase("map-is-a-folder", {"log.csv": csv_bytes(mapped_columns()), "map.toml": None}, mapping="map.toml", blame="mapping"),
    ]
    return out
