"""MAT-file plans (level 5 / version 7 MAT-files, read with scipy.io.loadmat; v7.3/HDF5 files are refused).

Variables (MAT-file notation; keys as in the CSV/JSON formats)::

    format                 char     'legbridge.plan/1'                       required
    units                  char     'si' | 'nondimensional'                   required
    nominal_leg_length_m, mass_kg, gravity_m_s2   double scalars           optional (scaling)
    metadata               struct   free fields (text or numbers) -> Plan.metadata
    metadata_json          struct   fields holding JSON text of any other value (tables, lists,
                                    true/false, null) -> Plan.metadata, decoded
    model, model_json      struct   spring-mass parameters -> Plan.metadata['model'], the same way
    policy                 struct   .time_s, .actuator_length_m, .touchdown_angle_rad (vectors)
    cases                  1xN cell array of structs (or 1xN struct array), one per case:
        .name              char     case name                                  required
        .ground_height_m   double   the case's ground height [m]              optional (default 0)
        .time_s, .leg_length_m, .leg_angle_rad, .force_x_n + .force_z_n (or .axial_force_n)
                           double vectors (row or column)
        .phase             cellstr or char matrix of 'stance'/'flight'         optional
        .body_x_m, .body_z_m, .body_vx_m_s, .body_vz_m_s, .actuator_length_m,
        .spring_deflection_m   double vectors                                 optional

Written from a numerical environment that saves MAT-files: a struct ``c`` with ``c.name``,
``c.time_s`` and so on per case, ``cases = {c, c2}``, then save ``format``, ``units`` and ``cases``.
Error messages name entries in cell/struct notation, ``cases{2}.time_s(4)`` (1-based).
"""

from __future__ import annotations
from legbridge.robots.errors import Described

import io

import numpy as np

from legbridge.robots.errors import PlanFormatError

from . import scaling, validation
from .json_reader import FORMAT_TAG
from .raw import RawCase, RawPlan, as_float_array, merge_json_entries, read_file_bytes

TOP_VARIABLES = ("format", "units") + scaling.SCALE_KEYS + ("metadata", "metadata_json", "model", "model_json", "policy", "cases")
CASE_FIELDS = ("name", "ground_height_m") + validation.KNOWN_COLUMNS


def _text(v, path: str, key: str) -> str:
    if isinstance(v, np.ndarray) and v.dtype.kind in "US" and v.size == 1:
        v = str(v.reshape(-1)[0])
    if not isinstance(v, str):
        raise PlanFormatError(path=path, key=key, expected="a char array (text)", found=type(v).__name__)
    return v


def _vector(v, path: str, key: str) -> np.ndarray:
    if isinstance(v, (int, float, np.integer, np.floating)) and not isinstance(v, (bool, np.bool_)):
        return np.atleast_1d(np.asarray(v, dtype=float))  # a 1-sample vector comes back as a scalar
    if isinstance(v, np.ndarray):
        return as_float_array(np.ravel(v) if v.ndim == 2 and 1 in v.shape else v, path, key)
    raise PlanFormatError(path=path, key=key, expected="a double vector", found=type(v).__name__)


def _scalar(v, path: str, key: str):
    if isinstance(v, np.ndarray) and v.size == 1 and v.dtype.kind in "iuf":
        v = v.reshape(-1)[0].item()
    if isinstance(v, (np.integer, np.floating)):
        v = v.item()
    if isinstance(v, bool) or not isinstance(v, (str, int, float)):
        raise PlanFormatError(path=path, key=key, expected="text or a number", found=type(v).__name__)
    return v


def _struct(v, path: str, key: str) -> dict:
    if not isinstance(v, dict):
        raise PlanFormatError(path=path, key=key, expected="a struct", found=type(v).__name__)
    return v


def _phase(v, path: str, key: str) -> np.ndarray:
    items = [v] if isinstance(v, str) else list(np.ravel(v)) if isinstance(v, (np.ndarray, list)) else None
    if items is None or not all(isinstance(s, str) for s in items):
        raise PlanFormatError(path=path, key=key, expected="a cellstr or char matrix of 'stance'/'flight'",
                              found=type(v).__name__)
    return np.array([s.strip().lower() for s in items], dtype=str)


MAX_ELEMENTS = 100_000_000
"""A MAT-file variable declaring more elements than this is refused before it is loaded."""


def load_mat(data: bytes, path: str, error=PlanFormatError, what: str = "a plan") -> dict:
    """A MAT-file's variables (scipy.io.loadmat, cells simplified), each declared size checked against
    MAX_ELEMENTS before anything is loaded; damaged files and version 7.3 (HDF5) are refused with
    ``error`` (the reader's own LegbridgeError class)."""
    import scipy.io

    try:  # the declared sizes first: a header may claim more than the machine holds
        for name, shape, _ in scipy.io.whosmat(io.BytesIO(data)):
            n = 1
            for d in shape:
                n *= int(d)
            if n > MAX_ELEMENTS:
                raise error(f"array too large for {what}", path=path, key=name,
                            expected=f"at most {MAX_ELEMENTS:,} elements", found=Described(f"shape {tuple(shape)}"))
    except error:
        raise
    except Exception:  # damaged or another version: loadmat below says which
        pass
    try:
        return scipy.io.loadmat(io.BytesIO(data), simplify_cells=True)
    except NotImplementedError as exc:  # v7.3 (HDF5) files
        raise error("unsupported MAT-file version", path=path, expected="a MAT-file of version 7 or older",
                    found=Described("version 7.3 (HDF5)"), hint="save it with the '-v7' option") from exc
    except Exception as exc:  # scipy raises ValueError, TypeError, OSError... on damaged files
        raise error(f"not a readable MAT-file ({type(exc).__name__}: {exc})", path=path) from exc


def read_mat_raw(path: str) -> RawPlan:
    """Read and check a MAT-file plan; file units (layout in the module docstring)."""
    data, sha = read_file_bytes(path)
    doc = load_mat(data, path)
    doc = {k: v for k, v in doc.items() if not k.startswith("__")}
    for k in doc:
        if k not in TOP_VARIABLES:
            raise PlanFormatError(f"unknown variable '{k}'", path=path, key=k, expected=f"only {list(TOP_VARIABLES)}", found=k)
    for k in ("format", "units", "cases"):
        if k not in doc:
            raise PlanFormatError(f"missing variable '{k}'", path=path, key=k,
                                  expected="variables 'format', 'units', 'cases'", found=sorted(doc))
    tag = _text(doc["format"], path, "format")
    if tag != FORMAT_TAG:
        raise PlanFormatError("not a legbridge plan", path=path, key="format", expected=repr(FORMAT_TAG), found=tag)
    units = scaling.check_units(_text(doc["units"], path, "units"), path)
    given = {k: scaling.positive_number(_scalar(doc[k], path, k), path, k) for k in scaling.SCALE_KEYS if k in doc}
    metadata = {k: _scalar(v, path, f"metadata.{k}") for k, v in _struct(doc.get("metadata", {}), path, "metadata").items()}
    model = None
    if "model" in doc:
        model = {k: _scalar(v, path, f"model.{k}") for k, v in _struct(doc["model"], path, "model").items()}
    for group in ("metadata", "model"):
        if f"{group}_json" in doc:
            texts = {k: _text(v, path, f"{group}_json.{k}")
                     for k, v in _struct(doc[f"{group}_json"], path, f"{group}_json").items()}
            merged = merge_json_entries(metadata if group == "metadata" else model, texts, path, group, ".")
            if group == "metadata":
                metadata = merged
            else:
                model = merged
    policy = None
    if "policy" in doc:
        policy = {k: _vector(v, path, f"policy.{k}") for k, v in _struct(doc["policy"], path, "policy").items()}
    raw_cases = doc["cases"]
    if isinstance(raw_cases, dict):
        raw_cases = [raw_cases]  # a 1x1 cell or struct comes back unwrapped
    elif isinstance(raw_cases, np.ndarray) and raw_cases.dtype == object:
        raw_cases = list(raw_cases.ravel())
    if not isinstance(raw_cases, list) or not raw_cases:
        raise PlanFormatError(path=path, key="cases", expected="a non-empty cell array of structs",
                              found=type(raw_cases).__name__)
    cases = []
    for i, cd in enumerate(raw_cases):
        where = f"cases{{{i + 1}}}"
        cd = _struct(cd, path, where)
        for k in cd:
            if k not in CASE_FIELDS:
                raise PlanFormatError(f"unknown field '{k}'", path=path, key=f"{where}.{k}",
                                      expected=f"only {list(CASE_FIELDS)}", found=k)
        if "name" not in cd:
            raise PlanFormatError("case without a name", path=path, key=f"{where}.name", expected="a char name", found=Described("none"))
        name = _text(cd["name"], path, f"{where}.name")
        gh = None
        if "ground_height_m" in cd:
            gh = _scalar(cd["ground_height_m"], path, f"{where}.ground_height_m")
            if isinstance(gh, str):
                raise PlanFormatError(path=path, key=f"{where}.ground_height_m", expected="a number [m]", found=gh)
            gh = float(gh)
        cols = {}
        for k, v in cd.items():
            if k in ("name", "ground_height_m"):
                continue
            key = f"{where}.{k}"
            cols[k] = _phase(v, path, key) if k == validation.PHASE_COLUMN else _vector(v, path, key)
        cases.append(RawCase(name=name, columns=cols, ground_height_m=gh, key_template=where.replace("{", "{{").replace("}", "}}") + ".{column}",
                             ground_height_key=f"{where}.ground_height_m", index_format="({index1})"))
    return RawPlan(path=path, sha256=sha, units=units, cases=cases, given=given, metadata=metadata, model=model,
                   policy=policy)
