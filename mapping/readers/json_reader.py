"""JSON plans.

Layout (keys carry their unit; every key outside ``metadata`` and ``model`` is checked)::

    {
      "format": "legbridge.plan/1",                 required
      "units": "si" | "nondimensional",             required
      "nominal_leg_length_m": 0.7, "mass_kg": 25, "gravity_m_s2": 9.81,      optional (scaling)
      "metadata": {...free keys...},                optional -> Plan.metadata
      "model": {"mass_kg": ..., "stiffness_n_per_m": ..., "damping_n_s_per_m": ...},
                                                    optional -> Plan.metadata["model"] (kept as given)
      "policy": {"time_s": [...], "actuator_length_m": [...], "touchdown_angle_rad": [...]},
                                                    optional -> Plan.policy (time since the last apex)
      "cases": [{"name": "nominal", "ground_height_m": 0.0,
                 "columns": {"time_s": [...], "leg_length_m": [...], "leg_angle_rad": [...],
                             "force_x_n": [...], "force_z_n": [...] (or "axial_force_n"),
                             optional "phase": ["stance"|"flight", ...], "body_x_m", "body_z_m",
                             "body_vx_m_s", "body_vz_m_s", "actuator_length_m",
                             "spring_deflection_m"}}]
    }

Column names and meanings are those of the CSV format (see legbridge.mapping.readers.validation);
a nondimensional plan uses the same names, scaled by mapping.readers.scaling.
"""

from __future__ import annotations
from legbridge.robots.errors import Described

import json

from legbridge.robots.errors import PlanFormatError

from . import scaling, validation
from .raw import RawCase, RawPlan, as_float_array, read_file_bytes

FORMAT_TAG = "legbridge.plan/1"
TOP_KEYS = ("format", "units") + scaling.SCALE_KEYS + ("metadata", "model", "policy", "cases")
CASE_KEYS = ("name", "ground_height_m", "columns")


def _dict(value, path: str, key: str) -> dict:
    if not isinstance(value, dict):
        raise PlanFormatError(path=path, key=key, expected="an object {...}", found=type(value).__name__)
    return value


def _unknown(d: dict, known: tuple, path: str, where: str) -> None:
    for k in d:
        if k not in known:
            raise PlanFormatError(f"unknown key '{k}'", path=path, key=f"{where}{k}" if where else k,
                                  expected=f"only {list(known)}", found=k)


def _phase(values, path: str, key: str):
    import numpy as np

    if not isinstance(values, list):
        raise PlanFormatError(path=path, key=key, expected="a list of 'stance'/'flight'", found=type(values).__name__)
    for i, v in enumerate(values):
        if not isinstance(v, str):
            raise PlanFormatError("unknown phase", path=path, key=f"{key}[{i}]",
                                  expected=f"one of {list(validation.PHASE_VALUES)}", found=repr(v))
    return np.array([v.strip().lower() for v in values], dtype=str)


def parse_json_plan(doc, path: str, sha256: str) -> RawPlan:
    """The RawPlan of a decoded JSON document (the checks of the layout above)."""
    doc = _dict(doc, path, "(top level)")
    _unknown(doc, TOP_KEYS, path, "")
    if doc.get("format") != FORMAT_TAG:
        raise PlanFormatError("not a legbridge plan", path=path, key="format", expected=repr(FORMAT_TAG),
                              found=doc.get("format", "no 'format' key"))
    if "units" not in doc:
        raise PlanFormatError(path=path, key="units", expected=f"one of {list(scaling.UNITS)}", found=Described("no 'units' key"))
    units = scaling.check_units(doc["units"], path)
    given = {k: scaling.positive_number(doc[k], path, k) for k in scaling.SCALE_KEYS if k in doc}
    metadata = dict(_dict(doc.get("metadata", {}), path, "metadata"))
    model = dict(_dict(doc["model"], path, "model")) if "model" in doc else None
    policy = None
    if "policy" in doc:
        p = _dict(doc["policy"], path, "policy")
        policy = {k: as_float_array(v, path, f"policy.{k}") for k, v in p.items()}
    cases_doc = doc.get("cases")
    if not isinstance(cases_doc, list) or not cases_doc:
        raise PlanFormatError(path=path, key="cases", expected="a non-empty list of cases",
                              found=cases_doc if cases_doc is None else type(cases_doc).__name__ if not isinstance(cases_doc, list) else "[]")
    cases = []
    for i, cd in enumerate(cases_doc):
        where = f"cases[{i}]"
        cd = _dict(cd, path, where)
        _unknown(cd, CASE_KEYS, path, where + ".")
        if "columns" not in cd:
            raise PlanFormatError(path=path, key=f"{where}.columns", expected="an object of columns", found=Described("no 'columns' key"))
        cols_doc = _dict(cd["columns"], path, f"{where}.columns")
        name = cd.get("name")
        if not isinstance(name, str) or not name.strip():
            raise PlanFormatError("case without a name", path=path, key=f"{where}.name", expected="a non-empty text", found=name)
        cols = {}
        for k, v in cols_doc.items():
            key = f"{where}.columns.{k}"
            if k not in validation.KNOWN_COLUMNS:
                raise PlanFormatError(f"unknown column '{k}' in case '{name}'", path=path, key=key,
                                      expected=f"only known columns {list(validation.KNOWN_COLUMNS)}", found=k)
            cols[k] = _phase(v, path, key) if k == validation.PHASE_COLUMN else as_float_array(v, path, key)
        gh = cd.get("ground_height_m")
        if gh is not None:
            if isinstance(gh, bool) or not isinstance(gh, (int, float)):
                raise PlanFormatError(path=path, key=f"{where}.ground_height_m", expected="a number [m]", found=gh)
            gh = float(gh)
        cases.append(RawCase(name=name, columns=cols, ground_height_m=gh, key_template=f"{where}.columns.{{column}}",
                             ground_height_key=f"{where}.ground_height_m"))
    return RawPlan(path=path, sha256=sha256, units=units, cases=cases, given=given, metadata=metadata, model=model,
                   policy=policy)


def read_json_raw(path: str) -> RawPlan:
    """Read and check a JSON plan file; file units (see the module docstring for the layout)."""
    data, sha = read_file_bytes(path)
    try:
        doc = json.loads(data.decode("utf-8"))
    except UnicodeDecodeError as exc:
        raise PlanFormatError("not UTF-8 text", path=path, expected="a UTF-8 JSON file", found=Described("other bytes")) from exc
    except json.JSONDecodeError as exc:
        raise PlanFormatError(f"not valid JSON ({exc.msg}, line {exc.lineno} column {exc.colno})", path=path) from exc
    except RecursionError as exc:
        raise PlanFormatError("JSON nested too deeply", path=path, expected="a plan a few levels deep",
                              found=Described("thousands of nested levels")) from exc
    except ValueError as exc:  # e.g. an integer of thousands of digits
        raise PlanFormatError(f"JSON value out of range ({exc})", path=path, expected="numbers of ordinary size") from exc
    return parse_json_plan(doc, path, sha)
