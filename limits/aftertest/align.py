"""Put a hardware log's clock onto the reviewed plan's clock.

The test repeats one plan case of period T: the targets are given over one period (plan time in
[0, T)) and repeat. An alignment is one number, the offset: ``plan_time = log_time - offset_s``
and the plan phase of a log sample is ``(log_time - offset_s) mod T``. A sync edge gives its own
log time; touchdowns and cross-correlation give the first repetition start at or after the log's
first sample, t0 <= offset_s < t0 + T.

Methods, tried in this order until one is credible:

1. ``sync``: the log's sync column; its first rising edge (0 -> nonzero, the time of the first
   nonzero sample) is plan time 0.
2. ``touchdowns``: rising edges of the logged contact (midway between the last 0 and the first 1)
   matched with the planned touchdowns (mod T) of the same leg; the offset is the least-squares
   value over the matched events (the mean of their differences).
3. ``cross-correlation``: of the joint positions, log resampled onto a uniform grid of T/M
   (M = T / median log step), target repeated periodically; the normalised correlation of every
   grid shift in one period is computed at once by FFT (circular correlation of the log folded
   onto one period), the peak refined by a parabola through it and its two neighbours.

Whatever the method, the positions decide: a credible alignment has a normalised correlation
(Pearson, each joint's mean removed) of at least MIN_CORRELATION between logged and target
positions. For sync and touchdowns the correlation is the best within +-LAG_WINDOW_S of the
method's offset, as the joints follow their targets with a tracking lag; cross-correlation's offset
includes that lag. When the log has no joint position, sync and touchdowns are taken unchecked (the
detail says so). Otherwise AlignmentError, one line naming what was tried and the best value found.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from legbridge.robots.errors import AlignmentError, Described

from .log import HardwareLog

MIN_CORRELATION = 0.9
"""Normalised correlation of logged and target positions that a credible alignment needs. A common
tracking lag does not lower it (cross-correlation's offset absorbs it; sync and touchdowns take the
best within +-LAG_WINDOW_S); joints lagging each other by 20 ms sit +-10 ms off the common offset,
and a sinusoid of frequency f delayed by d correlates cos(2 pi f d) with itself (0.99 at 2.5 Hz);
noise of 5 % of the motion's spread costs about 0.1 %. Another motion, or the right one a quarter period off, correlates near 0. Chosen by us."""
AMBIGUOUS_PEAK_RATIO = 0.95
"""Cross-correlation: when the next-best separate peak reaches this fraction of the best, two offsets
fit nearly equally (a motion with a shorter inner period) and the result is refused. Chosen by us."""
LAG_WINDOW_S = 0.1
"""A joint's tracking lag is looked for within +- this [s] (servo lag is tens of ms)."""
TOUCHDOWN_MATCH_FRACTION = 0.1
"""A logged touchdown matches a planned one when, after the offset, they are within this fraction of
the period."""
TOUCHDOWN_SPREAD_LIMIT_S = 0.02
"""Touchdowns: the standard deviation of the matched time differences must stay below this [s];
contact switches and gait-to-gait variation jitter by some ms. Confidence falls linearly to 0 at it."""
MIN_TOUCHDOWN_MATCHED = 0.8
"""Touchdowns: at least this fraction of the logged touchdowns must match a planned one."""
MIN_GRID_POINTS = 16
"""The uniform grid has at least this many points per period."""
MIN_PERIODS_FOR_CORRELATION = 1.0
"""Cross-correlation needs a log spanning at least this many periods."""
MIN_POSITION_SAMPLES = 10
METHODS = ("sync", "touchdowns", "cross-correlation")


@dataclass(frozen=True)
class Alignment:
    """How the log's clock maps onto the plan's: ``plan_time = log_time - offset_s``.

    method: one of METHODS. confidence in [0, 1]: sync, the position correlation at the sync offset
    (best within the lag window; NaN when no position was logged); touchdowns, the matched fraction
    times (1 - spread / TOUCHDOWN_SPREAD_LIMIT_S); cross-correlation, the normalised correlation at
    the peak. residual_rms_rad: RMS of logged minus target position over the aligned joints, with
    offset_s applied (NaN without positions). detail: one line on how it was found.
    """

    offset_s: float
    method: str
    confidence: float
    detail: str
    residual_rms_rad: float

    def plan_time(self, log_time_s) -> np.ndarray:
        """Plan time [s] of log times (before reducing modulo the period)."""
        return np.asarray(log_time_s, dtype=float) - self.offset_s


@dataclass(frozen=True)
class _Targets:
    time_s: np.ndarray
    position: dict
    period_s: float


@dataclass(frozen=True)
class _Scan:
    """Normalised correlation for every grid shift p in one period; shift p <-> offset g0 - p h (mod T)."""

    r: np.ndarray
    h: float
    g0: float
    period_s: float

    def offset(self, p: float) -> float:
        return self.g0 + float(np.mod(-p * self.h, self.period_s))

    def index(self, offset: float) -> float:
        return float(np.mod((self.g0 - offset) / self.h, self.r.size))


# ------------------------------------------------------------------------------------------- inputs

def _floats(value, path: str, key: str) -> np.ndarray:
    try:
        return np.asarray(value, dtype=float)
    except (TypeError, ValueError) as exc:
        raise AlignmentError("not numbers", path=path, key=key, expected="an array of numbers",
                             found=Described(type(value).__name__)) from exc


def _targets(log: HardwareLog, target_time_s, target_position, period_s) -> _Targets:
    """Checked targets; a last target time equal to the period (the first sample repeated) is dropped."""
    path = log.path
    tl = _floats(log.time_s, path, "time_s")
    if tl.ndim != 1 or tl.size < 2 or not np.all(np.isfinite(tl)) or np.any(np.diff(tl) <= 0):
        raise AlignmentError("log times unusable", path=path, key="time_s",
                             expected="at least 2 finite, strictly increasing times", found=Described(f"shape {tl.shape}"))
    T = _floats(period_s, path, "period_s")
    if T.ndim != 0 or not (np.isfinite(T) and T > 0):
        raise AlignmentError("no plan period", path=path, key="period_s", expected="a positive period [s]",
                             found=Described(repr(period_s)))
    T = float(T)
    t = _floats(target_time_s, path, "target_time_s")
    keep = t.size - 1 if t.ndim == 1 and t.size > 2 and abs(t[-1] - T) <= 1e-9 * T else t.size
    if t.ndim != 1 or t.size < 2 or not np.all(np.isfinite(t)):
        raise AlignmentError("target times unusable", path=path, key="target_time_s",
                             expected="a 1-D array of at least 2 finite times", found=Described(f"shape {t.shape}"))
    if np.any(np.diff(t) <= 0) or t[0] < 0 or t[keep - 1] >= T:
        raise AlignmentError("target times unusable", path=path, key="target_time_s",
                             expected=f"strictly increasing times in [0, {T:g}) s (one period)",
                             found=Described(f"{t[0]:g} .. {t[-1]:g} s"))
    if not isinstance(target_position, dict):
        raise AlignmentError(path=path, key="target_position", expected="a dict joint -> positions [rad]",
                             found=Described(type(target_position).__name__))
    pos = {}
    for j, y in target_position.items():
        key = f"target_position[{j!r}]"
        y = _floats(y, path, key)
        if y.shape != t.shape or not np.all(np.isfinite(y)):
            raise AlignmentError("target positions unusable", path=path, key=key,
                                 expected=f"{t.size} finite values (as target_time_s)", found=Described(f"shape {y.shape}"))
        pos[j] = y[:keep]
    return _Targets(t[:keep], pos, T)


def _pairs(log: HardwareLog, tg: _Targets) -> dict:
    """joint -> (log times, logged positions), finite samples only, for joints logged and targeted."""
    out = {}
    for j in tg.position:
        x = log.get(j, "position")
        if x is None:
            continue
        x = np.asarray(x, dtype=float)
        ok = np.isfinite(x)
        if np.count_nonzero(ok) >= MIN_POSITION_SAMPLES and np.ptp(x[ok]) > 0:
            out[j] = (np.asarray(log.time_s)[ok], x[ok])
    return out


def _target_at(tg: _Targets, joint: str, plan_time: np.ndarray) -> np.ndarray:
    return np.interp(plan_time, tg.time_s, tg.position[joint], period=tg.period_s)


# ------------------------------------------------------------------------------------------ measures

def _pearson(pairs: dict, tg: _Targets, offset: float, start: float = -np.inf) -> float:
    num = sxx = syy = 0.0
    for j, (t, x) in pairs.items():
        m = t >= start
        if np.count_nonzero(m) < 2:
            continue
        xd = x[m] - x[m].mean()
        y = _target_at(tg, j, t[m] - offset)
        yd = y - y.mean()
        num += float(xd @ yd)
        sxx += float(xd @ xd)
        syy += float(yd @ yd)
    return num / np.sqrt(sxx * syy) if sxx > 0 and syy > 0 else float("nan")


def _residual(pairs: dict, tg: _Targets, offset: float, start: float = -np.inf) -> float:
    sq, n = 0.0, 0
    for j, (t, x) in pairs.items():
        m = t >= start
        e = x[m] - _target_at(tg, j, t[m] - offset)
        sq += float(e @ e)
        n += e.size
    return float(np.sqrt(sq / n)) if n else float("nan")


def _scan(log: HardwareLog, pairs: dict, tg: _Targets, start: float | None = None) -> _Scan | None:
    """Normalised correlation over all grid shifts of one period (None: log too short for a grid)."""
    T = tg.period_s
    t_log = np.asarray(log.time_s, dtype=float)
    M = max(int(round(T / float(np.median(np.diff(t_log))))), MIN_GRID_POINTS)
    h = T / M
    g0 = t_log[0] if start is None else max(float(start), t_log[0])
    n = int(np.floor((t_log[-1] - g0) / h)) + 1
    if n < MIN_GRID_POINTS:
        return None
    grid = g0 + h * np.arange(n)
    k = np.arange(n) % M
    phase = h * np.arange(M)
    num = np.zeros(M)
    den = np.zeros(M)
    sxx = 0.0
    for j, (t, x) in pairs.items():
        valid = (grid >= t[0]) & (grid <= t[-1])
        if np.count_nonzero(valid) < 2:
            continue
        xg = np.interp(grid, t, x)
        xg = np.where(valid, xg - xg[valid].mean(), 0.0)
        y = _target_at(tg, j, phase)
        y = y - y.mean()
        X = np.bincount(k, weights=xg, minlength=M)          # the log folded onto one period
        C = np.bincount(k, weights=valid.astype(float), minlength=M)
        # circular cross-correlation sum_m X[m] y[(m + p) mod M] for every p (correlation theorem)
        num += np.fft.irfft(np.conj(np.fft.rfft(X)) * np.fft.rfft(y), M)
        den += np.fft.irfft(np.conj(np.fft.rfft(C)) * np.fft.rfft(y * y), M)
        sxx += float(xg @ xg)
    if sxx <= 0:
        return None
    r = num / np.sqrt(sxx * np.maximum(den, 1e-300))
    return _Scan(r=np.clip(r, -1.0, 1.0), h=h, g0=float(g0), period_s=T)


def _parabola(r: np.ndarray, p: int) -> float:
    """Sub-sample peak position: vertex of the parabola through r[p-1], r[p], r[p+1] (circular)."""
    a, b, c = r[(p - 1) % r.size], r[p % r.size], r[(p + 1) % r.size]
    d = a - 2.0 * b + c
    return float(p) + (0.5 * (a - c) / d if d < 0 else 0.0)


def _second_peak(r: np.ndarray, p: int) -> float:
    """The highest local maximum outside the main peak's lobe (walking downhill from p both ways)."""
    q = np.roll(r, -p)
    right = np.flatnonzero(np.diff(q) >= 0)
    back = np.concatenate((q[:1], q[:0:-1]))
    left = np.flatnonzero(np.diff(back) >= 0)
    lobe = np.zeros(q.size, bool)
    lobe[: (right[0] + 1 if right.size else q.size)] = True
    lobe[q.size - (left[0] if left.size else q.size):] = True
    peaks = (q >= np.roll(q, 1)) & (q > np.roll(q, -1)) & ~lobe
    return float(q[peaks].max()) if np.any(peaks) else float("-inf")


def _best_near(scan: _Scan, offset: float) -> tuple[float, float] | None:
    """Offset of the highest correlation within +-LAG_WINDOW_S of ``offset``, and the lag to it; None
    when the highest lies at the window's edge (no peak inside)."""
    w = int(np.ceil(LAG_WINDOW_S / scan.h))
    M = scan.r.size
    w = min(w, (M - 1) // 2)
    p0 = int(round(scan.index(offset)))
    shifts = np.arange(p0 - w, p0 + w + 1)
    i = int(np.argmax(scan.r[shifts % M]))
    if i in (0, shifts.size - 1):
        return None
    p = _parabola(scan.r, int(shifts[i]))
    lag = float(np.mod(scan.offset(p) - offset + scan.period_s / 2, scan.period_s) - scan.period_s / 2)
    return offset + lag, lag


def _within(offset: float, t0: float, T: float) -> float:
    return t0 + float(np.mod(offset - t0, T))


# ------------------------------------------------------------------------------------------- methods

class _Tried:
    """What was tried and refused (one phrase each) and the position correlations seen."""

    def __init__(self) -> None:
        self.notes: list[str] = []
        self.scores: list[float] = []

    def add(self, note: str, score: float = float("nan")) -> None:
        self.notes.append(note)
        self.scores.append(float(score))


def _rising(values: np.ndarray) -> np.ndarray:
    """Indices i of samples that are nonzero where sample i - 1 is 0."""
    v = np.asarray(values, dtype=float)
    nz = np.isfinite(v) & (v != 0)
    return np.flatnonzero((v[:-1] == 0) & nz[1:]) + 1


def _check_positions(log, pairs, tg, offset, start, name, tried):
    """(credible, confidence, lag, text) for a sync or touchdown offset, judged on the positions."""
    if not pairs:
        return True, float("nan"), 0.0, "not checked against positions (no joint position logged)"
    start = -np.inf if start is None else start
    scan = _scan(log, pairs, tg, start=start if np.isfinite(start) else None)
    near = _best_near(scan, offset) if scan is not None else None
    r_at = _pearson(pairs, tg, offset, start)
    if near is None:
        tried.add(f"{name} (offset {offset:.4f} s: positions correlate {r_at:.3f} there, "
                  f"no peak within +-{LAG_WINDOW_S:g} s)", r_at)
        return False, r_at, 0.0, ""
    best_offset, lag = near
    r = _pearson(pairs, tg, best_offset, start)
    if not r >= MIN_CORRELATION:
        tried.add(f"{name} (offset {offset:.4f} s: best position correlation {r:.3f} within "
                  f"+-{LAG_WINDOW_S:g} s, below {MIN_CORRELATION:g})", r)
        return False, r, lag, ""
    return True, r, lag, (f"positions correlate {r:.3f}, following {1e3 * lag:+.1f} ms later "
                          f"(tracking lag; {r_at:.3f} at the offset itself)")


def _by_sync(log, pairs, tg, tried):
    if log.sync is None:
        return None
    edges = _rising(log.sync)
    if edges.size == 0:
        tried.add("sync (no rising edge 0 -> nonzero in the sync column)")
        return None
    offset = float(log.time_s[edges[0]])
    ok, conf, lag, text = _check_positions(log, pairs, tg, offset, offset, "sync", tried)
    if not ok:
        return None
    return Alignment(offset_s=offset, method="sync", confidence=float(conf),
                     detail=f"first sync edge at log time {offset:.4f} s = plan time 0; {text}",
                     residual_rms_rad=_residual(pairs, tg, offset, offset))


def _nearest(events: np.ndarray, offsets: np.ndarray, planned: np.ndarray, T: float) -> np.ndarray:
    """(offsets, events): event - offset - nearest planned time, wrapped to [-T/2, T/2)."""
    d = np.mod(events[None, :, None] - offsets[:, None, None] - planned[None, None, :] + T / 2, T) - T / 2
    i = np.argmin(np.abs(d), axis=2)
    return np.take_along_axis(d, i[..., None], axis=2)[..., 0]


def _by_touchdowns(log, pairs, tg, touchdown_times, tried):
    if not touchdown_times:
        return None
    if not isinstance(touchdown_times, dict):
        raise AlignmentError(path=log.path, key="touchdown_times", expected="a dict leg -> planned touchdown times [s]",
                             found=Described(type(touchdown_times).__name__))
    T = tg.period_s
    t_log = np.asarray(log.time_s, dtype=float)
    logged, planned = [], []
    for leg, td in touchdown_times.items():
        c = log.get(leg, "contact")
        if c is None:
            continue
        td = np.mod(_floats(td, log.path, f"touchdown_times[{leg!r}]").ravel(), T)
        if td.size == 0 or not np.all(np.isfinite(td)):
            continue
        i = _rising(np.asarray(c, dtype=float))
        if i.size:
            logged.append(0.5 * (t_log[i - 1] + t_log[i]))
            planned.append(td)
    if not logged:
        tried.add("touchdowns (no contact rising edge of a leg with planned touchdowns)")
        return None
    window = TOUCHDOWN_MATCH_FRACTION * T
    cands = np.concatenate([(e[:3, None] - td[None, :]).ravel() for e, td in zip(logged, planned)])

    def diffs(offsets):  # (C, events): each logged touchdown minus its nearest planned one, wrapped to +-T/2
        return np.concatenate([_nearest(e, offsets, td, T) for e, td in zip(logged, planned)], axis=1)

    d = diffs(cands)
    matched = np.abs(d) <= window
    count = matched.sum(axis=1)
    rms = np.sqrt(np.where(matched, d * d, 0.0).sum(axis=1) / np.maximum(count, 1))
    best = np.lexsort((rms, -count))[0]
    offset = float(cands[best])
    for _ in range(2):  # least squares for one offset: move by the mean matched difference
        d1 = diffs(np.array([offset]))[0]
        m = np.abs(d1) <= window
        if not np.any(m):
            break
        offset += float(d1[m].mean())
    d1 = diffs(np.array([offset]))[0]
    m = np.abs(d1) <= window
    frac = float(np.count_nonzero(m)) / d1.size
    spread = float(d1[m].std()) if np.any(m) else float("inf")
    offset = _within(offset, float(t_log[0]), T)
    if frac < MIN_TOUCHDOWN_MATCHED or spread > TOUCHDOWN_SPREAD_LIMIT_S:
        tried.add(f"touchdowns ({np.count_nonzero(m)} of {d1.size} matched, spread {1e3 * spread:.1f} ms; "
                     f"need {MIN_TOUCHDOWN_MATCHED:.0%} and <= {1e3 * TOUCHDOWN_SPREAD_LIMIT_S:g} ms)")
        return None
    ok, _, lag, text = _check_positions(log, pairs, tg, offset, None, "touchdowns", tried)
    if not ok:
        return None
    conf = frac * max(0.0, 1.0 - spread / TOUCHDOWN_SPREAD_LIMIT_S)
    return Alignment(offset_s=offset, method="touchdowns", confidence=float(conf),
                     detail=(f"{np.count_nonzero(m)} of {d1.size} logged touchdowns matched, spread {1e3 * spread:.1f} ms; "
                             f"the offset includes the contact detection delay; {text}"),
                     residual_rms_rad=_residual(pairs, tg, offset))


def _by_correlation(log, pairs, tg, tried):
    if not pairs:
        tried.add("cross-correlation (no joint logged with a position and a target)")
        return None
    t = np.asarray(log.time_s, dtype=float)
    if t[-1] - t[0] < MIN_PERIODS_FOR_CORRELATION * tg.period_s:
        tried.add(f"cross-correlation (log spans {t[-1] - t[0]:.3f} s, less than one period {tg.period_s:g} s)")
        return None
    scan = _scan(log, pairs, tg)
    if scan is None:
        tried.add("cross-correlation (log too sparse for a grid)")
        return None
    p = int(np.argmax(scan.r))
    offset = scan.offset(_parabola(scan.r, p))
    r = _pearson(pairs, tg, offset)
    second = _second_peak(scan.r, p)
    ratio = max(second, 0.0) / scan.r[p] if scan.r[p] > 0 else 1.0
    where = f"peak correlation {r:.3f} at offset {offset:.4f} s, next separate peak {max(second, 0.0):.3f} (ratio {ratio:.2f})"
    if not r >= MIN_CORRELATION or ratio >= AMBIGUOUS_PEAK_RATIO:
        why = f"below {MIN_CORRELATION:g}" if not r >= MIN_CORRELATION else f"ambiguous, ratio >= {AMBIGUOUS_PEAK_RATIO:g}"
        tried.add(f"cross-correlation of {len(pairs)} joint position(s) ({where}: {why})", r)
        return None
    return Alignment(offset_s=offset, method="cross-correlation", confidence=float(r),
                     detail=(f"cross-correlation of {', '.join(pairs)} positions: {where}; the offset includes the "
                             f"joints' tracking lag (joint_lags gives each joint's own)"),
                     residual_rms_rad=_residual(pairs, tg, offset))


def align_log(log: HardwareLog, *, target_time_s, target_position: dict, period_s: float,
              touchdown_times: dict | None = None) -> Alignment:
    """The offset putting ``log`` onto the plan's clock (module docstring); AlignmentError when no
    method gives a credible one.

    target_time_s: plan times of one period, in [0, period_s); target_position: joint -> target
    positions [rad] at those times; touchdown_times: leg -> planned touchdown times [s] (mod period).
    """
    tg = _targets(log, target_time_s, target_position, period_s)
    pairs = _pairs(log, tg)
    tried = _Tried()
    for method in (lambda: _by_sync(log, pairs, tg, tried),
                   lambda: _by_touchdowns(log, pairs, tg, touchdown_times, tried),
                   lambda: _by_correlation(log, pairs, tg, tried)):
        found = method()
        if found is not None:
            if tried.notes:  # an earlier method was refused: say so
                found = Alignment(found.offset_s, found.method, found.confidence,
                                  found.detail + "; refused first: " + "; ".join(tried.notes), found.residual_rms_rad)
            return found
    best = max((r for r in tried.scores if np.isfinite(r)), default=None)
    raise AlignmentError("no credible alignment of the log with the plan; tried " + "; ".join(tried.notes), path=log.path,
                         expected=f"logged and target positions correlating >= {MIN_CORRELATION:g}",
                         found=Described("no position correlation" if best is None else f"at best {best:.3f}"),
                         hint="Add a sync column (0 -> nonzero at plan time 0) to the log, or a mapping file naming "
                              "its joint-position columns")


def joint_lags(log: HardwareLog, alignment: Alignment, target_time_s, target_position: dict,
               period_s: float) -> dict:
    """Per joint, the extra delay [s] of the logged position behind its target after the common
    offset (positive: the joint follows later): the correlation peak within +-LAG_WINDOW_S, refined
    to sub-sample, over the samples from the sync edge on for a sync alignment, all others. NaN for a joint whose best correlation in that window lies at its edge."""
    tg = _targets(log, target_time_s, target_position, period_s)
    start = alignment.offset_s if alignment.method == "sync" else None  # before a sync edge the plan has not started
    out = {}
    for j, pair in _pairs(log, tg).items():
        scan = _scan(log, {j: pair}, tg, start=start)
        near = _best_near(scan, alignment.offset_s) if scan is not None else None
        out[j] = float("nan") if near is None else near[1]
    return out
