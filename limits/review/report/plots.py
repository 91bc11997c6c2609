"""Figures of the pre-test review, one function per figure (matplotlib, Agg canvas, no pyplot state).

Every plot function returns a Matplotlib figure (restyle it, save it, show it in a notebook) that
carries a :class:`FigureInfo` as ``fig.legbridge``: its name, alternative text, the spans it shaded
and notes. The report embeds each one as a :class:`Figure` (PNG bytes) through :func:`embed`. Plots are meant to stay readable in print and in
greyscale: every series has its own line style or marker, flagged spans are hatched as well as tinted.
Units: time [s], joint angle [rad], joint speed [rad/s], joint torque [N m], force [N], temperature [degC].
"""

from __future__ import annotations

import io
from dataclasses import dataclass
from typing import TYPE_CHECKING

import numpy as np

from legbridge.limits.checks import get_limit
from legbridge.limits.checks.base import PANEL_GROUND
from legbridge.limits.verdict import Verdict

if TYPE_CHECKING:
    from matplotlib.figure import Figure as MplFigure

SEVERITY_EXCEEDS, SEVERITY_NEAR = Verdict.EXCEEDS, Verdict.NEAR

# Our colours (print-friendly, distinct in greyscale by lightness as well as by hue).
INK = "#1d2a36"
PLAN = "#24527a"        # planned values
PLAN_WIDE = "#9dbcd8"   # planned values drawn as a wide light band under another series
ALT = "#8a5a00"         # second series / achievable values
LIMIT = "#7a1f1f"       # limit lines and envelopes
FILL_EXCEEDS = "#e8b4a8"
FILL_NEAR = "#f1dca0"
HATCH = {SEVERITY_EXCEEDS: "////", SEVERITY_NEAR: ".."}
FILL = {SEVERITY_EXCEEDS: FILL_EXCEEDS, SEVERITY_NEAR: FILL_NEAR}
CASE_COLOURS = (PLAN, ALT, INK, "#4f7d4f", "#7a3f8a", "#5c6670")  # one per case, with its own line style
LINESTYLES = ("-", "--", "-.", ":", (0, (5, 1, 1, 1, 1, 1)), (0, (1, 2)))
MARKERS = ("o", "s", "^", "D", "v", "x", "+", "*")
PANEL_WIDTH_IN = 2.15  # one joint column [in]: a four-joint figure is about 9 in wide, so at print width
                       # (about 7 in) its 8 pt labels stay above 6 pt
DPI = 140  # sharp enough for print at the figure sizes used; drawing, not rasterising, sets the time

# Rows of the per-case joint figure: (key, label with unit)
ROWS = (("angle", "angle [rad]"), ("speed", "speed [rad/s]"), ("torque", "torque [N m]"),
        ("current", "current [A]"), ("voltage", "voltage [V]"))
UNITS = {"angle": "rad", "speed": "rad/s", "torque": "N m", "current": "A", "voltage": "V"}
# limits drawn in a row of their own quantity rather than their check's panel (Limit.panel)
ROW_OF_LIMIT = {"peak_current": "current", "continuous_current": "current", "voltage": "voltage"}
MIN_SPAN_FRACTION = 0.012  # a flagged span is drawn at least this share of the time axis wide
LABELS_PER_PANEL = 3   # flagged spans labelled with their limit in each panel, widest first


def scale_limits(lo: float, hi: float, values) -> tuple[float, float, bool]:
    """y range of a panel: the limit band and the data, but at most one band width beyond each limit.

    Keeps the limit lines readable when a few samples spike far beyond them. Returns (y_lo, y_hi,
    off_scale) where off_scale says some values lie outside the range returned.
    """
    v = np.asarray(values, dtype=float)
    v = v[np.isfinite(v)]
    width = hi - lo if hi > lo else max(abs(hi), abs(lo), 1.0)
    dmin = float(v.min()) if v.size else lo
    dmax = float(v.max()) if v.size else hi
    cap_lo, cap_hi = lo - width, hi + width
    ylo, yhi = max(min(lo, dmin), cap_lo), min(max(hi, dmax), cap_hi)
    pad = 0.06 * (yhi - ylo)
    return ylo - pad, yhi + pad, bool(dmin < ylo - pad or dmax > yhi + pad)


@dataclass(frozen=True)
class Shade:
    """One span drawn shaded: which panel (joint, row), the time span [s] and the severity."""

    joint: str
    row: str
    t_start_s: float
    t_end_s: float
    severity: str
    limit: str


@dataclass(frozen=True)
class Figure:
    """A rendered figure: PNG bytes, alternative text and the spans it shaded."""

    name: str
    png: bytes
    alt: str
    shaded: tuple[Shade, ...] = ()
    notes: tuple[str, ...] = ()


def row_for_limit(limit: str) -> str | None:
    """The joint-figure row a limit's flagged spans are drawn in ('angle', 'speed', 'torque'), as its
    check declares (Limit.panel); None when it is drawn in no joint row (ground force, whole robot)."""
    if limit in ROW_OF_LIMIT:
        return ROW_OF_LIMIT[limit]
    panel = get_limit(limit).panel
    return panel if panel in ("angle", "speed", "torque") else None


def is_ground_limit(limit: str) -> bool:
    """Limits drawn on the ground-force figure (Limit.panel == PANEL_GROUND)."""
    return get_limit(limit).panel == PANEL_GROUND


def _new_figure(width_in: float, height_in: float, *, left=0.75, right=0.15, top=0.5, bottom=0.5,
                wspace=0.28, hspace=0.22):
    """A figure with fixed margins in inches (a fixed layout renders about twice as fast as a solver)."""
    from matplotlib.backends.backend_agg import FigureCanvasAgg
    from matplotlib.figure import Figure as MplFigure

    fig = MplFigure(figsize=(width_in, height_in), dpi=DPI)
    FigureCanvasAgg(fig)
    fig.subplots_adjust(left=left / width_in, right=1 - right / width_in, top=1 - top / height_in,
                        bottom=bottom / height_in, wspace=wspace, hspace=hspace)
    return fig


def _style_axes(ax) -> None:
    ax.grid(True, color="#c9ced3", linewidth=0.6, linestyle="-")
    ax.set_axisbelow(True)
    ax.tick_params(labelsize=8, colors=INK)
    for sp in ax.spines.values():
        sp.set_color("#6b7680")
    ax.xaxis.label.set_size(8.5)
    ax.yaxis.label.set_size(8.5)
    ax.title.set_size(9)


@dataclass(frozen=True)
class FigureInfo:
    """What a report needs besides the drawing: its name, alternative text, shaded spans and notes
    (attached to each Matplotlib figure the plot functions return, as ``fig.legbridge``)."""

    name: str
    alt: str
    shaded: tuple[Shade, ...] = ()
    notes: tuple[str, ...] = ()


def _finish(fig, name: str, alt: str, shaded=(), notes=()):
    """The Matplotlib figure, with its FigureInfo attached: what every plot function returns."""
    fig.legbridge = FigureInfo(name, alt, tuple(shaded), tuple(notes))
    return fig


def embed(fig) -> Figure:
    """A plot function's Matplotlib figure rendered for the report: PNG bytes with its FigureInfo."""
    info = fig.legbridge
    return Figure(info.name, _png(fig), info.alt, info.shaded, info.notes)


def _png(fig) -> bytes:
    buf = io.BytesIO()
    # PNG is lossless: zlib level 3 instead of the default 6 encodes about 35 % faster for 7 % more bytes
    fig.savefig(buf, format="png", dpi=DPI, facecolor="white", pil_kwargs={"compress_level": 3})
    return buf.getvalue()


def merge_spans(spans, gap_s: float) -> list[tuple[float, float, str]]:
    """Union of (t0, t1, limit) spans [s]; spans closer than ``gap_s`` join (their limits are listed)."""
    out: list[list] = []
    for t0, t1, lim in sorted(spans):
        if out and t0 <= out[-1][1] + gap_s:
            out[-1][1] = max(out[-1][1], t1)
            if lim not in out[-1][2]:
                out[-1][2].append(lim)
        else:
            out.append([t0, t1, [lim]])
    return [(a, b, ", ".join(lims)) for a, b, lims in out]


def _shade(panels: dict, items, dt: float, min_width_s: float = 0.0) -> tuple[Shade, ...]:
    """Shade flagged spans: items are ((joint, row), t0, t1, severity, limit); panels map (joint, row) -> axes.

    Spans of one panel and severity are merged and drawn as one hatched collection (fast to render);
    every span is drawn at least ``min_width_s`` wide [s] (and half a sample beyond each end) so a
    one-sample spike stays visible on a long time axis.
    """
    groups: dict = {}
    for key, t0, t1, sev, lim in items:
        groups.setdefault((key, sev), []).append((float(t0), float(t1), lim))
    shades: list[Shade] = []
    for ((joint, row), sev), spans in sorted(groups.items(), key=lambda kv: kv[0][1] == SEVERITY_EXCEEDS):
        merged = merge_spans(spans, 1.5 * dt)
        ax = panels[(joint, row)]
        bars = []
        for a, b, _ in merged:
            w = max(b - a + dt, min_width_s)
            bars.append(((a + b) / 2 - w / 2, w))
        ax.broken_barh(bars, (0, 1), transform=ax.get_xaxis_transform(),
                       facecolors=FILL.get(sev, FILL_EXCEEDS), edgecolors=LIMIT, hatch=HATCH.get(sev, "xx"),
                       linewidth=0.0, alpha=0.55, zorder=0.2 if sev == SEVERITY_EXCEEDS else 0.1)  # exceeds over near
        shades.extend(Shade(joint, row, a, b, sev, lim) for a, b, lim in merged)
        if sev == SEVERITY_EXCEEDS:  # name what is exceeded above the widest spans
            from legbridge.limits.verdict import limit_label

            for a, b, lims in sorted(merged, key=lambda m: m[0] - m[1])[:LABELS_PER_PANEL]:
                text = ", ".join(limit_label(x) for x in lims.split(", "))
                ax.annotate(text, xy=((a + b) / 2, 1.0), xycoords=ax.get_xaxis_transform(), xytext=(0, 1.5),
                            textcoords="offset points", ha="center", va="bottom", fontsize=6.3, color=LIMIT,
                            annotation_clip=False)
    return tuple(shades)


def _legend_for_shading(fig, severities: set[str], extra=()) -> None:
    from matplotlib.patches import Patch

    handles = list(extra)
    if SEVERITY_EXCEEDS in severities:
        handles.append(Patch(facecolor=FILL_EXCEEDS, edgecolor=LIMIT, hatch=HATCH[SEVERITY_EXCEEDS], label="exceeds a limit"))
    if SEVERITY_NEAR in severities:
        handles.append(Patch(facecolor=FILL_NEAR, edgecolor=LIMIT, hatch=HATCH[SEVERITY_NEAR], label="near a limit"))
    if handles:
        fig.legend(handles=handles, loc="lower center", bbox_to_anchor=(0.5, 0.0), ncols=min(len(handles), 3),
                   fontsize=7.5, frameon=False)


def _dt(time_s: np.ndarray) -> float:
    return float(np.median(np.diff(time_s))) if time_s.size > 1 else 0.0


STANCE_FILL = "#d4d4d4"   # greys: they stay apart in greyscale and under the hatched flagged spans
SWING_FILL = "#efefef"


def leg_phase_masks(traj):
    """name -> (stance mask, generated-swing mask or None) of the joint's leg: for a biped the leg named
    by the joint's '<leg>_' prefix, for one leg the plan's stance."""
    legs = tuple(getattr(traj, "legs", ()) or ())

    def masks(name: str):
        for k, leg in enumerate(legs):
            if name.startswith(leg + "_") and traj.leg_contact is not None:
                gen = None if traj.leg_generated is None else np.asarray(traj.leg_generated[:, k], dtype=bool)
                return np.asarray(traj.leg_contact[:, k], dtype=bool), gen
        return np.asarray(traj.stance, dtype=bool), None

    return masks


def _phase_bands(ax, t: np.ndarray, stance, swing) -> None:
    """Grey spans behind a panel: the leg's stance (darker) and its generated swing (lighter)."""
    from legbridge.mapping.motor_side import phase_runs

    for mask, color in ((stance, STANCE_FILL), (swing, SWING_FILL)):
        if mask is None or not np.any(mask):
            continue
        for a, b in phase_runs(mask):  # runs of a phase: tens per plan
            if mask[a]:
                ax.axvspan(t[a], t[b - 1], facecolor=color, edgecolor="none", zorder=0)


MAX_POINTS = 2000
"""Points drawn per series and panel: longer series are thinned to each bucket's minimum and maximum
(every peak stays, the drawing time and the PNG do not grow with the plan's length)."""


def envelope(t: np.ndarray, y: np.ndarray, max_points: int = MAX_POINTS) -> tuple[np.ndarray, np.ndarray]:
    """(t, y) thinned to at most ``max_points``: the minimum and the maximum of each of max_points / 2
    buckets, in time order (NaN-aware); unchanged when short enough."""
    t = np.asarray(t, dtype=float)
    y = np.asarray(y, dtype=float)
    n = y.shape[0]
    if n <= max_points:
        return t, y
    b = max_points // 2
    k = -(-n // b)                                   # samples per bucket
    pad = b * k - n
    yy = np.concatenate([y, np.full(pad, np.nan)]).reshape(b, k)
    with np.errstate(invalid="ignore"):
        lo = np.where(np.all(np.isnan(yy), axis=1), 0, np.nanargmin(np.where(np.isnan(yy), np.inf, yy), axis=1))
        hi = np.where(np.all(np.isnan(yy), axis=1), 0, np.nanargmax(np.where(np.isnan(yy), -np.inf, yy), axis=1))
    base = np.arange(b) * k
    idx = np.sort(np.stack([base + np.minimum(lo, hi), base + np.maximum(lo, hi)], axis=1), axis=1).ravel()
    idx = np.unique(np.minimum(idx, n - 1))
    return t[idx], y[idx]


ZOOM_PLAN_S = 4.0
"""Plans longer than this get, per case with a flagged segment, a zoomed joint figure around its worst one."""
ZOOM_MARGIN_S = 0.25


def zoom_window(review) -> tuple[float, float] | None:
    """(t0, t1) around the case's worst flagged segment (exceeding first, then the highest peak
    utilisation), or None (a short plan, or nothing flagged)."""
    t = np.asarray(review.trajectory.time_s, dtype=float)
    if t.size < 2 or t[-1] - t[0] <= ZOOM_PLAN_S or not review.segments:
        return None
    worst = max(review.segments, key=lambda s: (s.severity == "exceeds", s.utilisation if np.isfinite(s.utilisation) else np.inf))
    return max(float(t[0]), worst.t_start_s - ZOOM_MARGIN_S), min(float(t[-1]), worst.t_end_s + ZOOM_MARGIN_S)


def zoomed(review, window):
    """A view of a case review restricted to ``window`` (t0, t1) [s], for case_joints_figure."""
    from types import SimpleNamespace

    t = np.asarray(review.trajectory.time_s, dtype=float)
    keep = (t >= window[0]) & (t <= window[1])
    segs = tuple(s for s in review.segments if s.t_end_s >= window[0] and s.t_start_s <= window[1])
    return SimpleNamespace(trajectory=review.trajectory.rows(keep), segments=segs,
                           case=f"{review.case}, {window[0]:.3f}-{window[1]:.3f} s")


def case_joints_figure(review, robot) -> MplFigure:
    """Joint angle, speed, torque, drive current and winding voltage of one case against time, with
    limit bands and flagged spans (labelled with the limit where it is exceeded).

    Rows: angle [rad] with the hard stops; speed [rad/s] with +-max_joint_speed; torque [N m] with
    +-max_joint_torque (static peak, motor driving) and the voltage-envelope torque bounds at the
    planned speed (dashed); current [A] (DC-equivalent) with +-the drive's peak current; voltage [V]
    (the voltage check's value, winding at its temperature limit) with +-the drive's voltage. Columns: joints. Segments of the case are shaded in their joint's column (all columns
    for whole-leg limits) and in the row of their limit (all rows when the limit has no row).
    """
    from legbridge.robots.actuator_limits import joint_torque_limits_nm, max_joint_speed, max_joint_torque

    traj = review.trajectory
    t = np.asarray(traj.time_s, dtype=float)
    names = tuple(traj.joint_names)
    nj = len(names)
    fig = _new_figure(PANEL_WIDTH_IN * nj + 0.7, 8.4, bottom=1.15, top=0.75, hspace=0.32, wspace=0.36)
    axes = fig.subplots(len(ROWS), nj, sharex=True, squeeze=False)
    dt = _dt(t)
    severities: set[str] = set()
    notes: list[str] = []
    phase_masks = leg_phase_masks(traj)
    for j, name in enumerate(names):
        joint = robot.joint(name)
        stance_mask, swing_mask = phase_masks(name)
        act = joint.actuator
        volt = next((tr.value for tr in review.traces if tr.limit == "voltage" and tr.joint == name), None)
        series = {"angle": traj.q[:, j], "speed": traj.qd[:, j], "torque": traj.tau[:, j],
                  "current": traj.current_a[:, j],
                  "voltage": np.full(t.shape, np.nan) if volt is None else np.asarray(volt, dtype=float)}
        vmax = max_joint_speed(joint).value
        tmax = max_joint_torque(joint).value
        m_speed, m_accel = traj.motor_side_rates(j, joint.actuator.gear_ratio)
        lo_v, hi_v, _ = joint_torque_limits_nm(joint, m_speed, m_accel, voltage=True)
        bands = {"angle": (joint.lower_rad, joint.upper_rad), "speed": (-vmax, vmax), "torque": (-tmax, tmax),
                 "current": (-act.peak_current_a, act.peak_current_a), "voltage": (-act.max_voltage_v, act.max_voltage_v)}
        for r, (key, label) in enumerate(ROWS):
            ax = axes[r, j]
            _style_axes(ax)
            _phase_bands(ax, t, stance_mask, swing_mask)
            lo, hi = bands[key]
            ax.axhline(lo, color=LIMIT, linewidth=1.8, linestyle="-")
            ax.axhline(hi, color=LIMIT, linewidth=1.8, linestyle="-")
            if key == "torque":
                # only where the speed makes the bound tighter than the static peak torque (drawn solid)
                ax.plot(*envelope(t, np.where(hi_v < tmax, hi_v, np.nan)), color=LIMIT, linewidth=1.0, linestyle="--")
                ax.plot(*envelope(t, np.where(lo_v > -tmax, lo_v, np.nan)), color=LIMIT, linewidth=1.0, linestyle="--")
            ax.plot(*envelope(t, series[key]), color=PLAN, linewidth=1.3)
            y = series[key][np.isfinite(series[key])]
            if key == "torque":  # the envelope lines are part of what the reader compares against
                env = np.concatenate([hi_v, lo_v])
                env = env[np.isfinite(env) & (np.abs(env) <= tmax)]
                y = np.concatenate([y, env])
            ylo, yhi, off = scale_limits(lo, hi, y)
            ax.set_ylim(ylo, yhi)
            if off:
                v = series[key]
                above, below = v > yhi, v < ylo
                ax.plot(t[above], np.full(int(above.sum()), yhi), linestyle="none", marker="^", markersize=4,
                        color=INK, clip_on=False)
                ax.plot(t[below], np.full(int(below.sum()), ylo), linestyle="none", marker="v", markersize=4,
                        color=INK, clip_on=False)
                vmin, vmax_ = float(np.nanmin(v)), float(np.nanmax(v))
                notes.append(f"{name} {key}: values from {vmin:.4g} to {vmax_:.4g} {UNITS[key]} reach beyond the plotted "
                             f"scale; the triangles at the panel edge mark those samples.")
            if j == 0:
                ax.set_ylabel(label)
            if r == 0:
                ax.set_title(f"{name}")
            if r == len(ROWS) - 1:
                ax.set_xlabel("time [s]")
    items = []
    for seg in review.segments:
        row = row_for_limit(seg.limit)
        if row is None:  # drawn on the force figure, or listed in the tables only
            continue
        cols = [names.index(seg.joint)] if seg.joint in names else range(nj)
        items.extend(((names[c], row), seg.t_start_s, seg.t_end_s, seg.severity, seg.limit) for c in cols)
        severities.add(seg.severity)
    panels = {(names[c], k): axes[r, c] for c in range(nj) for r, (k, _) in enumerate(ROWS)}
    shaded = _shade(panels, items, dt, MIN_SPAN_FRACTION * float(t[-1] - t[0]) if t.size else 0.0)
    from matplotlib.lines import Line2D

    extra = [
        Line2D([], [], color=PLAN, linewidth=1.3, label="planned"),
        Line2D([], [], color=LIMIT, linewidth=1.8, label="limit: stops, speed, peak torque (motor drives), current, voltage"),
        Line2D([], [], color=LIMIT, linewidth=0.9, linestyle="--", label="voltage-limited torque at planned speed"),
    ]
    from matplotlib.patches import Patch

    extra.append(Patch(facecolor=STANCE_FILL, edgecolor="none", label="stance (this joint's leg)"))
    if getattr(traj, "legs", ()):
        extra.append(Patch(facecolor=SWING_FILL, edgecolor="none", label="generated swing"))
    _legend_for_shading(fig, severities, extra)
    fig.suptitle(f"Case {review.case}: joint targets against the modelled limits", fontsize=10, color=INK)
    alt = (f"Joint angle, speed, torque, current and voltage of case {review.case} against time for joints {', '.join(names)}, "
           f"with limit lines; {len(review.segments)} flagged segment(s) shaded.")
    return _finish(fig, f"case-{review.case}-joints", alt, tuple(shaded), tuple(notes))


def _achievable_force(review) -> tuple[np.ndarray | None, str]:
    """The force-feasibility QP's closest achievable ground force (n, 2) [N], or None and why."""
    qp = review.force_qp
    if qp is None:
        return None, "the force-feasibility QP was not run for this case"
    if not qp.ok:
        return None, f"the force-feasibility QP did not solve (status '{qp.status}'); achievable force not shown"
    return np.asarray(qp.values["force_n"], dtype=float), ""


def case_force_figure(review, robot, friction: float | None = None) -> MplFigure:
    """Ground force of one case: planned (x, z) [N] against the QP's achievable force and the friction cone.

    Whole-leg segments (joint '') and force or friction limits are shaded.
    """
    traj = review.trajectory
    t = np.asarray(traj.time_s, dtype=float)
    f = np.asarray(traj.foot_force_n, dtype=float)
    mu = robot.ground_friction if friction is None else friction
    ach, why = _achievable_force(review)
    fig = _new_figure(7.2, 3.5, bottom=1.05, top=0.55, left=0.8)
    ax_z, ax_x = fig.subplots(1, 2, sharex=True)
    for ax in (ax_z, ax_x):
        _style_axes(ax)
        ax.set_xlabel("time [s]")
    # planned: a wide light band; achievable: thin dark dashes on top; cone: dotted (apart in greyscale)
    ax_z.plot(*envelope(t, f[:, 1]), color=PLAN_WIDE, linewidth=3.6, label="planned", solid_capstyle="butt")
    ax_x.plot(*envelope(t, f[:, 0]), color=PLAN_WIDE, linewidth=3.6, label="planned", solid_capstyle="butt")
    fz_pos = np.maximum(f[:, 1], 0.0)
    ax_x.plot(*envelope(t, mu * fz_pos), color=LIMIT, linewidth=1.1, linestyle=(0, (1, 1.2)), label=f"friction cone, mu = {mu:g}")
    ax_x.plot(*envelope(t, -mu * fz_pos), color=LIMIT, linewidth=1.1, linestyle=(0, (1, 1.2)))
    if ach is not None and ach.shape[0] == t.shape[0]:
        ax_z.plot(*envelope(t, ach[:, 1]), color=INK, linewidth=1.0, linestyle=(0, (4, 2)), label="achievable (QP)")
        ax_x.plot(*envelope(t, ach[:, 0]), color=INK, linewidth=1.0, linestyle=(0, (4, 2)), label="achievable (QP)")
    ax_z.set_ylabel("vertical force F_z [N]")
    ax_x.set_ylabel("horizontal force F_x [N]")
    ax_z.set_title("vertical", fontsize=9)
    ax_x.set_title("horizontal", fontsize=9)
    dt = _dt(t)
    severities: set[str] = set()
    items = []
    for seg in review.segments:
        if is_ground_limit(seg.limit):
            items.extend((("", row), seg.t_start_s, seg.t_end_s, seg.severity, seg.limit) for row in ("force_z", "force_x"))
            severities.add(seg.severity)
    shaded = _shade({("", "force_z"): ax_z, ("", "force_x"): ax_x}, items, dt, MIN_SPAN_FRACTION * float(t[-1] - t[0]) if t.size else 0.0)
    handles, _ = ax_x.get_legend_handles_labels()
    _legend_for_shading(fig, severities, handles)
    fig.suptitle(f"Case {review.case}: ground force on the foot", fontsize=10, color=INK)
    notes = (why,) if why else ()
    alt = f"Planned ground force of case {review.case} against time, with the friction cone" + (
        " and the achievable force from the QP." if not why else f"; {why}.")
    return _finish(fig, f"case-{review.case}-force", alt, tuple(shaded), notes)


def torque_speed_figure(reviews, robot, joint_name: str) -> MplFigure:
    """Torque-speed plane of one joint, one small panel per case (the other cases in light grey behind):
    voltage and current envelope, the peak torque by power direction, the continuous torque.

    x: joint speed [rad/s]; y: joint torque [N m]. The envelope is robots.actuator_limits.envelope_polygon
    (steady speed: the rotor-inertia term is not in it). Where torque and speed share a sign the motor
    drives the joint and the drive's peak current gives eta N Kt I_peak; in the other two quadrants the
    joint back-drives the motor and the same current holds N Kt I_peak / eta.
    """
    from legbridge.robots.actuator_limits import (back_driven_joint_torque_nm, continuous_joint_torque_nm,
                                                  envelope_polygon, max_joint_torque)

    joint = robot.joint(joint_name)
    act = joint.actuator
    shown = [rv for rv in reviews if joint_name in rv.trajectory.joint_names]
    ncol = min(3, max(1, len(shown)))
    nrow = max(1, -(-len(shown) // ncol))
    fig = _new_figure(2.6 * ncol + 0.9, 2.3 * nrow + 1.2, left=0.8, right=0.15, top=0.5, bottom=1.0,
                      wspace=0.12, hspace=0.35)
    axes = fig.subplots(nrow, ncol, squeeze=False, sharex=True, sharey=True)
    sp, tq = envelope_polygon(act)
    tmax = max_joint_torque(joint).value
    tback = min(back_driven_joint_torque_nm(act), joint.effort_limit_nm or np.inf)
    tcont = continuous_joint_torque_nm(act)
    smax, tq_max = float(np.max(np.abs(sp))), max(float(np.max(np.abs(tq))), tmax)
    xlim, ylim = 1.3 * smax, 1.35 * tq_max
    samples = []
    for rv in shown:
        j = list(rv.trajectory.joint_names).index(joint_name)
        step = max(1, rv.trajectory.n_samples // 600)  # a few hundred points per case show the shape
        samples.append((rv.trajectory.qd[::step, j], rv.trajectory.tau[::step, j]))
    for k, ax in enumerate(axes.flat):
        if k >= len(shown):
            ax.set_visible(False)
            continue
        _style_axes(ax)
        ax.fill(sp, tq, facecolor="#eef1f4", edgecolor="none", zorder=0)
        ax.plot(sp, tq, color=LIMIT, linewidth=1.3)
        for s in (1, -1):  # peak torque by power direction: motoring quadrants I and III, back-driven II and IV
            ax.plot([0, s * xlim], [s * tmax, s * tmax], color=LIMIT, linewidth=0.9, linestyle="--")
            ax.plot([0, -s * xlim], [s * tback, s * tback], color=LIMIT, linewidth=0.9, linestyle="-.")
            ax.axhline(s * tcont, color=INK, linewidth=0.8, linestyle=":")
        for other, (x, y) in enumerate(samples):
            if other != k:
                ax.plot(x, y, linestyle="none", marker=".", markersize=1.6, color="#b9bfc5", zorder=1)
        x, y = samples[k]
        ax.plot(x, y, linestyle="none", marker=MARKERS[k % len(MARKERS)], markersize=2.8, markerfacecolor="none",
                markeredgewidth=0.7, color=PLAN, zorder=2)
        tr = next((t for t in shown[k].traces if t.limit == "peak_torque" and t.joint == joint_name), None)
        if tr is not None and np.isfinite(np.asarray(tr.utilisation, dtype=float)).any():  # the worst sample, named
            from legbridge.limits.verdict import utilisation_text

            jj = list(shown[k].trajectory.joint_names).index(joint_name)
            i = int(np.nanargmax(np.asarray(tr.utilisation, dtype=float)))
            x0, y0 = float(shown[k].trajectory.qd[i, jj]), float(shown[k].trajectory.tau[i, jj])
            ax.plot([x0], [y0], linestyle="none", marker="*", markersize=9, color=LIMIT, markeredgecolor=INK, zorder=4)
            ax.annotate(f"peak torque {utilisation_text(float(tr.utilisation[i]))}", xy=(x0, y0), xytext=(4, 4),
                        textcoords="offset points", fontsize=6.8, color=INK,
                        bbox=dict(facecolor="white", edgecolor="none", alpha=0.8, pad=0.6))
        ax.set_title(f"case {shown[k].case}", fontsize=8.5)
        ax.set_xlim(-xlim, xlim)
        ax.set_ylim(-ylim, ylim)
        if k % ncol == 0:
            ax.set_ylabel("joint torque [N m]")
        if k // ncol == nrow - 1 or k + ncol >= len(shown):
            ax.set_xlabel("joint speed [rad/s]")
    notes = []
    for rv in shown:
        j = list(rv.trajectory.joint_names).index(joint_name)
        qd, tau = rv.trajectory.qd[:, j], rv.trajectory.tau[:, j]
        n_off = int(np.count_nonzero((np.abs(qd) > xlim) | (np.abs(tau) > ylim)))
        if n_off:
            notes.append(f"case {rv.case}: {n_off} of {rv.trajectory.n_samples} samples of {joint_name} lie beyond the "
                         f"plotted range (|speed| > {xlim:.3g} rad/s or |torque| > {ylim:.4g} N m), peak |torque| "
                         f"{float(np.nanmax(np.abs(tau))):.4g} N m.")
    from matplotlib.lines import Line2D

    handles = [
        Line2D([], [], color=LIMIT, linewidth=1.3, label="voltage and current envelope"),
        Line2D([], [], color=LIMIT, linewidth=0.9, linestyle="--", label=f"peak torque, motor drives: {tmax:.4g} N m"),
        Line2D([], [], color=LIMIT, linewidth=0.9, linestyle="-.", label=f"peak torque, back-driven: {tback:.4g} N m"),
        Line2D([], [], color=INK, linewidth=0.8, linestyle=":", label=f"continuous torque: {tcont:.4g} N m"),
        Line2D([], [], color=PLAN, linestyle="none", marker="o", markerfacecolor="none", markersize=4, label="this case"),
        Line2D([], [], color="#b9bfc5", linestyle="none", marker=".", markersize=5, label="the other cases"),
        Line2D([], [], color=LIMIT, markeredgecolor=INK, linestyle="none", marker="*", markersize=8,
               label="this case's highest peak-torque utilisation"),
    ]
    fig.legend(handles=handles, loc="lower center", bbox_to_anchor=(0.5, 0.0), ncols=3, fontsize=7.2, frameon=False)
    fig.suptitle(f"{joint_name}: torque-speed plane, one panel per case", fontsize=10, color=INK)
    alt = (f"Torque against speed of joint {joint_name}, one panel per case, inside the motor's voltage and current "
           f"envelope; peak torque {tmax:.4g} N m when the motor drives the joint, {tback:.4g} N m when it is back-driven.")
    return _finish(fig, f"joint-{joint_name}-torque-speed", alt, (), tuple(notes))


def thermal_figure(reviews, robot, duration_s: float | None) -> MplFigure:
    """Winding temperature [degC] of every joint over the test duration [s], against its limit.

    One panel per joint; one line style per case.
    """
    names = robot.limb_joint_names
    nj = len(names)
    fig = _new_figure(PANEL_WIDTH_IN * nj + 0.7, 3.4, bottom=1.0, top=0.55, wspace=0.32)
    axes = fig.subplots(1, nj, squeeze=False)[0]
    notes: list[str] = []
    for j, name in enumerate(names):
        ax = axes[j]
        _style_axes(ax)
        th = robot.joint(name).actuator.thermal
        ax.axhline(th.max_winding_temp_c, color=LIMIT, linewidth=2.6, label="winding limit" if j == 0 else None)
        ax.axhline(th.ambient_temp_c, color="#6b7680", linewidth=0.8, linestyle=":", label="ambient" if j == 0 else None)
        reached: list[str] = []
        for k, rv in enumerate(reviews):
            th = rv.thermal
            if name not in th.joint_names:
                continue
            col = th.winding_temp_c[:, th.joint_names.index(name)]
            colour = CASE_COLOURS[k % len(CASE_COLOURS)]
            ax.plot(th.time_s, col, color=colour,
                    linestyle=LINESTYLES[k % len(LINESTYLES)], linewidth=1.3, label=f"case {rv.case}" if j == 0 else None)
            ttl = th.time_to_limit_s.get(name)
            if ttl is not None and np.isfinite(ttl):  # where this case's winding reaches its limit
                ax.plot([ttl], [th.max_temp_c[th.joint_names.index(name)]], linestyle="none",
                        marker=MARKERS[k % len(MARKERS)], markersize=6, color=colour, markeredgecolor=INK, zorder=3)
                reached.append(f"{rv.case}: {ttl:.0f} s")
                notes.append(f"{name}, case {rv.case}: the winding reaches its limit "
                             f"{th.max_temp_c[th.joint_names.index(name)]:g} degC at {ttl:.4g} s.")
        if reached:  # time to the limit, one line per case, in a box the lines cannot hide
            ax.text(0.03, 0.97, "limit reached at\n" + "\n".join(reached), transform=ax.transAxes, va="top", ha="left",
                    fontsize=6.3, color=INK, bbox=dict(facecolor="white", edgecolor="#c9ced3", alpha=0.9, pad=2.0))
        ax.set_title(name)
        ax.set_xlabel("time [s]")
        if j == 0:
            ax.set_ylabel("winding temperature [degC]")
        if duration_s:
            ax.set_xlim(0.0, duration_s)
    fig.legend(loc="lower center", bbox_to_anchor=(0.5, 0.0), ncols=3, fontsize=7.5, frameon=False)
    fig.suptitle("Winding temperature over the whole assumed test" + (f" ({duration_s:g} s)" if duration_s else ""),
                 fontsize=10, color=INK)
    alt = ("Winding temperature of each joint against time over the whole assumed test, with its limit"
           + (" and where a winding reaches it." if notes else "; no winding reaches its limit."))
    return _finish(fig, "thermal", alt, (), tuple(notes))


def figure_keys(review) -> list:
    """Every figure of a review's report, as keys for figure_for: per case its joints and ground force,
    per joint (both legs of a biped) the torque-speed plane, and the winding temperature."""
    keys = [(kind, r.case) for r in review.cases for kind in ("joints", "force")]
    keys += [("zoom", r.case) for r in review.cases if zoom_window(r) is not None]
    keys += [("torque_speed", j.name) for j in review.robot.limb_joints]
    return keys + [("thermal", "")]


def figure_for(review, key) -> Figure:
    """The report figure ``key`` (figure_keys) of ``review``, rendered (embed)."""
    return embed(plot_for(review, key))


def plot_for(review, key):
    """The Matplotlib figure ``key`` (figure_keys) of ``review``."""
    kind, arg = key
    robot, settings = review.robot, review.settings
    if kind == "joints":
        return case_joints_figure(review.case(arg), robot)
    if kind == "force":
        return case_force_figure(review.case(arg), robot, settings.friction)
    if kind == "zoom":
        r = review.case(arg)
        return case_joints_figure(zoomed(r, zoom_window(r)), robot)
    if kind == "torque_speed":
        return torque_speed_figure(review.cases, robot, arg)
    if kind == "thermal":
        return thermal_figure(review.cases, robot, settings.duration_s)
    raise KeyError(key)


_FORKED_REVIEW = {}


def _child_signals() -> None:
    """A forked drawing process leaves interrupts to the parent, which ends the pool."""
    import signal

    signal.signal(signal.SIGINT, signal.SIG_IGN)
    signal.signal(signal.SIGTERM, signal.SIG_DFL)


def _draw_in_child(key):
    return key, figure_for(_FORKED_REVIEW["review"], key)


def render_figures(review, jobs: int | None = None) -> dict:
    """Every figure of the report, {key: Figure}. Drawing dominates the report's time and each figure is
    independent, so they are drawn in ``jobs`` forked processes (default: the available cores, at most
    one per figure; the review reaches them by fork, not by pickling). The figures do not depend on
    the number of processes. One process when fork is not available or jobs is 1."""
    import multiprocessing
    import os

    keys = figure_keys(review)
    cores = len(os.sched_getaffinity(0)) if hasattr(os, "sched_getaffinity") else (os.cpu_count() or 1)
    jobs = min(len(keys), cores if jobs is None else int(jobs))
    if jobs <= 1 or "fork" not in multiprocessing.get_all_start_methods():
        return {k: figure_for(review, k) for k in keys}
    # the last figure is drawn here first: it loads the fonts and renderer once, before the fork, so
    # the children inherit them instead of each loading them again
    first = {keys[-1]: figure_for(review, keys[-1])}
    _FORKED_REVIEW["review"] = review
    try:
        with multiprocessing.get_context("fork").Pool(jobs, initializer=_child_signals) as pool:
            return dict(pool.map(_draw_in_child, keys[:-1], chunksize=1)) | first
    finally:
        _FORKED_REVIEW.clear()
