"""Reduced-order plans: what the leg should do, per disturbance case, in SI units.

Conventions (README, "Units and conventions"): x forward, z up; leg angle from the downward vertical, positive with the
foot ahead of the hip; leg length hip joint centre to foot contact; ground force = force of the
ground on the foot, world frame. Arrays are shaped (n_samples,) and read-only.
"""

from __future__ import annotations

from legbridge.robots.reprs import short_repr

from dataclasses import dataclass, field

import numpy as np


def frozen_array(a, dtype=float) -> np.ndarray:
    """A read-only copy of ``a`` (results must not be edited downstream)."""
    out = np.array(a, dtype=dtype, copy=True)
    out.setflags(write=False)
    return out


@dataclass(frozen=True)
class Scaling:
    """How a nondimensional plan was scaled to SI.

    length_m: the nominal leg length l0 [m]; mass_kg: the body mass [kg]; gravity_m_s2 [m/s^2]
    source: where l0 and the mass came from ('plan metadata' or 'robot file')
    """

    length_m: float
    mass_kg: float
    gravity_m_s2: float
    source: str

    @property
    def time_s(self) -> float:
        """Unit of time, sqrt(l0 / g) [s]."""
        return float(np.sqrt(self.length_m / self.gravity_m_s2))

    @property
    def force_n(self) -> float:
        """Unit of force, one body weight m g [N]."""
        return self.mass_kg * self.gravity_m_s2

    def describe(self) -> str:
        """One line for people: the values used and where they came from."""
        return (f"nondimensional plan scaled with l0 = {self.length_m:g} m, mass = {self.mass_kg:g} kg, "
                f"g = {self.gravity_m_s2:g} m/s^2 (time unit {self.time_s:.4g} s, force unit {self.force_n:.4g} N; "
                f"from the {self.source})")


@dataclass(frozen=True, eq=False)
class ReducedTrajectory:
    """One disturbance case of a plan, SI units, samples in time order.

    time_s, leg_length_m, leg_angle_rad, force_x_n, force_z_n: required, shape (n,)
    stance: bool (n,), the foot on the ground (from the phase column or a force threshold)
    body_*: optional body centre-of-mass motion (n,) or None
    actuator_length_m, spring_deflection_m: optional series-elastic leg states (n,) or None
    ground_height_m: the case's ground-height offset [m] (0 for the nominal case)
    """

    name: str
    time_s: np.ndarray
    leg_length_m: np.ndarray
    leg_angle_rad: np.ndarray
    force_x_n: np.ndarray
    force_z_n: np.ndarray
    stance: np.ndarray
    ground_height_m: float = 0.0
    body_x_m: np.ndarray | None = None
    body_z_m: np.ndarray | None = None
    body_vx_m_s: np.ndarray | None = None
    body_vz_m_s: np.ndarray | None = None
    actuator_length_m: np.ndarray | None = None
    spring_deflection_m: np.ndarray | None = None

    @property
    def n_samples(self) -> int:
        return int(self.time_s.shape[0])

    @property
    def duration_s(self) -> float:
        return float(self.time_s[-1] - self.time_s[0])


@dataclass(frozen=True)
class Policy:
    """The open-loop policy shared by a plan's cases (for disturbance sweeps), SI units.

    time_s: time since the most recent apex [s] (the policy restarts at every apex)
    actuator_length_m: leg actuator length over time [m]
    touchdown_angle_rad: leg angle the swing leg holds over time (retraction) [rad]
    """

    time_s: np.ndarray
    actuator_length_m: np.ndarray
    touchdown_angle_rad: np.ndarray


@short_repr('path', 'cases')
@dataclass(frozen=True, eq=False)
class Plan:
    """A plan file as read: its cases, where it came from and how it was scaled.

    metadata: free key/value pairs from the file; metadata['model'] (when present) holds the
    spring-mass parameters the plan was made with (e.g. stiffness_n_per_m, damping_n_s_per_m, mass_kg)
    policy: the open-loop policy shared by all cases, when the file carries one (JSON plans)
    """

    path: str
    sha256: str
    cases: tuple[ReducedTrajectory, ...]
    scaling: Scaling | None = None
    metadata: dict = field(default_factory=dict)
    policy: Policy | None = None

    @property
    def case_names(self) -> tuple[str, ...]:
        return tuple(c.name for c in self.cases)

    def case(self, name: str) -> ReducedTrajectory:
        for c in self.cases:
            if c.name == name:
                return c
        from legbridge.robots.errors import LegbridgeError

        raise LegbridgeError(f"plan has no case '{name}'", path=self.path, expected=f"one of {list(self.case_names)}", found=name)
