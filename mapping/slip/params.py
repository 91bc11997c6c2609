"""Parameters of the actuated spring-mass (SLIP) model, SI units.

Point-mass body at the hip; massless leg made of a length actuator in series with a damped linear
spring. Axial leg force (positive = pushing the body away from the foot):
``F_axial = k (l_act - l) - c dl/dt``, unilateral (``F_axial >= 0``).
"""

from __future__ import annotations
from legbridge.robots.errors import Described

import math
from dataclasses import MISSING, asdict, dataclass, fields

from legbridge.robots.errors import SlipInputError


PHYSICAL_MAX = {
    "mass_kg": 1e4, "stiffness_n_per_m": 1e7, "damping_n_s_per_m": 1e5, "nominal_leg_length_m": 10.0,
    "min_leg_length_m": 10.0, "gravity_m_s2": 100.0, "max_time_between_apexes_s": 100.0,
}
"""Upper bounds of a legged robot's spring-mass parameters (SI): a larger value is an input error, not
a simulation to attempt (a stiffness of 1e300 N/m would keep the ODE solver busy for ever)."""


@dataclass(frozen=True)
class SpringMassParams:
    """Spring-mass model parameters.

    mass_kg: body mass m [kg]
    stiffness_n_per_m: leg spring stiffness k [N/m]
    damping_n_s_per_m: leg damper c [N s/m], in parallel with the spring (0 = undamped)
    nominal_leg_length_m: nominal (rest) leg length l0 [m]; the policy's actuator length sets the
        spring rest length over time, l0 is the reference for scaling and for the robot check
    min_leg_length_m: a stance leg shorter than this counts as a fall (fully compressed) [m]
    gravity_m_s2: gravitational acceleration g [m/s^2]
    max_time_between_apexes_s: no apex within this time after the last one counts as a fall [s]
    """

    mass_kg: float
    stiffness_n_per_m: float
    damping_n_s_per_m: float
    nominal_leg_length_m: float
    min_leg_length_m: float
    gravity_m_s2: float = 9.81
    max_time_between_apexes_s: float = 2.0

    def __post_init__(self) -> None:
        for f in fields(self):
            value = getattr(self, f.name)
            if isinstance(value, bool) or not isinstance(value, (int, float)) or not math.isfinite(value):
                raise SlipInputError(key=f.name, expected="a finite number", found=value)
            object.__setattr__(self, f.name, float(value))
            lower_ok = value >= 0.0 if f.name == "damping_n_s_per_m" else value > 0.0
            if not lower_ok:
                what = ">= 0" if f.name == "damping_n_s_per_m" else "> 0"
                raise SlipInputError(key=f.name, expected=f"a number {what}", found=float(value))
            if value > PHYSICAL_MAX[f.name]:
                raise SlipInputError(key=f.name, expected=f"a legged robot's value, at most {PHYSICAL_MAX[f.name]:g}",
                                     found=float(value))
        if self.min_leg_length_m >= self.nominal_leg_length_m:
            raise SlipInputError(
                key="min_leg_length_m",
                expected=f"less than nominal_leg_length_m ({self.nominal_leg_length_m:g} m)",
                found=self.min_leg_length_m,
            )

    @property
    def body_weight_n(self) -> float:
        """m g [N]."""
        return self.mass_kg * self.gravity_m_s2

    def to_dict(self) -> dict:
        """The parameters as a plain dict (keys carry units), as stored in ``Plan.metadata['model']``."""
        return asdict(self)

    @classmethod
    def from_dict(cls, d: dict, *, where: str = "model") -> "SpringMassParams":
        """Build from a dict such as ``Plan.metadata['model']``; unknown or missing keys are refused."""
        if not isinstance(d, dict):
            raise SlipInputError(key=where, expected="a table of spring-mass parameters", found=type(d).__name__)
        names = [f.name for f in fields(cls)]
        unknown = sorted(set(d) - set(names))
        if unknown:
            raise SlipInputError(key=f"{where}.{unknown[0]}", expected=f"one of {names}", found=unknown[0])
        required = [f.name for f in fields(cls) if f.default is MISSING]
        missing = [n for n in required if n not in d]
        if missing:
            raise SlipInputError(key=f"{where}.{missing[0]}", expected="a value (required)", found=Described("nothing"))
        return cls(**d)


__all__ = ["SpringMassParams"]
