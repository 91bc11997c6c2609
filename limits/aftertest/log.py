"""A hardware log in SI units, as the readers (log_reader.py) return it.

Quantities per joint (joint names as the trajectory's: ``hip``/``knee`` on one leg, ``left_knee``
... on a biped), each in the SI unit named here::

    position        rad     joint-side angle (after the gearbox)
    velocity        rad/s   joint-side speed
    current         A       drive current, DC-equivalent convention (robots.motor_constants)
    torque          N m     joint-side torque (a torque sensor or the drive's estimate)
    winding_temp    degC    winding temperature
    housing_temp    degC    housing (case) temperature

Robot-wide: ``bus_voltage`` [V]. Per leg (``left``/``right``, or ``leg`` on a one-leg robot):
``contact`` (bool) and ``ground_force_x`` / ``ground_force_z`` [N]. A quantity the log does not carry
is absent; a sample the log left empty is NaN.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

JOINT_QUANTITIES = {
    "position": "rad", "velocity": "rad/s", "current": "A", "torque": "N m",
    "winding_temp": "degC", "housing_temp": "degC",
}
ROBOT_QUANTITIES = {"bus_voltage": "V"}
LEG_QUANTITIES = {"contact": "-", "ground_force_x": "N", "ground_force_z": "N"}


@dataclass(frozen=True, eq=False)
class Channel:
    """One logged quantity: ``owner`` is a joint name, a leg name, or "robot"."""

    owner: str
    quantity: str
    values: np.ndarray          # (n,), SI units above; NaN where the log left the sample empty
    column: str                 # the log's own column or variable name (for messages)


@dataclass(frozen=True, eq=False)
class HardwareLog:
    """What the robot recorded, at its own (possibly irregular) rate, in SI units."""

    path: str
    sha256: str
    time_s: np.ndarray                      # (n,), strictly increasing, the log's own clock
    channels: tuple[Channel, ...]
    sync: np.ndarray | None = None          # (n,) the sync column when the log has one
    notes: tuple[str, ...] = field(default=())

    def get(self, owner: str, quantity: str) -> np.ndarray | None:
        for c in self.channels:
            if c.owner == owner and c.quantity == quantity:
                return c.values
        return None

    def joints(self) -> tuple[str, ...]:
        return tuple(dict.fromkeys(c.owner for c in self.channels if c.quantity in JOINT_QUANTITIES))

    def __repr__(self) -> str:
        span = f"{self.time_s[0]:.3f}-{self.time_s[-1]:.3f} s" if self.time_s.size else "empty"
        return f"HardwareLog({self.path!r}, {self.time_s.size} samples, {span}, {len(self.channels)} channels)"
