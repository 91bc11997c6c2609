"""Continuous current: the RMS drive current over one plan period against the drive's (and motor's)
continuous current rating, when the plan is taken as repeated for as long as the test runs (no
--duration): it then draws this RMS current without end, and the rating is what the drive and
motor are specified to carry without end (common practice for motion duty cycles). A finite test
(--duration) is judged by the winding temperature over exactly that time instead. value: RMS current [A] (the same at every sample of the case); allowed:
Actuator.continuous_current_a [A]."""

from __future__ import annotations

import numpy as np

from .base import SCOPE_JOINT, CheckContext, Limit, ratio, trace


def evaluate(ctx: CheckContext):
    """This limit's LimitTraces for one case (value, allowed and utilisation per sample)."""
    if ctx.settings.duration_s is not None:
        return ()
    out = []
    n = ctx.traj.n_samples
    th = ctx.thermal  # its RMS is over one repetition (the last sample starts the next one)
    for i, joint in ctx.joints():
        rms = float(th.rms_current_a[th.joint_names.index(joint.name)]) if n else 0.0
        cont = joint.actuator.continuous_current_a
        out.append(trace("continuous_current", joint.name, "A", np.full(n, rms), cont, ratio(np.full(n, rms), cont),
                         source="RMS over one plan period against the continuous current rating"))
    return tuple(out)


LIMITS = (Limit("continuous_current", "continuous current", "A", SCOPE_JOINT, None, 55, evaluate,
                caution="continuous (RMS) current", instantaneous=False),)
