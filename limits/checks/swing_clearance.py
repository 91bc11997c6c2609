"""Swing-foot clearance (bipeds): each swing foot's height above the case's ground over its generated
swing (mapping.swing: from its liftoff to the flight that ends in its own touchdown). The rule: the foot
stays above the ground over the whole generated swing, and at least c = settings.min_swing_clearance_m
above it over the swing's middle half (a lab's choice; default in limits.checks.results.CheckSettings).
Near liftoff and near the landing flight the foot is close to the ground by design, so only going
through it counts there. A foot below the ground anywhere in the generated swing would scuff or trip
before its planned touchdown. A leg held at a posture (same-leg gait) must stay above the ground.

value: the foot's height above the ground [m]; allowed: c over the middle half, 0 elsewhere [m];
utilisation on generated samples: c / height over the middle half (a height under GROUND_TOL_M counts
as GROUND_TOL_M), 0 elsewhere, and not finite wherever the foot is more than GROUND_TOL_M below the
ground; 0 on other samples (stance, and the landing flight, where the plan brings the foot down as it
means to). One trace per leg ('left', 'right'). Not evaluated (a finding) when the plan gives no body
height: the ground's place is then unknown."""

from __future__ import annotations

import numpy as np

from .base import SCOPE_LEG, CheckContext, Limit, trace

GROUND_TOL_M = 5e-4
"""A foot within this of the ground [m] touches it without going through (a stated choice, below what
a lab's floor is known to): a foot just lifting off dips by tens of micrometres as its base goes from
stance to free flight. Deeper is a trip (utilisation not finite); at the tolerance the utilisation is
allowed / GROUND_TOL_M."""

MIDDLE_HALF_PROFILE = 64 * 0.25**3 * 0.75**3
"""The swing profile 64 s^3 (1 - s)^3 (mapping.swing) is at least this for s in [1/4, 3/4]."""


def evaluate(ctx: CheckContext):
    """One LimitTrace per leg of a biped; none for one leg."""
    traj = ctx.traj
    legs = getattr(traj, "legs", ())
    if not legs or traj.leg_generated is None:
        return ()
    gen = np.asarray(traj.leg_generated, dtype=bool)
    profile = np.zeros(gen.shape) if traj.leg_swing_profile is None else np.asarray(traj.leg_swing_profile, dtype=float)
    c = float(ctx.settings.min_swing_clearance_m)
    out = []
    for k, leg in enumerate(legs):
        on = gen[:, k]
        allowed = np.where(profile[:, k] >= MIDDLE_HALF_PROFILE, c, 0.0)
        if traj.foot_height_m is None:  # no body height in the plan: fail closed where it matters
            height = np.where(on, np.nan, 0.0)
        else:
            height = np.asarray(traj.foot_height_m[:, k], dtype=float)
        util = np.where(height >= -GROUND_TOL_M, allowed / np.maximum(np.nan_to_num(height, nan=1.0), GROUND_TOL_M), np.inf)
        util = np.where(on, np.where(np.isnan(height), np.nan, util), 0.0)
        out.append(trace("swing_clearance", leg, "m", np.nan_to_num(height, nan=0.0) if traj.foot_height_m is None
                         else height, allowed, util, source="generated swing, foot above the case's ground"))
    return tuple(out)


LIMITS = (Limit("swing_clearance", "swing-foot clearance", "m", SCOPE_LEG, None, 98, evaluate,
                caution="swing-foot clearance"),)
