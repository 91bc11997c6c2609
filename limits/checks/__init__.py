"""One module per limit; each turns a trajectory into LimitTrace(s) (value, allowed, utilisation).

CHECKS lists the modules in report order; the checker (limits.check) stacks their traces. To add a
limit, add a module with ``LIMITS`` and ``evaluate(ctx)`` and list it here.
"""

from . import (
    ground,
    joint_range,
    joint_speed,
    mapping_flags,
    peak_current,
    peak_torque,
    regen_energy,
    supply_power,
    voltage,
    winding_temperature,
)
from .base import CheckContext

CHECKS = (joint_range, joint_speed, peak_torque, voltage, peak_current, winding_temperature, supply_power,
          regen_energy, ground, mapping_flags)

LIMIT_NAMES = tuple(name for mod in CHECKS for name in mod.LIMITS)

__all__ = ["CHECKS", "LIMIT_NAMES", "CheckContext"]
