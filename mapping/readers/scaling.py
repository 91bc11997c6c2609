"""Nondimensional plans -> SI: which unit each column is measured in, and where l0 and m come from.

A nondimensional plan (metadata ``units = nondimensional``) measures
lengths in the nominal leg length l0, time in sqrt(l0/g), forces in body weights m g and
velocities in sqrt(g l0); angles are radians in both systems. l0 [m] and m [kg] come from the plan
(``nominal_leg_length_m``, ``mass_kg``) or, when the plan does not give them, from the robot
(``Robot.nominal_leg_length_m``, ``Robot.total_mass_kg``); g from ``gravity_m_s2`` or standard
gravity. The plan's own values win over the robot's.
"""

from __future__ import annotations
from legbridge.robots.errors import Described

import math

import numpy as np

from legbridge.mapping.plan import Scaling
from legbridge.robots.errors import PlanFormatError, PlanScalingError
from legbridge.robots.robot import STANDARD_GRAVITY_M_S2  # the default g (one value in legbridge)

UNITS = ("si", "nondimensional")
SCALE_KEYS = ("nominal_leg_length_m", "mass_kg", "gravity_m_s2")

#: Which unit each column is measured in when the plan is nondimensional.
COLUMN_UNITS = {
    "time_s": "time",
    "leg_length_m": "length",
    "leg_angle_rad": "angle",
    "force_x_n": "force",
    "force_z_n": "force",
    "axial_force_n": "force",
    "body_x_m": "length",
    "body_z_m": "length",
    "body_vx_m_s": "velocity",
    "body_vz_m_s": "velocity",
    "actuator_length_m": "length",
    "spring_deflection_m": "length",
    "ground_height_m": "length",
    "touchdown_angle_rad": "angle",
}


def check_units(value, path: str, key: str = "units") -> str:
    """The plan's unit system, 'si' or 'nondimensional' (case-insensitive), or PlanFormatError."""
    if not isinstance(value, str) or value.strip().lower() not in UNITS:
        raise PlanFormatError("unknown unit system", path=path, key=key, expected=f"one of {list(UNITS)}", found=value)
    return value.strip().lower()


def positive_number(value, path: str, key: str) -> float:
    """A finite number > 0 from a metadata entry (numbers or numeric text), or PlanFormatError."""
    try:
        if isinstance(value, bool):
            raise TypeError
        x = float(value)
    except (TypeError, ValueError) as exc:
        raise PlanFormatError(path=path, key=key, expected="a positive number", found=value) from exc
    if not (math.isfinite(x) and x > 0.0):
        raise PlanFormatError(path=path, key=key, expected="a positive finite number", found=x)
    return x


def resolve_scaling(units: str, given: dict, robot, path: str) -> Scaling | None:
    """The Scaling of a nondimensional plan (None for SI plans).

    given: the plan's own ``nominal_leg_length_m``, ``mass_kg``, ``gravity_m_s2`` (missing = absent)
    robot: a legbridge.robots.Robot or None, consulted for l0 and the mass the plan does not give
    """
    if units == "si":
        return None
    l0 = given.get("nominal_leg_length_m")
    m = given.get("mass_kg")
    g = given.get("gravity_m_s2", STANDARD_GRAVITY_M_S2)
    l0_src = m_src = "plan metadata"
    if l0 is None and robot is not None and robot.nominal_leg_length_m is not None:
        l0, l0_src = float(robot.nominal_leg_length_m), "robot file"
    if m is None and robot is not None:
        m, m_src = float(robot.total_mass_kg), "robot file"
    missing = [k for k, v in (("nominal_leg_length_m", l0), ("mass_kg", m)) if v is None]
    if missing:
        raise PlanScalingError(
            "a nondimensional plan needs the nominal leg length and the mass to be scaled to SI",
            path=path, key=missing[0],
            expected="the value in the plan's metadata, or a robot with nominal_leg_length_m (and its mass)",
            found=Described("neither") if robot is None else "no value in the plan or the robot file",
        )
    source = l0_src if l0_src == m_src else f"l0 from {l0_src}, mass from {m_src}"
    return Scaling(length_m=float(l0), mass_kg=float(m), gravity_m_s2=float(g), source=source)


def unit_factor(unit: str, scaling: Scaling) -> float:
    """SI value of one nondimensional unit of kind ``unit`` ('length', 'time', 'force', 'velocity', 'angle')."""
    if unit == "length":
        return scaling.length_m
    if unit == "time":
        return scaling.time_s
    if unit == "force":
        return scaling.force_n
    if unit == "velocity":
        return math.sqrt(scaling.gravity_m_s2 * scaling.length_m)
    if unit == "angle":
        return 1.0
    raise ValueError(f"no unit '{unit}'")


def scale_columns(columns: dict, scaling: Scaling | None) -> dict:
    """Copy of ``columns`` (name -> array) with every numeric column in SI (non-numeric ones as they are)."""
    if scaling is None:
        return dict(columns)
    out = {}
    for name, v in columns.items():
        unit = COLUMN_UNITS.get(name)
        out[name] = v if unit is None else np.asarray(v, dtype=float) * unit_factor(unit, scaling)
    return out
