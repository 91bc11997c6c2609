"""Samples the mapping flagged (JointTrajectory.flags != 0: out of reach, IK not converged, singular,
non-finite) are findings of their own limit, fail closed: utilisation inf where flagged, else 0.
value: the flag bits; allowed 0."""

from __future__ import annotations

import numpy as np

from .base import CheckContext, trace

LIMITS = ("mapping",)


def evaluate(ctx: CheckContext):
    """This limit's LimitTraces for one case (value, allowed and utilisation per sample)."""
    flags = np.asarray(ctx.traj.flags).astype(np.int64)
    util = np.where(flags != 0, np.inf, 0.0)
    return (trace("mapping", "", "flag bits", flags.astype(float), 0.0, util, source="joint trajectory flags"),)
