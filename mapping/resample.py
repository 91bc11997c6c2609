"""Phase-aware resampling of a reduced-order case to the controller rate.

Each contiguous run of plan samples with the same phase (stance or flight) is one *segment*. Every
segment is interpolated on its own; no interpolant ever spans a touchdown or a liftoff. Within a
segment, values, rates and accelerations come from ONE interpolant, so they agree to the last sample:
a C2 cubic spline (scipy.interpolate.CubicSpline, not-a-knot ends) per *piece*, the segment cut at
every kink of the plan (a sample where a column changes slope abruptly, such as an open-loop policy
restarting at an apex: a spline run through a kink rings on both sides, its acceleration spiking).
Earlier versions took values from a shape-preserving PCHIP and rates from a separate spline: their
slopes disagreed by up to a third of the local rate at swing reversals, and PCHIP's second
derivative, which jumps at every plan sample, bent anything computed from the force (the motor side
of a series spring) at the plan's rate. A spline may overshoot a plan sample's range slightly between
samples in a smooth piece (by the order of h^4 times the fourth derivative); the vertical ground
force is kept >= 0 (the reader refuses a plan whose ground pulls, so a negative value between
samples is the interpolant's).

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

Phase ends (peaks judged on the interpolant, whatever the export rate). Under the gap rule the earlier
phase's motion runs until the first plan sample of the next phase, t_{i+1}; a quantity that grows
towards touchdown (a swing's back-EMF) is largest at the gap's end, t_{i+1} approached from the left,
an instant no uniform grid samples: a finer grid merely comes closer (a rigid hip's voltage read 9.23
V at 500 Hz, 9.53 at 1 kHz and 9.76 at 4 kHz on the three-joint demo leg). With ``phase_ends=True``
:func:`resample_case` therefore also evaluates the earlier phase's interpolant AT t_{i+1} (its left
limit) for every gap, inserted into the time array just before the grid samples at or after t_{i+1},
together with the gap's start t_i (inserted after the grid samples at or before t_i), so that every
gap is one interpolation piece with both its ends whatever the rate, and both are marked in
``probe``. mapping.translate translates them with the grid and hands them to the checks as the
trajectory's ``phase_ends``; the exported targets never contain them.

Times [s], lengths [m], angles [rad], forces [N]; arrays shaped (n,).
"""

from __future__ import annotations

from legbridge.robots.reprs import short_repr

from dataclasses import dataclass

import numpy as np
from scipy.interpolate import CubicSpline

from legbridge.robots.errors import ResampleError

from .plan import ReducedTrajectory, frozen_array



@dataclass(frozen=True, eq=False)
class Channel:
    """One resampled quantity and its first two time derivatives (analytic, per segment)."""

    value: np.ndarray
    rate: np.ndarray
    accel: np.ndarray


@short_repr('time_s')
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
    piece (n,) int: the running number of the interpolation piece (segments cut at kinks)
    probe (n,) bool or None: the sample is a phase end (see the module docstring), not a grid sample
    plan_time_s (m,): the plan's own sample times (the knots of rates taken later, mapping.motor_side)
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
    piece: np.ndarray | None = None
    probe: np.ndarray | None = None
    plan_time_s: np.ndarray | None = None

    @property
    def n_samples(self) -> int:
        return int(self.time_s.shape[0])

    @property
    def pieces(self) -> np.ndarray:
        """(n,) int label of each sample's interpolation piece: its piece of a plan segment (segments are
        cut at kinks), with a gap counted as a piece of its own (rates of force-derived quantities
        never span a change of label)."""
        gap = np.zeros(self.n_samples, bool) if self.in_gap is None else np.asarray(self.in_gap, bool)
        base = np.asarray(self.segment if self.piece is None else self.piece, dtype=int)
        return 2 * base + gap.astype(int)


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


KINK_RATIO = 8.0
"""A plan sample is a kink when its change of slope exceeds this many times the change of slope two
samples to either side (a smooth curve changes slope by about y'' h at every sample)."""
KINK_TOL = 1e-6
"""Changes of slope below this fraction of the column's largest slope are never kinks (the plan's
own numerical noise)."""


def kink_samples(t: np.ndarray, y: np.ndarray) -> np.ndarray:
    """Indices (into t) of interior samples where a column of y (m, k) changes slope abruptly.

    With s_i the slope of interval i, the change of slope at sample i is ds_i = s_i - s_{i-1}; the
    sample is a kink when |ds_i| > KINK_RATIO max(|ds_{i-2}|, |ds_{i+2}|) + KINK_TOL max|s| for some
    column. A kink between two samples shows at both and splits there twice (a straight piece between).
    A step of the curvature (the third difference far above its value two steps away) is cut too:
    a C2 spline through it rings as well.
    """
    m = t.shape[0]
    if m < 3:
        return np.zeros(0, dtype=int)
    y2 = y.reshape(m, -1)
    slope = np.diff(y2, axis=0) / np.diff(t)[:, None]            # (m - 1, k)
    ds = np.abs(np.diff(slope, axis=0))                           # (m - 2, k): at samples 1 .. m - 2
    pad = np.pad(ds, ((2, 2), (0, 0)), constant_values=np.nan)
    with np.errstate(invalid="ignore"):                           # the change two samples away on each side;
        ref = np.fmax(pad[:-4], pad[4:])                          # none there (a short segment): never a kink
    ref = np.where(np.isnan(ref), np.inf, ref)
    tol = KINK_TOL * np.max(np.abs(slope), axis=0, initial=0.0)
    kink = np.any(ds > KINK_RATIO * ref + tol, axis=1)
    cuts = set((np.flatnonzero(kink) + 1).tolist())
    # a step of the curvature (a ramp that starts bending at once): the change of the slope change,
    # d3_j = ds_j+1 - ds_j, far above its value two steps away; cut at the sample where it starts
    sds = np.diff(slope, axis=0)                                  # signed ds
    if sds.shape[0] >= 2:
        d3 = np.abs(np.diff(sds, axis=0))                         # (m - 3, k), between samples j + 1 and j + 2
        pad3 = np.pad(d3, ((2, 2), (0, 0)), constant_values=np.nan)
        with np.errstate(invalid="ignore"):
            ref3 = np.fmax(pad3[:-4], pad3[4:])
        ref3 = np.where(np.isnan(ref3), np.inf, ref3)
        tol3 = KINK_TOL * np.max(ds, axis=0, initial=0.0)
        step = np.any(d3 > KINK_RATIO * ref3 + tol3, axis=1)
        cuts |= set((np.flatnonzero(step) + 1).tolist())
    return np.array(sorted(cuts), dtype=int)


def _piece_fit(t: np.ndarray, y: np.ndarray):
    """The one interpolant of a piece: a C2 cubic spline (not-a-knot) through 3+ samples, the line
    through 2, the constant through 1; returns f(tq, nu) for nu = 0, 1, 2."""
    if t.shape[0] >= 3:
        return CubicSpline(t, y, axis=0, bc_type="not-a-knot", extrapolate=True)
    if t.shape[0] == 2:
        slope = (y[1] - y[0]) / (t[1] - t[0])
        return lambda x, nu=0: (y[0] + np.outer(np.asarray(x) - t[0], slope) if nu == 0 else
                                np.tile(slope if nu == 1 else 0.0 * slope, (np.shape(x)[0], 1)))
    return lambda x, nu=0: np.tile(y[0] if nu == 0 else 0.0 * y[0], (np.shape(x)[0], 1))


def segment_interpolants(t: np.ndarray, y: np.ndarray, tq: np.ndarray, seg_new: np.ndarray,
                         bounds: list[tuple[int, int]]):
    """Per-segment interpolation of the columns of y (n_plan, k) at tq, each result (m, k): values, first
    and second derivatives of ONE interpolant, so they agree to the last sample; and (m,) the running
    number of the piece each grid sample belongs to.

    Each phase segment is cut at its kinks (kink_samples: a policy restarting at an apex, a ramp that
    starts) into pieces sharing the kink sample, and each piece gets a C2 cubic spline (not-a-knot;
    de Boor, A Practical Guide to Splines, ch. IV): a spline run through a kink rings on both sides of
    it, a piece ending there does not. A grid sample belongs to the piece whose interval holds it.
    """
    m, k = tq.shape[0], y.shape[1]
    val, d1, d2 = np.empty((m, k)), np.empty((m, k)), np.empty((m, k))
    label = np.zeros(m, dtype=int)
    next_label = 0
    for i, (a, b) in enumerate(bounds):
        sel = np.flatnonzero(seg_new == i)
        if sel.size == 0:
            continue
        ts, ys = t[a:b], y[a:b]
        if b - a == 1:
            val[sel], d1[sel], d2[sel] = ys[0], 0.0, 0.0
            label[sel] = next_label
            next_label += 1
            continue
        cuts = kink_samples(ts, ys)
        knots = np.unique(np.concatenate([[0], cuts, [b - a - 1]])).astype(int)
        # the piece whose plan interval holds the grid time (the gap past the last sample: the last piece)
        piece = np.clip(np.searchsorted(ts[knots], tq[sel], side="right") - 1, 0, len(knots) - 2)
        label[sel] = next_label + piece
        next_label += len(knots) - 1
        for p_i in range(len(knots) - 1):  # one spline per piece (a handful per segment), not per sample
            rows = sel[piece == p_i]
            if rows.size == 0:
                continue
            lo, hi = knots[p_i], knots[p_i + 1]
            f = _piece_fit(ts[lo:hi + 1], ys[lo:hi + 1])
            x = tq[rows]
            val[rows], d1[rows], d2[rows] = f(x, 0), f(x, 1), f(x, 2)
    return val, d1, d2, label


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


def phase_end_times(t: np.ndarray, plan_stance: np.ndarray, t_grid: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """(times, index of the last plan sample before each) of the phase ends within the grid: the first
    plan sample of every phase that follows another, t_{i+1}, where the earlier phase ends."""
    ps = np.asarray(plan_stance, dtype=bool)
    i = np.flatnonzero(ps[1:] != ps[:-1])
    keep = (t[i + 1] > t_grid[0]) & (t[i + 1] <= t_grid[-1] + 1e-12)
    return t[i + 1][keep], i[keep]


def resample_case(case: ReducedTrajectory, rate_hz: float, *, phase_ends: bool = False) -> ResampledCase:
    """Resample one case to ``rate_hz`` [Hz], phase-aware (see the module docstring for the gap rule);
    with ``phase_ends`` the earlier phase's left limit at every phase change is inserted as well
    (marked in ``probe``)."""
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
    grid = time_grid(float(t[0]), float(t[-1]), rate_hz)
    seg = assign_segments(t, bounds, grid)
    ps = np.asarray(case.stance, dtype=bool)
    k = np.clip(np.searchsorted(t, grid, side="right") - 1, 0, t.shape[0] - 2)
    in_gap = (ps[k] != ps[k + 1]) & (grid > t[k])
    probe = np.zeros(grid.shape[0], dtype=bool)
    tq = grid
    start_of = end_of = np.zeros(0, dtype=int)
    kind = np.zeros(grid.shape[0], dtype=int)  # 0 grid sample, 1 a gap's start, 2 a gap's end
    if phase_ends:
        t_end, i_end = phase_end_times(t, ps, grid)
        if t_end.size:
            # each gap (t_i, t_{i+1}) as one piece with both its ends: t_i (the gap's start, where its
            # rates begin) and t_{i+1} (the earlier phase's left limit), both in the earlier segment
            # (that of plan sample i); the start after the grid samples at or before t_i, the end
            # before those at or after t_{i+1}
            seg_of_plan = np.repeat(np.arange(len(bounds)), [b - a for a, b in bounds])
            tol = 1e-9 * (t_end - t[i_end])
            pos_s = np.searchsorted(grid, t[i_end] + tol, side="right")
            pos_e = np.searchsorted(grid, t_end - tol, side="left")
            key = np.concatenate([np.arange(grid.shape[0]) + 0.5, pos_s + 0.0, pos_e + 0.25])
            order = np.argsort(key, kind="stable")
            m = i_end.size
            kind = np.concatenate([np.zeros(grid.shape[0], int), np.ones(m, int), np.full(m, 2)])[order]
            tq = np.concatenate([grid, t[i_end], t_end])[order]
            seg = np.concatenate([seg, seg_of_plan[i_end], seg_of_plan[i_end]])[order]
            in_gap = np.concatenate([in_gap, np.ones(2 * m, bool)])[order]
            probe = kind > 0
            which = np.concatenate([np.full(grid.shape[0], -1), i_end, i_end])[order]
            start_of, end_of = which[kind == 1], which[kind == 2]
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
    val, d1, d2, piece_label = segment_interpolants(t, np.column_stack([np.asarray(columns[c], dtype=float) for c in names]), tq, seg, bounds)
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

    forces = []
    for f, c in ((case.force_x_n, "fx"), (case.force_z_n, "fz")):
        f = np.asarray(f, dtype=float)
        out = gap_bridged_force(t, f, case.stance, tq, val[:, col[c]], stance)
        if start_of.size:  # a gap's ends: the bridge's end values (the earlier phase is stance) or 0
            starts, ends = np.flatnonzero(kind == 1), np.flatnonzero(kind == 2)
            out[starts] = np.where(stance[starts], f[start_of], 0.0)
            out[ends] = np.where(stance[ends], f[end_of + 1], 0.0)
        forces.append(out)
    fx, fz = forces
    fz = np.maximum(fz, 0.0)  # contact cannot pull: a spline dipping below zero near liftoff is the interpolant's
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
        piece=frozen_array(piece_label, dtype=int),
        probe=frozen_array(probe, dtype=bool) if phase_ends else None,
        plan_time_s=frozen_array(t),
    )
