"""The sweep figure: utilisation of each modelled limit against the ground offset.

``plot_sweep(result) -> matplotlib.figure.Figure`` (Agg canvas, no pyplot state). One series per
limit (highest utilisation over joints and samples, in % of the limit) against the ground offset
[m]; the 100 % line; the window of offsets completing within the modelled limits shaded and hatched;
offsets where the reduced model fell marked 'x' with a dotted vertical line; offsets that could not
be evaluated marked 'v'. Values above the plotted range (including infinite utilisation) are drawn
at the top edge as '^'. Every series has its own line style and marker, so the figure reads in greyscale.
"""

from __future__ import annotations

import math
from pathlib import Path

import numpy as np
from matplotlib.backends.backend_agg import FigureCanvasAgg
from matplotlib.figure import Figure

from legbridge.limits.verdict import Verdict, limit_label

LINESTYLES = ("-", "--", "-.", ":", (0, (5, 1, 1, 1, 1, 1)), (0, (1, 2)), (0, (8, 2)))
MARKERS = ("o", "s", "D", "P", "*", "h", "X", "<", ">", "p")
INK = "#1d2a36"
LIMIT_LINE = "#7a1f1f"
WINDOW_FILL = "#d9e4d2"
TOP_CAP = 5.0  # the y axis stops at 500 % (further values are drawn at the edge)


def _series(result):
    from legbridge.limits.sweep.table import limit_names

    names = limit_names([result])  # the checks' listing order
    x = np.array([r.offset_m for r in result.offsets], dtype=float)
    ys = {}
    for n in names:
        ys[n] = np.array([r.worst_dict.get(n, math.nan) if r.checked else math.nan for r in result.offsets], dtype=float)
    return x, ys


def plot_sweep(result, *, title: str | None = None) -> Figure:
    """Figure of one SweepResult (one plan on one robot); see the module docstring."""
    fig = Figure(figsize=(8.0, 4.8), dpi=140)
    FigureCanvasAgg(fig)
    ax = fig.add_subplot(1, 1, 1)
    x, ys = _series(result)
    finite = np.concatenate([v[np.isfinite(v)] for v in ys.values()]) if ys else np.zeros(0)
    top = min(max(1.2, 1.1 * float(finite.max()) if finite.size else 1.2), TOP_CAP)
    w = result.window
    if not w.empty:
        if w.hi_m > w.lo_m:
            ax.axvspan(w.lo_m, w.hi_m, facecolor=WINDOW_FILL, edgecolor="#5d7a52", hatch="\\\\", linewidth=0.0,
                       alpha=0.7, label=f"window {w.lo_m:+.3f} to {w.hi_m:+.3f} m", zorder=0)
        else:
            ax.axvline(w.lo_m, color="#5d7a52", linewidth=6, alpha=0.5, label=f"window {w.lo_m:+.3f} m", zorder=0)
    ax.axhline(100.0, color=LIMIT_LINE, linewidth=1.2, linestyle="-", label="100 % of the limit", zorder=1)
    for k, (name, y) in enumerate(ys.items()):
        shown = np.where(np.isfinite(y) & (y <= top), y, np.where(np.isnan(y), np.nan, top))
        ax.plot(x, 100.0 * shown, linestyle=LINESTYLES[k % len(LINESTYLES)], marker=MARKERS[k % len(MARKERS)],
                markersize=4.5, linewidth=1.2, color=INK, markerfacecolor="white" if k % 2 else INK, label=limit_label(name), zorder=3)
        over = ~np.isnan(y) & ~(y <= top)
        if over.any():
            ax.plot(x[over], np.full(int(over.sum()), 100.0 * top), linestyle="none", marker="^", markersize=7,
                    color=INK, zorder=4)
    fell = np.array([r.status == "fell" for r in result.offsets])
    tripped = np.array([r.status == "tripped" for r in result.offsets])
    noeval = np.array([r.completed and (r.verdict == Verdict.NOT_EVALUATED or not r.checked) for r in result.offsets])
    if fell.any():
        for xv in x[fell]:
            ax.axvline(xv, color=INK, linestyle=":", linewidth=1.0, zorder=2)
        ax.plot(x[fell], np.zeros(int(fell.sum())), linestyle="none", marker="x", markersize=9, markeredgewidth=2,
                color=INK, label="reduced model fell", zorder=5)
    if tripped.any():
        ax.plot(x[tripped], np.zeros(int(tripped.sum())), linestyle="none", marker="P", markersize=9,
                color=INK, label="swing foot tripped (biped)", zorder=5)
    if noeval.any():
        ax.plot(x[noeval], np.zeros(int(noeval.sum())), linestyle="none", marker="v", markersize=8,
                color=INK, label="could not be evaluated", zorder=5)
    if (np.concatenate([~(v <= top) & ~np.isnan(v) for v in ys.values()]).any() if ys else False):
        ax.plot([], [], linestyle="none", marker="^", color=INK, label=f"above {100 * top:.0f} % (off scale)")
    ax.set_xlabel("ground offset [m]")
    ax.set_ylabel("utilisation [% of the modelled limit]")
    ax.set_ylim(-5.0, 100.0 * top * 1.05)
    if x.size > 1:
        pad = 0.03 * (x.max() - x.min())
        ax.set_xlim(x.min() - pad, x.max() + pad)
    ax.grid(True, color="#c8c8c8", linewidth=0.5)
    ax.set_title(title or f"{Path(result.plan_path).name} on {result.robot_name}: highest utilisation per limit", fontsize=10)
    ax.legend(loc="center left", bbox_to_anchor=(1.01, 0.5), fontsize=8, frameon=False)
    fig.subplots_adjust(left=0.1, right=0.7, bottom=0.12, top=0.9)
    return fig


def png_bytes(fig: Figure) -> bytes:
    """The figure as PNG bytes."""
    import io

    buf = io.BytesIO()
    fig.savefig(buf, format="png")
    return buf.getvalue()


__all__ = ["plot_sweep", "png_bytes"]
