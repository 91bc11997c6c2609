"""The post-test report (HTML, self-contained, the review report's style): what the log shows against
the reviewed targets and limits, and what it says the robot file gets wrong. Plot functions return
Matplotlib figures (limits.review.report.plots conventions); the report embeds them."""

from __future__ import annotations

import os
from html import escape
from pathlib import Path

import numpy as np

from legbridge.limits.cautions import CAUTIONS
from legbridge.limits.review.report import plots
from legbridge.limits.review.report.sections import _row, figure, num, pct
from legbridge.limits.verdict import joint_label, limit_label

from .document import MIN_RELATIVE_CHANGE, differs, estimates, grouped_segments, parameter_label

WINDOW_PERIODS = 2.0   # the tracking and current figures show this many plan periods


def _window(result) -> tuple[float, float]:
    """Log times [s] of the shown window: WINDOW_PERIODS periods ending at the worst measured finding's
    period, else starting at the motion's start."""
    period = result.reviewed.trajectory.repetition_period_s
    t = result.log.time_s
    start = result.alignment.offset_s
    if result.segments:
        k = np.floor((result.segments[0].t_start_s - start) / period)
        start = start + max(0.0, k - WINDOW_PERIODS + 1) * period
    return max(start, float(t[0])), min(start + WINDOW_PERIODS * period, float(t[-1]))


def tracking_figure(result):
    """Target against measured joint position [rad] and drive current [A] over a window, per joint."""
    names = [x.joint for x in result.tracking]
    t = result.log.time_s
    a, b = _window(result)
    sel = (t >= a) & (t <= b)
    fig = plots._new_figure(2.9 * len(names) + 0.6, 4.6, bottom=0.95, top=0.55)
    axes = fig.subplots(2, len(names), squeeze=False, sharex=True)
    for j, n in enumerate(names):
        pred = result.predicted[n]
        for r, (key, quantity, label) in enumerate((("position_rad", "position", "angle [rad]"),
                                                    ("current_a", "current", "current [A]"))):
            ax = axes[r, j]
            plots._style_axes(ax)
            ax.plot(t[sel], pred[key][sel], color=plots.PLAN_WIDE, linewidth=3.2, solid_capstyle="butt",
                    label="reviewed (target / predicted)")
            m = result.log.get(n, quantity)
            if m is not None:
                ax.plot(t[sel], m[sel], color=plots.INK, linewidth=0.9, linestyle=(0, (4, 1.5)), label="measured")
            if quantity == "current":
                ipk = result.robot.joint(n).actuator.peak_current_a
                for s in (1, -1):
                    ax.axhline(s * ipk, color=plots.LIMIT, linewidth=1.6)
            if j == 0:
                ax.set_ylabel(label)
            if r == 0:
                ax.set_title(n)
            else:
                ax.set_xlabel("log time [s]")
    handles, _ = axes[0, 0].get_legend_handles_labels()
    from matplotlib.lines import Line2D

    handles.append(Line2D([], [], color=plots.LIMIT, linewidth=1.6, label="drive peak current"))
    fig.legend(handles=handles, loc="lower center", ncols=3, fontsize=7.5, frameon=False)
    fig.suptitle(f"Case {result.case}: reviewed against measured, log {a:.2f}-{b:.2f} s", fontsize=10, color=plots.INK)
    alt = (f"Target and measured joint angle, predicted and measured drive current, of case {result.case} for joints "
           f"{', '.join(names)} over log time {a:.2f} to {b:.2f} s.")
    return plots._finish(fig, "after-test-tracking", alt)


def temperature_figure(result):
    """Measured, predicted (robot file) and identified winding temperature [degC] over the whole log."""
    names = [x.joint for x in result.temperatures]
    t = result.log.time_s
    fig = plots._new_figure(2.9 * max(1, len(names)) + 0.6, 3.4, bottom=0.95, top=0.55)
    axes = fig.subplots(1, max(1, len(names)), squeeze=False)[0]
    for j, x in enumerate(result.temperatures):
        ax = axes[j]
        plots._style_axes(ax)
        ax.axhline(x.limit_c, color=plots.LIMIT, linewidth=2.4, label="winding limit" if j == 0 else None)
        ax.plot(t, result.predicted[x.joint]["winding_c"], color=plots.PLAN_WIDE, linewidth=3.2,
                label="predicted (robot file)" if j == 0 else None)
        m = result.log.get(x.joint, "winding_temp")
        ax.plot(*plots.envelope(t, m), color=plots.INK, linewidth=0.8, label="measured" if j == 0 else None)
        fitted = result.predicted[x.joint].get("identified_winding_c")
        if fitted is not None:
            ax.plot(t, fitted, color=plots.ALT, linewidth=1.1, linestyle=(0, (4, 2)),
                    label="identified model" if j == 0 else None)
        ax.set_title(x.joint)
        ax.set_xlabel("log time [s]")
        if j == 0:
            ax.set_ylabel("winding temperature [degC]")
    fig.legend(loc="lower center", ncols=4, fontsize=7.5, frameon=False)
    fig.suptitle("Winding temperature over the log", fontsize=10, color=plots.INK)
    alt = "Measured, predicted and identified winding temperature of each joint over the log, with the limit."
    return plots._finish(fig, "after-test-temperature", alt)


def render_after_test(result, corrected=None) -> str:
    """The post-test report as one HTML string."""
    from legbridge.limits.review.report.html import _css
    from legbridge.limits.review.review import now_iso
    from legbridge.robots.version import tool_version

    log, al, s = result.log, result.alignment, result.summary
    version = tool_version()
    caution = "".join(f"<p><strong>CAUTION.</strong> {escape(p)}</p>" for p in CAUTIONS)
    caution += ("<p><strong>CAUTION.</strong> A log shows one run. Identified values are estimates from it, with the "
                "intervals shown; the corrected robot file is a proposal for the next review, to be checked by the person "
                "responsible before it is used.</p>")
    answer = (f'<section id="answer"><h2>The answer</h2><p class="verdict {s.verdict.css_class}"><strong>Measured: '
              f'{escape(s.verdict.words)}</strong>' + (f"; worst {escape(s.worst.text)}" if s.worst else "") + "</p>"
              f"<p>Aligned by {escape(al.method)} (confidence {al.confidence:.3f}): plan time 0 at log time "
              f"{al.offset_s:.4f} s. {escape(al.detail)}</p>")
    diff = [(j, e) for j, e in estimates(result) if differs(e)]
    answer += ("<p>" + (f"{len(diff)} identified parameter(s) differ from the robot file beyond their 95 % interval and by "
                        f"{100 * MIN_RELATIVE_CHANGE:g} % or more"
                        + (f"; the corrected robot file is {escape(os.path.basename(str(corrected.path)))}." if corrected else ".")
                        if diff else "No identified parameter differs from the robot file by enough to matter.") + "</p></section>")
    ident = [("Review", f"{escape(result.review_path)}<br><span class='hash'>{escape(result.review_sha256)}</span>"),
             ("Plan", f"{escape(result.plan_path)}<br><span class='hash'>{escape(result.plan_sha256)}</span>"),
             ("Robot file", f"{escape(str(result.robot.source))}<br><span class='hash'>{escape(result.robot.sha256)}</span>"),
             ("Case", escape(result.case)),
             ("Log", f"{escape(log.path)}<br><span class='hash'>{escape(log.sha256)}</span>"),
             ("Log samples", f"{log.time_s.size} over {log.time_s[-1] - log.time_s[0]:.2f} s "
                             f"(median step {1e3 * float(np.median(np.diff(log.time_s))):.2f} ms)"),
             ("legbridge version", escape(version)), ("Compared at", escape(now_iso()))]
    identity = (f'<section id="caution-and-identity"><h2>1. Caution and what was compared</h2><div class="caution">{caution}</div>'
                f'<table class="identity">{"".join(f"<tr><th>{k}</th><td>{v}</td></tr>" for k, v in ident)}</table></section>')
    seg_head = _row(["Joint", "Limit", "Severity", ("Runs", "num"), ("First [s]", "num"), ("Last [s]", "num"),
                     ("Time in them [s]", "num"), ("Worst at [s]", "num"), ("Peak", "num"), ("Allowed", "num"), "Unit",
                     ("Utilisation [%]", "num")], header=True)
    seg_body = "".join(_row([escape(joint_label(d["joint"])), escape(limit_label(d["limit"])),
                             (escape(d["severity"].words), f"verdict {d['severity'].css_class}"), (str(d["count"]), "num"),
                             (num(d["first_s"], ".1f"), "num"), (num(d["last_s"], ".1f"), "num"), (num(d["time_s"], ".3g"), "num"),
                             (num(d["worst"].t_start_s, ".3f"), "num"), (num(d["worst"].peak), "num"),
                             (num(d["worst"].allowed), "num"), escape(d["worst"].unit), (pct(d["worst"].utilisation), "num")])
                       for d in grouped_segments(result))
    margin_head = _row(["Joint", "Limit", ("Reviewed [%]", "num"), ("Measured [%]", "num"), ("Share of the margin used [%]", "num")],
                       header=True)
    margin_body = "".join(_row([escape(joint_label(m.joint)), escape(limit_label(m.limit)),
                                (pct(m.reviewed) if m.reviewed is not None else "&ndash;", "num"), (pct(m.measured), "num"),
                                (f"{100 * m.share_used:+.0f}" if m.share_used is not None else "&ndash;", "num")])
                          for m in result.margin)
    measured = ('<section id="measured"><h2>2. Every measured sample against the modelled limits</h2>'
                + ("<p>Measured runs over or near a limit, grouped by joint and limit (after-test.json lists every run):</p>"
                   f'<table class="segments">{seg_head}{seg_body}</table>' if result.segments else
                   "<p>No measured sample is near or beyond a modelled limit.</p>")
                + "<p>The share of the margin used is (measured - reviewed) / (100 % - reviewed): 0 when the hardware did "
                  "what the review predicted, 100 % when it reached the limit the review left room for.</p>"
                + f'<table class="margin">{margin_head}{margin_body}</table></section>')
    tr_head = _row(["Joint", ("Position error RMS [rad]", "num"), ("Peak [rad]", "num"), ("At log time [s]", "num"),
                    ("Speed error RMS [rad/s]", "num"), ("Peak [rad/s]", "num"), ("Tracking lag [ms]", "num")], header=True)
    tr_body = "".join(_row([escape(x.joint), (num(x.position_rms, ".3g"), "num"), (num(x.position_peak, ".3g"), "num"),
                            (num(x.position_peak_at_s, ".3f"), "num"), (num(x.velocity_rms, ".3g"), "num"),
                            (num(x.velocity_peak, ".3g"), "num"), (num(1e3 * x.lag_s, ".3g"), "num")]) for x in result.tracking)
    cu_head = _row(["Joint", ("Measured RMS [A]", "num"), ("Predicted RMS [A]", "num"), ("Measured peak [A]", "num"),
                    ("Predicted peak [A]", "num"), ("Gain measured / predicted", "num"), ("RMS difference [A]", "num")], header=True)
    cu_body = "".join(_row([escape(x.joint), (num(x.measured_rms), "num"), (num(x.predicted_rms), "num"),
                            (num(x.measured_peak), "num"), (num(x.predicted_peak), "num"), (num(x.gain), "num"),
                            (num(x.difference_rms), "num")]) for x in result.currents)
    te_head = _row(["Joint", ("Measured peak [&deg;C]", "num"), ("Predicted peak [&deg;C]", "num"), ("Measured at end [&deg;C]", "num"),
                    ("Predicted at end [&deg;C]", "num"), ("Limit [&deg;C]", "num")], header=True)
    te_body = "".join(_row([escape(x.joint), (num(x.measured_peak_c), "num"), (num(x.predicted_peak_c), "num"),
                            (num(x.measured_end_c), "num"), (num(x.predicted_end_c), "num"), (num(x.limit_c), "num")])
                      for x in result.temperatures)
    tracking = ('<section id="tracking"><h2>3. Tracking, current and temperature</h2>'
                + figure(plots.embed(tracking_figure(result)),
                         "Reviewed targets and predicted current (wide light band) against the measured values (dark dashes) over "
                         f"{WINDOW_PERIODS:g} plan periods; dark-red lines: the drive's peak current. Without a sync column a delay "
                         "common to every joint cannot be told from a later start: the alignment takes it in, and the "
                         "tracking lag column shows each joint's delay beyond it.")
                + f'<table class="tracking">{tr_head}{tr_body}</table><table class="currents">{cu_head}{cu_body}</table>'
                + (figure(plots.embed(temperature_figure(result)),
                          "Winding temperature over the whole log: the robot file's model driven by the predicted current (wide "
                          "light band), measured (thin dark line), the model with the identified values (dashed); thick dark-red "
                          "line: the winding limit.") + f'<table class="temperatures">{te_head}{te_body}</table>'
                   if result.temperatures else "")
                + "</section>")
    id_head = _row(["Joint", "Parameter", ("Identified", "num"), ("95 % interval", "num"), ("Robot file", "num"),
                    ("Change [%]", "num"), "Differs from the file", "How"], header=True)
    id_body = "".join(_row([escape(j), escape(f"{parameter_label(e.name)} [{e.unit}]"), (num(e.value), "num"),
                            (f"{num(e.ci_low)} to {num(e.ci_high)}" if e.identified else "held", "num"),
                            (num(e.file_value) if e.file_value is not None else "&ndash;", "num"),
                            (f"{100 * e.relative_change:+.1f}" if e.relative_change is not None else "&ndash;", "num"),
                            "yes" if differs(e) else "no", escape(e.method)]) for j, e in estimates(result))
    notes = "".join(f'<p class="note">{escape(n)}</p>' for n in result.notes)
    fits = "".join(f'<p class="note">{escape(j)}: {escape(n)}</p>' for j, f in
                   list(result.drive_fits.items()) + list(result.thermal_fits.items()) for n in f.notes)
    corr = ""
    if corrected is not None:
        corr = (f"<p>Corrected robot file: <code>{escape(str(corrected.path))}</code> (SHA-256 <span class='hash'>"
                f"{escape(corrected.sha256)}</span>); it changes only the values above marked as differing, and marks them "
                "as identified from this log. The original robot file is unchanged.</p>"
                + "".join(f'<p class="note">{escape(n)}</p>' for n in corrected.notes))
    identified = (f'<section id="identified"><h2>4. What the log says the robot file gets wrong</h2>'
                  "<p>Least-squares estimates with 95 % confidence intervals (widened for correlated residuals). A value is "
                  "marked as differing when the file's value lies outside its interval and the two differ by "
                  f"{100 * MIN_RELATIVE_CHANGE:g} % or more; only those go into the corrected robot file. The intervals "
                  "reflect the log's noise, not the model's own approximations (interpolation between samples, timing), "
                  "which with thousands of samples can matter more: hence the second condition.</p>"
                  f'<table class="identified">{id_head}{id_body}</table>{fits}{notes}{corr}</section>')
    name = os.path.basename(log.path)
    return ("<!DOCTYPE html>\n<html lang=\"en\"><head><meta charset=\"utf-8\">"
            "<meta name=\"viewport\" content=\"width=device-width, initial-scale=1\">"
            f"<title>After the test: {escape(name)} against case {escape(result.case)}</title>"
            f"<style>{_css()}</style></head><body>"
            f"<header><h1>After the test: hardware log against the review</h1><p class=\"subtitle\">{escape(name)} against "
            f"case {escape(result.case)} on {escape(result.robot.name)}, by legbridge {escape(version)}</p></header>"
            f"{answer}{identity}{measured}{tracking}{identified}"
            f"<footer>Generated by legbridge {escape(version)}. This document needs no network connection.</footer>"
            "</body></html>\n")


def write_report(result, corrected, path, *, force: bool = False) -> Path:
    """Render the post-test report and write it atomically to ``path``."""
    from legbridge.robots.files import write_atomic

    return write_atomic(path, render_after_test(result, corrected), force=force)
