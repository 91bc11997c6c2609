"""Body pitch in flight: with no external wrench in flight the joints' motion turns the body
(mapping.free_flight); the plan knows no body pitch, so the landing leg meets the ground off its
planned angle by as much. value: |base pitch| in flight [rad] (0 in stance, where the plan's body
motion holds the base level); allowed: settings.max_flight_pitch_rad (a lab's choice; default in
limits.checks.results.CheckSettings)."""

from __future__ import annotations

import numpy as np

from .base import SCOPE_ROBOT, CheckContext, Limit, ratio, trace


def evaluate(ctx: CheckContext):
    """This limit's LimitTrace for one case (value, allowed and utilisation per sample)."""
    pitch = ctx.traj.base_pitch_rad
    if pitch is None:  # a trajectory built by hand carries no base state
        return ()
    value = np.where(np.asarray(ctx.traj.stance, dtype=bool), 0.0, np.abs(np.asarray(pitch, dtype=float)))
    cap = ctx.settings.max_flight_pitch_rad
    return (trace("flight_pitch", "", "rad", value, cap, ratio(value, cap),
                  source="free-floating base in flight (no external wrench)"),)


LIMITS = (Limit("flight_pitch", "body pitch in flight", "rad", SCOPE_ROBOT, None, 95, evaluate,
                caution="body pitch in flight"),)
