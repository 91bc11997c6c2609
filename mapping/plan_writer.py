"""Write a Plan to a plan file (CSV, JSON, NPZ, MAT-file), in SI units, atomically.

``write_plan(plan, path, force=False)`` picks the format from the extension and writes the layouts
that ``legbridge.mapping.readers.read_plan`` reads (documented in each reader's module docstring),
so ``read_plan(write_plan(plan, p))`` gives back the same cases, metadata and policy.

- Always SI (``units = si``); a nondimensional plan's scaling is kept as the plan-level
  ``nominal_leg_length_m``, ``mass_kg``, ``gravity_m_s2`` entries.
- Stance is written as the ``phase`` column ('stance'/'flight'), so phases survive the round trip.
- Reader-made metadata (``phase_source``) is left out.
- The file is written to a temporary file in the same folder and moved into place with
  ``os.replace``; an existing file is refused (OutputExistsError) unless ``force=True``.
- CSV holds no policy and only flat metadata (text, numbers); writing such a plan to CSV is refused
  (PlanFormatError) rather than losing data. NPZ and MAT store metadata entries that are not text or
  numbers (tables, lists, true/false, null) as JSON text under ``metadata_json`` / ``model_json``.
"""

from __future__ import annotations
from legbridge.robots.errors import Described

import csv
import io
import json
import re
from pathlib import Path

import numpy as np

from legbridge.robots.errors import PlanFormatError
from legbridge.mapping.plan import Plan
from legbridge.mapping.readers.json_reader import FORMAT_TAG
from legbridge.mapping.readers.raw import POLICY_COLUMNS, READER_METADATA_KEYS
from legbridge.mapping.readers.scaling import SCALE_KEYS
from legbridge.mapping.readers.validation import OPTIONAL_COLUMNS
from legbridge.robots.files import refuse_existing, write_atomic

EXTENSIONS = (".csv", ".json", ".npz", ".mat")
_KEY = re.compile(r"^[A-Za-z][A-Za-z0-9_]*$")


def _format_of(path: Path) -> str:
    ext = path.suffix.lower()
    if ext not in EXTENSIONS:
        raise PlanFormatError("unknown plan file type", path=str(path), expected=f"an extension in {list(EXTENSIONS)}",
                              found=ext or "no extension")
    return ext[1:]


def _case_columns(case) -> dict:
    cols = {
        "time_s": np.asarray(case.time_s, dtype=float),
        "leg_length_m": np.asarray(case.leg_length_m, dtype=float),
        "leg_angle_rad": np.asarray(case.leg_angle_rad, dtype=float),
        "force_x_n": np.asarray(case.force_x_n, dtype=float),
        "force_z_n": np.asarray(case.force_z_n, dtype=float),
        "phase": np.where(np.asarray(case.stance, dtype=bool), "stance", "flight"),
    }
    for k in OPTIONAL_COLUMNS:
        v = getattr(case, k)
        if v is not None:
            cols[k] = np.asarray(v, dtype=float)
    return cols


def _scale_entries(plan: Plan) -> dict:
    out = {k: float(plan.metadata[k]) for k in SCALE_KEYS if k in plan.metadata}
    if plan.scaling is not None:
        out.update(nominal_leg_length_m=plan.scaling.length_m, mass_kg=plan.scaling.mass_kg,
                   gravity_m_s2=plan.scaling.gravity_m_s2)
    return out


def _free_metadata(plan: Plan) -> dict:
    skip = set(SCALE_KEYS) | set(READER_METADATA_KEYS) | {"model"}
    return {k: v for k, v in plan.metadata.items() if k not in skip}


def _model(plan: Plan) -> dict | None:
    m = plan.metadata.get("model")
    return None if m is None else dict(m)


def _flat(d: dict, path: str, group: str) -> dict:
    """Refuse values a flat format cannot hold (only text and numbers) and keys that are not identifiers."""
    for k, v in d.items():
        if not isinstance(k, str) or not _KEY.match(k):
            raise PlanFormatError(f"{group} key cannot be stored in this format", path=path, key=f"{group}.{k}",
                                  expected="a name of letters, digits and '_' starting with a letter", found=k)
        if isinstance(v, bool) or not isinstance(v, (str, int, float, np.integer, np.floating)):
            raise PlanFormatError(f"{group} value cannot be stored in this format", path=path, key=f"{group}.{k}",
                                  expected="text or a number (write .json, .npz or .mat for other values)", found=type(v).__name__)
        if isinstance(v, str) and ("\n" in v or "\r" in v):
            raise PlanFormatError(f"{group} value cannot be stored in this format", path=path, key=f"{group}.{k}",
                                  expected="text on one line", found=v)
    return d


def _split(d: dict, path: str, group: str) -> tuple[dict, dict]:
    """(text/number entries, JSON text of every other entry) for the NPZ and MAT layouts."""
    flat, as_json = {}, {}
    for k, v in d.items():
        if not isinstance(k, str) or not _KEY.match(k):
            raise PlanFormatError(f"{group} key cannot be stored in this format", path=path, key=f"{group}.{k}",
                                  expected="a name of letters, digits and '_' starting with a letter", found=k)
        if isinstance(v, (str, int, float, np.integer, np.floating)) and not isinstance(v, (bool, np.bool_)):
            flat[k] = v
            continue
        try:
            as_json[k] = json.dumps(v, allow_nan=False)
        except (TypeError, ValueError) as exc:
            raise PlanFormatError(f"{group} value cannot be stored", path=path, key=f"{group}.{k}",
                                  expected="text, numbers, true/false, null, lists and tables of them",
                                  found=type(v).__name__) from exc
    return flat, as_json


# ---- JSON -----------------------------------------------------------------------------------------

def plan_to_json(plan: Plan) -> dict:
    """The JSON document of ``plan`` (layout: legbridge.mapping.readers.json_reader)."""
    doc = {"format": FORMAT_TAG, "units": "si"}
    doc.update(_scale_entries(plan))
    meta = _free_metadata(plan)
    if meta:
        doc["metadata"] = meta
    model = _model(plan)
    if model is not None:
        doc["model"] = model
    if plan.policy is not None:
        doc["policy"] = {k: np.asarray(getattr(plan.policy, k), dtype=float).tolist() for k in POLICY_COLUMNS}
    doc["cases"] = [
        {"name": c.name, "ground_height_m": float(c.ground_height_m),
         "columns": {k: v.tolist() for k, v in _case_columns(c).items()}}
        for c in plan.cases
    ]
    return doc


def _write_json(plan: Plan, fh, path: str) -> None:
    try:
        text = json.dumps(plan_to_json(plan), indent=1, allow_nan=False)
    except (TypeError, ValueError) as exc:
        raise PlanFormatError(f"plan cannot be written as JSON ({exc})", path=path) from exc
    fh.write(text.encode("utf-8"))


# ---- CSV ------------------------------------------------------------------------------------------

def _write_csv(plan: Plan, fh, path: str) -> None:
    if plan.policy is not None:
        raise PlanFormatError("a CSV plan has no place for the policy", path=path, key="policy",
                              expected="a plan without a policy, or a .json/.npz/.mat file", found=Described("a policy"))
    lines = [f"# format = {FORMAT_TAG}", "# units = si"]
    lines += [f"# {k} = {v!r}" for k, v in _scale_entries(plan).items()]
    for k, v in _flat(_free_metadata(plan), path, "metadata").items():
        lines.append(f"# {k} = {v}")
    model = _model(plan)
    if model is not None:
        for k, v in _flat(model, path, "model").items():
            lines.append(f"# model.{k} = {v}")
    for c in plan.cases:
        if "\n" in c.name or "\r" in c.name or not c.name.strip():
            raise PlanFormatError("case name cannot be stored in a CSV plan", path=path, key="case",
                                  expected="a non-empty name on one line", found=c.name)
    first = _case_columns(plan.cases[0])
    names = list(first)
    for c in plan.cases[1:]:
        if list(_case_columns(c)) != names:
            raise PlanFormatError("cases of a CSV plan must have the same columns", path=path, key=f"case '{c.name}'",
                                  expected=names, found=list(_case_columns(c)))
    buf = io.StringIO()
    buf.write("\n".join(lines) + "\n")
    w = csv.writer(buf, lineterminator="\n")
    w.writerow(["case", "ground_height_m"] + names)
    for c in plan.cases:
        cols = _case_columns(c)
        n = c.n_samples
        table = [np.full(n, c.name, dtype=object), np.full(n, repr(float(c.ground_height_m)), dtype=object)]
        table += [cols[k] if k == "phase" else cols[k].astype(str) for k in names]
        w.writerows(np.column_stack(table).tolist())
    fh.write(buf.getvalue().encode("utf-8"))


# ---- NPZ ------------------------------------------------------------------------------------------

def plan_to_npz(plan: Plan, path: str = "") -> dict:
    """The arrays of the NPZ layout (legbridge.mapping.readers.npz_reader), name -> array."""
    arrays = {"format": np.array(FORMAT_TAG), "units": np.array("si")}
    for k, v in _scale_entries(plan).items():
        arrays[f"meta/{k}"] = np.array(float(v))
    groups = {"metadata": _free_metadata(plan), "model": _model(plan)}
    for group, d in groups.items():
        if d is None:
            continue
        flat, as_json = _split(d, path, group)
        for k, v in flat.items():
            arrays[f"{group}/{k}"] = np.array(v)
        for k, v in as_json.items():
            arrays[f"{group}_json/{k}"] = np.array(v)
    if plan.policy is not None:
        for k in POLICY_COLUMNS:
            arrays[f"policy/{k}"] = np.asarray(getattr(plan.policy, k), dtype=float)
    arrays["case_names"] = np.array([c.name for c in plan.cases], dtype=str)
    for i, c in enumerate(plan.cases):
        arrays[f"cases/{i}/ground_height_m"] = np.array(float(c.ground_height_m))
        for k, v in _case_columns(c).items():
            arrays[f"cases/{i}/{k}"] = v
    return arrays


def _write_npz(plan: Plan, fh, path: str) -> None:
    np.savez(fh, **plan_to_npz(plan, path))


# ---- MAT ------------------------------------------------------------------------------------------

def plan_to_mat(plan: Plan, path: str = "") -> dict:
    """The variables of the MAT-file layout (legbridge.mapping.readers.mat_reader), name -> value."""
    out = {"format": FORMAT_TAG, "units": "si"}
    out.update(_scale_entries(plan))
    groups = {"metadata": _free_metadata(plan), "model": _model(plan)}
    for group, d in groups.items():
        if d is None or (group == "metadata" and not d):
            continue
        flat, as_json = _split(d, path, group)
        if flat:
            out[group] = flat
        if as_json:
            out[f"{group}_json"] = as_json
    if plan.policy is not None:
        out["policy"] = {k: np.asarray(getattr(plan.policy, k), dtype=float) for k in POLICY_COLUMNS}
    cells = np.empty((1, len(plan.cases)), dtype=object)
    for i, c in enumerate(plan.cases):
        d = {"name": c.name, "ground_height_m": float(c.ground_height_m)}
        for k, v in _case_columns(c).items():
            d[k] = np.array(v.tolist(), dtype=object) if k == "phase" else v
        cells[0, i] = d
    out["cases"] = cells
    return out


def _write_mat(plan: Plan, fh, path: str) -> None:
    import scipy.io

    try:
        scipy.io.savemat(fh, plan_to_mat(plan, path), do_compression=True, oned_as="column")
    except PlanFormatError:
        raise
    except ValueError as exc:  # e.g. a field name longer than the MAT-file format allows
        raise PlanFormatError(f"plan cannot be written as a MAT-file ({exc})", path=path) from exc


_WRITERS = {"csv": _write_csv, "json": _write_json, "npz": _write_npz, "mat": _write_mat}


def write_plan(plan: Plan, path, *, force: bool = False) -> Path:
    """Write ``plan`` to ``path`` (format from the extension: .csv, .json, .npz, .mat), SI units.

    The file is written to a temporary file beside ``path`` and moved into place atomically.
    Raises OutputExistsError when ``path`` exists and ``force`` is false, PlanFormatError when the
    extension is unknown or the format cannot hold the plan. Returns the path written.
    """
    p = Path(path)
    fmt = _format_of(p)
    refuse_existing(p, force)
    if not plan.cases:
        raise PlanFormatError("the plan has no cases", path=str(p), expected="at least one case", found=Described("none"))
    return write_atomic(p, lambda fh: _WRITERS[fmt](plan, fh, str(p)), force=force)
