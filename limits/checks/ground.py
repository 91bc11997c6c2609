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



def ground_utilisation(fx, fz, mu: float, stance) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """(unilateral utilisation, friction-cone allowed |Fx| [N], friction-cone utilisation) of ground forces
    [N] (definitions in the module docstring); samples outside ``stance`` count 0."""
    fx, fz = np.asarray(fx, dtype=float), np.asarray(fz, dtype=float)
    stance = np.asarray(stance, dtype=bool)
    mag = np.hypot(fx, fz)
    uni = np.ones_like(fz)
    np.divide(fz, mag, out=uni, where=mag > 0)
    uni = np.where(mag > 0, 1.0 - uni, 0.0)
    uni = np.where(np.isnan(mag), np.nan, uni)
    cone_allowed = mu * np.maximum(fz, 0.0)
    cone = ratio(np.abs(fx), cone_allowed)
    return np.where(stance, uni, 0.0), cone_allowed, np.where(stance, cone, 0.0)


def evaluate(ctx: CheckContext):
    """This limit's LimitTraces for one case (value, allowed and utilisation per sample)."""
    f = np.asarray(ctx.traj.foot_force_n, dtype=float)
    fx, fz = f[:, 0], f[:, 1]
    mu = ctx.friction
    uni, cone_allowed, cone = ground_utilisation(fx, fz, mu, ctx.traj.stance)
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
