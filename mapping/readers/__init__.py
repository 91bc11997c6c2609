"""Plan files -> Plan: one reader per format, shared validation, scaling and phase detection.

``read_plan(path, robot=None, force_threshold_n=None)`` picks the reader from the extension
(.csv, .json, .npz, .mat); each reader's module docstring documents its file layout.
"""

from __future__ import annotations

from pathlib import Path

from legbridge.robots.errors import PlanFormatError, PlanScalingError
from legbridge.mapping.plan import Plan

from .phases import DEFAULT_THRESHOLD_FRACTION, PhaseEvents, detect_phases, events, stance_events
from .raw import axial_to_xz, build_plan
from .scaling import STANDARD_GRAVITY_M_S2
from .validation import FORCE_TOLERANCE_FRACTION, KNOWN_COLUMNS

EXTENSIONS = (".csv", ".json", ".npz", ".mat")


def _raw_reader(ext: str):
    if ext == ".json":
        from .json_reader import read_json_raw

        return read_json_raw
    if ext == ".csv":
        from .csv_reader import read_csv_raw

        return read_csv_raw
    if ext == ".npz":
        from .npz_reader import read_npz_raw

        return read_npz_raw
    from .mat_reader import read_mat_raw

    return read_mat_raw


def read_plan(path, *, robot=None, force_threshold_n: float | None = None) -> Plan:
    """Read, check and scale a plan file to SI.

    path: a .csv, .json, .npz or .mat plan file (layouts in the reader modules)
    robot: a legbridge.robots.Robot supplying l0 (nominal_leg_length_m) and the mass (total_mass_kg)
        for a nondimensional plan that does not give them, and the mass for the phase threshold
    force_threshold_n: stance when force_z_n is above this [N], for cases without a phase column;
        default 1 % of the body weight (see legbridge.mapping.readers.phases)
    Raises PlanFormatError (a ValueError) naming the file, row or key, what was expected and what was
    found; PlanScalingError when a nondimensional plan cannot be scaled; InputFileNotFound.
    """
    p = Path(path)
    ext = p.suffix.lower()
    if ext not in EXTENSIONS:
        raise PlanFormatError("unknown plan file type", path=str(p), expected=f"an extension in {list(EXTENSIONS)}",
                              found=ext or "no extension")
    raw = _raw_reader(ext)(str(p))
    return build_plan(raw, robot=robot, force_threshold_n=force_threshold_n)


__all__ = [
    "DEFAULT_THRESHOLD_FRACTION", "EXTENSIONS", "FORCE_TOLERANCE_FRACTION", "KNOWN_COLUMNS", "PhaseEvents",
    "PlanFormatError", "PlanScalingError", "STANDARD_GRAVITY_M_S2", "axial_to_xz", "detect_phases", "events",
    "read_plan", "stance_events",
]
