"""Ground force in stance: unilateral contact and the Coulomb friction cone |Fx| <= mu Fz.

unilateral_force: value Fz [N], allowed 0 N; utilisation 1 - Fz / |F| (0 for a vertical push, exactly
1 for a force with Fz = 0, above 1 when the ground would have to pull; 0 when F = 0).
friction_cone: value |Fx| [N], allowed mu max(Fz, 0) [N], utilisation |Fx| / (mu Fz) (inf when the
foot is not pressed, Fz <= 0, yet a tangential force is asked). Flight samples: utilisation 0.
mu: settings.friction when given, else Robot.ground_friction.
"""

from __future__ import annotations

import numpy as np

from .base import PANEL_GROUND, SCOPE_LEG, CheckContext, Limit, ratio, trace



def evaluate(ctx: CheckContext):
    """This limit's LimitTraces for one case (value, allowed and utilisation per sample)."""
    f = np.asarray(ctx.traj.foot_force_n, dtype=float)
    fx, fz = f[:, 0], f[:, 1]
    stance = np.asarray(ctx.traj.stance, dtype=bool)
    mag = np.hypot(fx, fz)
    uni = np.ones_like(fz)
    np.divide(fz, mag, out=uni, where=mag > 0)
    uni = np.where(mag > 0, 1.0 - uni, 0.0)
    uni = np.where(np.isnan(mag), np.nan, uni)
    mu = ctx.friction
    cone_allowed = mu * np.maximum(fz, 0.0)
    cone = ratio(np.abs(fx), cone_allowed)
    uni = np.where(stance, uni, 0.0)
    cone = np.where(stance, cone, 0.0)
    return (
        trace("unilateral_force", "", "N", fz, 0.0, uni, source="contact cannot pull"),
        trace("friction_cone", "", "N", np.abs(fx), cone_allowed, cone, source=f"friction coefficient {mu:g}"),
    )


def _unilateral(ctx: CheckContext):
    """The unilateral-contact trace only."""
    return evaluate(ctx)[:1]


def _friction(ctx: CheckContext):
    """The friction-cone trace only."""
    return evaluate(ctx)[1:]


LIMITS = (
    Limit("unilateral_force", "unilateral force", "N", SCOPE_LEG, PANEL_GROUND, 90, _unilateral,
          caution="unilateral contact"),
    Limit("friction_cone", "friction cone", "N", SCOPE_LEG, PANEL_GROUND, 100, _friction, caution="ground friction"),
)
