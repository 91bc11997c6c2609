"""Total electrical power of all motors (sum of JointTrajectory.electrical_power_w, V I per motor; one motor's regeneration feeds another on the
shared bus) against settings.supply_power_w, when given. value: total power [W]."""

from __future__ import annotations

import numpy as np

from .base import CheckContext, Limit, SCOPE_ROBOT, ratio, trace



def total_power_w(traj) -> np.ndarray:
    """Total electrical power drawn from the bus [W], negative when the motors regenerate."""
    return np.sum(np.asarray(traj.electrical_power_w, dtype=float), axis=1)


def evaluate(ctx: CheckContext):
    """This limit's LimitTraces for one case (value, allowed and utilisation per sample)."""
    cap = ctx.settings.supply_power_w
    if cap is None:
        return ()
    p = total_power_w(ctx.traj)
    return (trace("supply_power", "", "W", p, cap, ratio(p, cap), source="settings.supply_power_w"),)


LIMITS = (Limit("supply_power", "supply power", "W", SCOPE_ROBOT, None, 70, evaluate, caution="supply power"),)
