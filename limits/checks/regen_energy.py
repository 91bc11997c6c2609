"""Energy regenerated per step: the integral of the negative part of the total electrical power over
each step, a step running from one touchdown to the next (samples before the first touchdown form
step 0). Checked against settings.regen_energy_j when given; always reported (step_regen_energy_j).
value: energy regenerated so far in the current step [J] (rectangle rule at the export rate)."""

from __future__ import annotations

import numpy as np

from .base import CheckContext, Limit, SCOPE_ROBOT, ratio, trace
from .supply_power import total_power_w



def step_index(stance) -> np.ndarray:
    """Step number of each sample: increments at every touchdown (flight -> stance edge)."""
    s = np.asarray(stance, dtype=bool)
    touchdown = np.zeros(s.shape, dtype=int)
    touchdown[1:] = (s[1:] & ~s[:-1]).astype(int)
    return np.cumsum(touchdown)


def running_regen_j(traj):
    """(running energy regenerated within the current step (n,) [J], per-step totals (n_steps,) [J])."""
    dt = 1.0 / float(traj.rate_hz)
    e = np.maximum(-total_power_w(traj), 0.0) * dt
    step = step_index(traj.stance)
    totals = np.bincount(step, weights=e)
    cum = np.cumsum(e)
    starts = np.concatenate([[0.0], np.cumsum(totals)[:-1]])
    return cum - starts[step], totals


def step_regen_energy_j(traj) -> np.ndarray:
    """Energy regenerated in each step [J], shape (n_steps,)."""
    return running_regen_j(traj)[1]


def evaluate(ctx: CheckContext):
    """This limit's LimitTraces for one case (value, allowed and utilisation per sample)."""
    cap = ctx.settings.regen_energy_j
    if cap is None:
        return ()
    run, _ = running_regen_j(ctx.traj)
    return (trace("regen_energy", "", "J", run, cap, ratio(run, cap), source="settings.regen_energy_j"),)


LIMITS = (Limit("regen_energy", "regenerated energy", "J", SCOPE_ROBOT, None, 80, evaluate, caution="regenerated energy",
                instantaneous=False),)
