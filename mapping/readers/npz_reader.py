"""NPZ plans (numpy.savez / savez_compressed), read with ``allow_pickle=False``.

Flat layout, one array per entry (``i`` = 0, 1, ... in case order; names in ``case_names``)::

    format                       0-d text  'legbridge.plan/1'          required
    units                        0-d text  'si' | 'nondimensional'      required
    case_names                   1-d text  case names, in order         required
    cases/<i>/<column>           1-d float one column of case i (names as in CSV/JSON:
                                 time_s, leg_length_m, leg_angle_rad, force_x_n + force_z_n
                                 or axial_force_n, optional body_*, actuator_length_m,
                                 spring_deflection_m); cases/<i>/phase is 1-d text
    cases/<i>/ground_height_m    0-d float the case's ground height     optional (default 0)
    meta/nominal_leg_length_m, meta/mass_kg, meta/gravity_m_s2   0-d float   optional (scaling)
    metadata/<key>               0-d text or number  -> Plan.metadata[key]
    metadata_json/<key>          0-d text, JSON of any other value (table, list, true/false, null)
    model/<key>, model_json/<key>   the same for Plan.metadata['model'][key]
    policy/time_s, policy/actuator_length_m, policy/touchdown_angle_rad   1-d float  optional

Object (pickled) arrays are refused: they can run code when loaded.
"""

from __future__ import annotations
from legbridge.robots.errors import Described

import io
import zipfile

import numpy as np

from legbridge.robots.errors import PlanFormatError

from . import scaling, validation
from .json_reader import FORMAT_TAG
from .raw import RawCase, RawPlan, as_float_array, merge_json_entries, read_file_bytes

GROUPS = ("meta", "metadata", "metadata_json", "model", "model_json", "policy", "cases")
TOP_NAMES = ("format", "units", "case_names")


def _text(arr: np.ndarray, path: str, key: str) -> str:
    if arr.ndim != 0 or arr.dtype.kind not in "US":
        raise PlanFormatError(path=path, key=key, expected="a single text value (0-d string array)",
                              found=Described(f"dtype {arr.dtype}, shape {arr.shape}"))
    return str(arr.item())


def _scalar(arr: np.ndarray, path: str, key: str):
    """A 0-d text or number -> str / int / float."""
    if arr.ndim != 0 or arr.dtype.kind not in "USiuf":
        raise PlanFormatError(path=path, key=key, expected="a single text or number (0-d array)",
                              found=Described(f"dtype {arr.dtype}, shape {arr.shape}"))
    v = arr.item()
    return v.decode() if isinstance(v, bytes) else v


MAX_ELEMENTS = 100_000_000
"""An NPZ member declaring more elements than this is refused before it is read (its header is read
first): 1e8 samples is 28 hours at 1 kHz."""


def check_declared_size(npz, name: str, path: str, error=PlanFormatError, what: str = "a plan") -> None:
    """Refuse a member whose .npy header declares an absurd or impossible shape, before allocating it
    (``error``: the reader's own LegbridgeError class; plans and hardware logs share this check)."""
    member = name if name.endswith(".npy") else name + ".npy"
    try:
        with npz.zip.open(member) as fh:
            version = np.lib.format.read_magic(fh)
            read = np.lib.format.read_array_header_1_0 if version == (1, 0) else np.lib.format.read_array_header_2_0
            shape, _, dtype = read(fh, max_header_size=10000)
    except (KeyError, ValueError, OSError, EOFError, zipfile.BadZipFile, SyntaxError) as exc:
        raise error(f"damaged NPZ entry ({exc or type(exc).__name__})", path=path, key=name) from exc
    n = 1
    for d in shape:
        n *= int(d)
    if any(int(d) < 0 for d in shape) or n > MAX_ELEMENTS:
        raise error(f"array too large for {what}", path=path, key=name,
                    expected=f"at most {MAX_ELEMENTS:,} elements", found=Described(f"shape {tuple(shape)}"))


def load_npz_arrays(data: bytes, path: str) -> dict:
    """All arrays of an NPZ file, name -> array; refuses pickled/object arrays and non-NPZ files."""
    try:
        npz = np.load(io.BytesIO(data), allow_pickle=False)
    except (ValueError, OSError, EOFError, zipfile.BadZipFile) as exc:
        if "pickle" in str(exc):  # numpy's word for bytes it cannot place; legbridge never unpickles
            raise PlanFormatError("not an NPZ archive", path=path, expected="a .npz archive of named arrays",
                                  found=Described("other bytes (legbridge never loads pickled data)")) from exc
        raise PlanFormatError(f"not a readable NPZ file ({exc or type(exc).__name__})", path=path) from exc
    if not isinstance(npz, np.lib.npyio.NpzFile):
        raise PlanFormatError("not an NPZ archive", path=path, expected="a .npz archive of named arrays",
                              found=Described("a single .npy array"))
    out = {}
    with npz:
        for name in npz.files:
            check_declared_size(npz, name, path)
            try:
                out[name] = npz[name]
            except ValueError as exc:
                raise PlanFormatError("pickled (object) array refused", path=path, key=name,
                                      expected="plain numeric or text arrays (loaded with allow_pickle=False)",
                                      found=Described("an object array"), hint="Save numbers as float arrays and text as str arrays") from exc
            except (OSError, zipfile.BadZipFile) as exc:
                raise PlanFormatError(f"damaged NPZ entry ({exc})", path=path, key=name) from exc
    return out


def read_npz_raw(path: str) -> RawPlan:
    """Read and check an NPZ plan file; file units (layout in the module docstring)."""
    data, sha = read_file_bytes(path)
    arrays = load_npz_arrays(data, path)
    for name in arrays:
        group = name.split("/", 1)[0]
        if "/" in name and group not in GROUPS or "/" not in name and name not in TOP_NAMES:
            raise PlanFormatError(f"unknown array '{name}'", path=path, key=name,
                                  expected=f"{list(TOP_NAMES)} or names under {[g + '/' for g in GROUPS]}", found=name)
    for name in TOP_NAMES:
        if name not in arrays:
            raise PlanFormatError(f"missing array '{name}'", path=path, key=name, expected=f"arrays {list(TOP_NAMES)}",
                                  found=sorted(arrays))
    tag = _text(arrays["format"], path, "format")
    if tag != FORMAT_TAG:
        raise PlanFormatError("not a legbridge plan", path=path, key="format", expected=repr(FORMAT_TAG), found=tag)
    units = scaling.check_units(_text(arrays["units"], path, "units"), path)
    names_arr = arrays["case_names"]
    if names_arr.ndim != 1 or names_arr.dtype.kind not in "US":
        raise PlanFormatError(path=path, key="case_names", expected="a 1-d array of text",
                              found=Described(f"dtype {names_arr.dtype}, shape {names_arr.shape}"))
    names = [str(n) for n in names_arr.tolist()]

    given, metadata, model, policy = {}, {}, None, None
    texts = {"metadata": {}, "model": {}}
    cols_by_case = [dict() for _ in names]
    gh = [None] * len(names)
    for name, arr in arrays.items():
        parts = name.split("/")
        if parts[0] == "meta":
            key = parts[1] if len(parts) == 2 else name
            if key not in scaling.SCALE_KEYS:
                raise PlanFormatError(f"unknown array '{name}'", path=path, key=name,
                                      expected=f"meta/ entries {list(scaling.SCALE_KEYS)}", found=name)
            given[key] = scaling.positive_number(_scalar(arr, path, name), path, name)
        elif parts[0] == "metadata":
            metadata["/".join(parts[1:])] = _scalar(arr, path, name)
        elif parts[0] in ("metadata_json", "model_json"):
            texts[parts[0][: -len("_json")]]["/".join(parts[1:])] = _text(arr, path, name)
        elif parts[0] == "model":
            model = model or {}
            model["/".join(parts[1:])] = _scalar(arr, path, name)
        elif parts[0] == "policy":
            policy = policy or {}
            policy["/".join(parts[1:])] = as_float_array(arr, path, name)
        elif parts[0] == "cases":
            if len(parts) != 3 or not parts[1].isdigit() or int(parts[1]) >= len(names):
                raise PlanFormatError(f"unknown array '{name}'", path=path, key=name,
                                      expected=f"cases/<i>/<column> with i in 0..{len(names) - 1} (case_names)", found=name)
            i, col = int(parts[1]), parts[2]
            if col == "ground_height_m":
                v = _scalar(arr, path, name)
                if isinstance(v, str):
                    raise PlanFormatError(path=path, key=name, expected="a number [m]", found=v)
                gh[i] = float(v)
            elif col == validation.PHASE_COLUMN:
                if arr.ndim != 1 or arr.dtype.kind not in "US":
                    raise PlanFormatError(path=path, key=name, expected="a 1-d array of 'stance'/'flight'",
                                          found=Described(f"dtype {arr.dtype}, shape {arr.shape}"))
                cols_by_case[i][col] = np.char.lower(np.char.strip(arr.astype(str)))
            elif col not in validation.KNOWN_COLUMNS:
                raise PlanFormatError(f"unknown column '{col}' in case '{names[i]}'", path=path, key=name,
                                      expected=f"only known columns {list(validation.KNOWN_COLUMNS)}", found=col)
            else:
                cols_by_case[i][col] = as_float_array(arr, path, name)
    metadata = merge_json_entries(metadata, texts["metadata"], path, "metadata", "/")
    model = merge_json_entries(model, texts["model"], path, "model", "/")
    cases = [
        RawCase(name=n, columns=cols_by_case[i], ground_height_m=gh[i], key_template=f"cases/{i}/{{column}}",
                ground_height_key=f"cases/{i}/ground_height_m")
        for i, n in enumerate(names)
    ]
    return RawPlan(path=path, sha256=sha, units=units, cases=cases, given=given, metadata=metadata, model=model,
                   policy=policy, policy_key="policy", policy_sep="/")
