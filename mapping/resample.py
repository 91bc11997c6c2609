"""Phase-aware resampling of a reduced-order case to the controller rate.

Each contiguous run of plan samples with the same phase (stance or flight) is one *segment*. Every
segment is interpolated on its own; no interpolant ever spans a touchdown or a liftoff. Values come
from a shape-preserving piecewise-cubic Hermite interpolant (scipy.interpolate.PchipInterpolator,
Fritsch-Carlson slopes), which creates no new extrema between plan samples, so no target goes
beyond what the plan asks. Rates and accelerations are the analytic derivatives of the segment's C2
cubic spline through the same samples (scipy.interpolate.CubicSpline, not-a-knot ends), not finite
differences: PCHIP is only C1, its second derivative jumps at every plan sample and its slope
estimate (a harmonic mean of neighbouring secants) degrades near extrema. On the demo plan at
500 Hz that made the leg-angle acceleration alternate between about -70 and -150 rad/s^2 from one
millisecond to the next around a swing reversal; the spline's is smooth. The two interpolants pass
through the same samples, so values and rates agree to the interpolation error (O(h^3)).

Gap rule (samples between two segments). The new time grid is t0 + k / rate. A grid sample that
falls strictly between the last plan sample of one phase (t_i) and the first plan sample of the next
phase (t_{i+1}) belongs to the *earlier* segment: the phase of the plan holds until a plan sample
shows the other phase (sample-and-hold of the phase flag). Its kinematic values (leg length and
angle, body motion) come from the earlier segment's cubic on its last interval, continued past t_i
(at most one plan interval), so the earlier phase's motion holds until the new phase starts and the
velocity step of a touchdown stays a step. Ground forces are not continued that way (a stance force
falling to zero at liftoff, continued as a cubic, turns negative): in the gap after a stance segment
the force goes linearly from the last stance sample to the next plan sample, and on every flight
sample it is zero (flight carries no force), so a force step at touchdown is not smeared into the
flight before it. A segment of a single plan sample holds that sample's values with zero rates.
Grid samples that coincide with a plan sample (to within 1e-6 of the finer sample spacing, for
rounding) take that sample's phase.

Times [s], lengths [m], angles [rad], forces [N]; arrays shaped (n,).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from scipy.interpolate import CubicSpline, PchipInterpolator

from legbridge.robots.errors import ResampleError

from .plan import ReducedTrajectory, frozen_array



@dataclass(frozen=True, eq=False)
class Channel:
    """One resampled quantity and its first two time derivatives (analytic, per segment)."""

    value: np.ndarray
    rate: np.ndarray
    accel: np.ndarray


@dataclass(frozen=True, eq=False)
class ResampledCase:
    """A case on the controller's time grid.

    time_s (n,) [s]; stance (n,) bool; segment (n,) int index of the plan segment each sample
    belongs to; leg_length, leg_angle: Channel [m, m/s, m/s^2] / [rad, rad/s, rad/s^2];
    force_x_n, force_z_n (n,) [N]; body_x, body_z: Channel or None (position from the plan, rate and
    acceleration from the velocity columns when given, otherwise from the position interpolant).
    in_gap (n,) bool: the sample lies in a gap between two plan phases (the gap rule), where the
    force is the straight line across the gap; quantities derived from the force change slope at
    the gap's ends, so their rates are taken per piece (mapping.motor_side)
    """

    time_s: np.ndarray
    stance: np.ndarray
    segment: np.ndarray
    leg_length: Channel
    leg_angle: Channel
    force_x_n: np.ndarray
    force_z_n: np.ndarray
    body_x: Channel | None
    body_z: Channel | None
    in_gap: np.ndarray | None = None

    @property
    def n_samples(self) -> int:
        return int(self.time_s.shape[0])

    @property
    def pieces(self) -> np.ndarray:
        """(n,) int label of each sample's interpolation piece: its plan segment, with a gap counted as
        a piece of its own (rates of force-derived quantities never span a change of label)."""
        gap = np.zeros(self.n_samples, bool) if self.in_gap is None else np.asarray(self.in_gap, bool)
        return 2 * np.asarray(self.segment, dtype=int) + gap.astype(int)


def time_grid(t0: float, t1: float, rate_hz: float) -> np.ndarray:
    """Grid t0 + k / rate_hz for k = 0 .. floor((t1 - t0) rate_hz) (end included when on the grid) [s]."""
    n = int(np.floor((t1 - t0) * rate_hz + 1e-9)) + 1
    return t0 + np.arange(n) / rate_hz


def segment_bounds(stance: np.ndarray) -> list[tuple[int, int]]:
    """Index ranges [start, stop) of contiguous runs of equal phase in a plan's stance flags."""
    s = np.asarray(stance, dtype=bool)
    cuts = np.flatnonzero(s[1:] != s[:-1]) + 1
    starts = np.concatenate([[0], cuts])
    stops = np.concatenate([cuts, [s.shape[0]]])
    return list(zip(starts.tolist(), stops.tolist()))


def assign_segments(t_plan: np.ndarray, bounds: list[tuple[int, int]], t_new: np.ndarray) -> np.ndarray:
    """Segment index of each new sample: the last segment whose first plan sample is at or before it."""
    starts = t_plan[[b[0] for b in bounds]]
    # a grid time within rounding (1e-6 of the finer spacing) of a segment's first sample is that sample
    spacing = np.min(np.diff(t_plan)) if t_plan.shape[0] > 1 else 1.0
    if t_new.shape[0] > 1:
        spacing = min(spacing, float(t_new[1] - t_new[0]))
    return np.searchsorted(starts - 1e-6 * spacing, t_new, side="right") - 1


def pchip_segments(t: np.ndarray, y: np.ndarray, tq: np.ndarray, seg_new: np.ndarray,
                   bounds: list[tuple[int, int]]) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Per-segment interpolation of the columns of y (n_plan, k) at tq, each of shape (m, k):
    values (PCHIP), first and second derivatives (C2 cubic spline), see the module docstring.

    One interpolant pair per segment for all columns (each column is interpolated independently).
    """
    m, k = tq.shape[0], y.shape[1]
    val, d1, d2 = np.empty((m, k)), np.empty((m, k)), np.empty((m, k))
    for i, (a, b) in enumerate(bounds):
        sel = seg_new == i
        if not sel.any():
            continue
        if b - a == 1:
            val[sel], d1[sel], d2[sel] = y[a], 0.0, 0.0
            continue
        p = PchipInterpolator(t[a:b], y[a:b], axis=0, extrapolate=True)
        spline = CubicSpline(t[a:b], y[a:b], axis=0, extrapolate=True)
        ts = tq[sel]
        val[sel], d1[sel], d2[sel] = p(ts), spline(ts, 1), spline(ts, 2)
    return val, d1, d2


def gap_bridged_force(t: np.ndarray, f: np.ndarray, plan_stance: np.ndarray, tq: np.ndarray,
                      f_segment: np.ndarray, stance: np.ndarray) -> np.ndarray:
    """A force channel on the grid under the gap rule [N].

    t, f, plan_stance: the plan's times, force and phase flags; tq, stance: the grid and its phase;
    f_segment: the per-segment interpolant's values on the grid. Grid times inside a plan interval
    whose two samples differ in phase take the straight line between those samples; flight samples
    take zero.
    """
    k = np.clip(np.searchsorted(t, tq, side="right") - 1, 0, t.shape[0] - 2)
    ps = np.asarray(plan_stance, dtype=bool)
    in_gap = (ps[k] != ps[k + 1]) & (tq > t[k])
    w = (tq - t[k]) / (t[k + 1] - t[k])
    out = np.where(in_gap, f[k] + w * (f[k + 1] - f[k]), f_segment)
    return np.where(stance, out, 0.0)


def resample_case(case: ReducedTrajectory, rate_hz: float) -> ResampledCase:
    """Resample one case to ``rate_hz`` [Hz], phase-aware (see the module docstring for the gap rule)."""
    if not np.isfinite(rate_hz) or rate_hz <= 0.0:
        raise ResampleError("bad controller rate", key="rate_hz", expected="a positive finite rate in Hz", found=rate_hz)
    t = np.asarray(case.time_s, dtype=float)
    if t.shape[0] < 2:
        raise ResampleError(f"case '{case.name}' is too short", key="time_s", expected="at least 2 samples", found=t.shape[0])
    dt = np.diff(t)
    if not np.all(dt > 0.0):
        row = int(np.flatnonzero(~(dt > 0.0))[0]) + 1
        raise ResampleError(f"case '{case.name}': time must increase", key="time_s", row=row,
                            expected=f"a time above {t[row - 1]:g} s", found=float(t[row]))
    bounds = segment_bounds(case.stance)
    tq = time_grid(float(t[0]), float(t[-1]), rate_hz)
    seg = assign_segments(t, bounds, tq)
    stance_seg = np.array([bool(case.stance[a]) for a, _ in bounds])
    stance = stance_seg[seg]

    zeros = np.zeros_like(t)
    columns = {"l": case.leg_length_m, "a": case.leg_angle_rad, "fx": case.force_x_n, "fz": case.force_z_n}
    for axis, pos, vel in (("x", case.body_x_m, case.body_vx_m_s), ("z", case.body_z_m, case.body_vz_m_s)):
        if pos is not None or vel is not None:
            # with only the velocity given the position is 0: a translating base's dynamics do not
            # depend on where it is, only its acceleration enters
            columns["b" + axis] = zeros if pos is None else pos
        if vel is not None:
            columns["v" + axis] = vel
    names = list(columns)
    val, d1, d2 = pchip_segments(t, np.column_stack([np.asarray(columns[c], dtype=float) for c in names]), tq, seg, bounds)
    col = {c: i for i, c in enumerate(names)}

    def channel(c: str) -> Channel:
        i = col[c]
        return Channel(frozen_array(val[:, i]), frozen_array(d1[:, i]), frozen_array(d2[:, i]))

    def body(axis: str) -> Channel | None:
        if "b" + axis not in col:
            return None
        if "v" + axis not in col:  # rate and acceleration from the position interpolant
            return channel("b" + axis)
        iv = col["v" + axis]
        return Channel(frozen_array(val[:, col["b" + axis]]), frozen_array(val[:, iv]), frozen_array(d1[:, iv]))

    fx, fz = (gap_bridged_force(t, np.asarray(f, dtype=float), case.stance, tq, val[:, col[c]], stance)
              for f, c in ((case.force_x_n, "fx"), (case.force_z_n, "fz")))
    k = np.clip(np.searchsorted(t, tq, side="right") - 1, 0, t.shape[0] - 2)
    ps = np.asarray(case.stance, dtype=bool)
    in_gap = (ps[k] != ps[k + 1]) & (tq > t[k])
    return ResampledCase(
        time_s=frozen_array(tq),
        stance=frozen_array(stance, dtype=bool),
        segment=frozen_array(seg, dtype=int),
        leg_length=channel("l"),
        leg_angle=channel("a"),
        force_x_n=frozen_array(fx),
        force_z_n=frozen_array(fz),
        body_x=body("x"),
        body_z=body("z"),
        in_gap=frozen_array(in_gap, dtype=bool),
    )
