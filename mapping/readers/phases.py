"""Stance and flight: from a plan's phase column or from a vertical-force threshold; contact events.

Rule when a case has no ``phase`` column: a sample is stance when its vertical ground force is above
the threshold ``force_threshold_n``. The default threshold is ``DEFAULT_THRESHOLD_FRACTION`` = 1 % of
the body weight m g (m from the plan, its scaling or the robot); when no mass is known at all it is
1 % of the case's peak vertical force instead (the reader records which rule it used in
``Plan.metadata['phase_source']``).

Events: a touchdown is the time of the first stance sample after a flight sample, a liftoff the
time of the first flight sample after a stance sample (sample times, no interpolation), so a stance
interval is [touchdown, liftoff) on the plan's own time grid.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from legbridge.mapping.plan import frozen_array

DEFAULT_THRESHOLD_FRACTION = 0.01


def detect_phases(force_z_n, threshold_n: float) -> np.ndarray:
    """Stance mask (bool, read-only): vertical ground force [N] above ``threshold_n`` [N]."""
    return frozen_array(np.asarray(force_z_n, dtype=float) > float(threshold_n), dtype=bool)


def stance_from_phase(phase) -> np.ndarray:
    """Stance mask (bool, read-only) from phase labels 'stance'/'flight' (validated beforehand)."""
    return frozen_array(np.asarray(phase) == "stance", dtype=bool)


def default_threshold_n(mass_kg: float | None, gravity_m_s2: float, force_z_n) -> tuple[float, str]:
    """The default stance threshold [N] and a sentence saying how it was chosen."""
    if mass_kg is not None:
        thr = DEFAULT_THRESHOLD_FRACTION * mass_kg * gravity_m_s2
        return thr, f"force_z_n > {thr:.4g} N ({DEFAULT_THRESHOLD_FRACTION:.0%} of body weight, m = {mass_kg:g} kg)"
    peak = float(np.max(force_z_n))
    thr = DEFAULT_THRESHOLD_FRACTION * peak
    return thr, f"force_z_n > {thr:.4g} N ({DEFAULT_THRESHOLD_FRACTION:.0%} of the case's peak vertical force; no mass known)"


@dataclass(frozen=True, eq=False)
class PhaseEvents:
    """Contact events of one case [s]. starts_in_stance / ends_in_stance: the first / last sample is stance."""

    touchdown_s: np.ndarray
    liftoff_s: np.ndarray
    starts_in_stance: bool
    ends_in_stance: bool


def stance_events(time_s, stance) -> PhaseEvents:
    """Touchdown and liftoff times [s] of a stance mask on the time grid ``time_s`` [s]."""
    t = np.asarray(time_s, dtype=float)
    s = np.asarray(stance, dtype=bool)
    change = np.flatnonzero(s[1:] != s[:-1]) + 1
    td = change[s[change]]
    lo = change[~s[change]]
    return PhaseEvents(
        touchdown_s=frozen_array(t[td]),
        liftoff_s=frozen_array(t[lo]),
        starts_in_stance=bool(s[0]) if s.size else False,
        ends_in_stance=bool(s[-1]) if s.size else False,
    )


def events(case) -> PhaseEvents:
    """Touchdown and liftoff times [s] of a ReducedTrajectory (from its ``stance`` mask)."""
    return stance_events(case.time_s, case.stance)
