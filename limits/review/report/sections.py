"""The HTML fragments of the report, one function per section, in report order.

Every function returns a string of HTML (escaped); section ids are stable (SECTION_IDS) so tests and
links can find them. Units appear in every column header.
"""

from __future__ import annotations

import base64
import math
import os
import re
from html import escape

from legbridge.limits.cautions import CAUTIONS
from legbridge.limits.review.text import bound_text
from legbridge.limits.verdict import Verdict, joint_label, limit_label, utilisation_text
from legbridge.robots.robot import STANDARD_GRAVITY_M_S2

from . import plots

SECTION_IDS = ("answer", "caution-and-identity", "verdicts", "cases", "torque-speed", "thermal", "segments", "sign-off")
# Present only when the review ran a ground-height sweep; it stands between "segments" and "sign-off".
SWEEP_SECTION_ID = "sweep"

SIGNOFF_ITEMS = (
    "The emergency stop has been tested on this robot today and cuts power to every joint of the leg.",
    "Guarding or a tether is in place and keeps the robot within the test area.",
    "Drive current limits are set at or below the reviewed values listed above, on every drive.",
    "The first run is at reduced amplitude (or speed) and the results were looked at before going further.",
    "Everybody is clear of the robot's reach and knows who may stop the test.",
    "The points above follow the lab's own safety rules; where those rules ask for more, they apply.",
)


def slug(text: str) -> str:
    """A stable id fragment for a case or joint name, different for different names: letters, digits
    and '-' stay, every other character becomes '_<hex code>_' ('ground+0.06m' -> 'ground_2b_0_2e_06m')."""
    s = re.sub(r"[^A-Za-z0-9-]", lambda m: f"_{ord(m.group()):x}_", str(text))
    return s or "x"


def num(x, fmt: str = ".4g") -> str:
    """A number for a table cell ('not evaluated' for NaN, infinity signs)."""
    if x is None:
        return "&ndash;"
    x = float(x)
    if math.isnan(x):
        return "not evaluated"
    if math.isinf(x):
        return "&infin;" if x > 0 else "&minus;&infin;"
    return format(x, fmt)


def pct(u) -> str:
    """A utilisation as a percentage for a table cell (limits.verdict.utilisation_text)."""
    return escape(utilisation_text(u)).replace(" %", "&nbsp;%")


def img(fig: plots.Figure) -> str:
    """The figure's PNG as an embedded <img> element."""
    data = base64.b64encode(fig.png).decode("ascii")
    return f'<img src="data:image/png;base64,{data}" alt="{escape(fig.alt)}">'


def figure(fig: plots.Figure, caption: str) -> str:
    """The figure with its caption and notes as HTML."""
    notes = "".join(f'<p class="note">{escape(n)}</p>' for n in fig.notes)
    return f'<figure id="fig-{slug(fig.name)}">{img(fig)}<figcaption>{caption}</figcaption></figure>{notes}'


def _row(cells, header=False) -> str:
    tag = "th" if header else "td"
    out = []
    for c in cells:
        if isinstance(c, tuple):  # (html, css class)
            out.append(f'<{tag} class="{c[1]}">{c[0]}</{tag}>')
        else:
            out.append(f"<{tag}>{c}</{tag}>")
    row = "<tr>" + "".join(out) + "</tr>"
    return f"<thead>{row}</thead>" if header else row  # a printed table repeats its header on every page


def exceeded_limits(case) -> str:
    """The limits a case exceeds with their joints, e.g. 'peak torque (hip, knee); voltage (knee)'."""
    by_limit: dict[str, list[str]] = {}
    for s in case.segments:
        if s.severity == Verdict.EXCEEDS:
            joints = by_limit.setdefault(limit_label(s.limit), [])
            if joint_label(s.joint) not in joints:
                joints.append(joint_label(s.joint))
    return "; ".join(f"{lim} ({', '.join(j)})" for lim, j in by_limit.items())


def caution_identity(review) -> str:
    """Section 1: caution text and the identity of what was reviewed."""
    plan, robot, settings = review.plan, review.robot, review.settings
    version, created = review.provenance.get("legbridge", ""), review.created
    caution = "".join(f"<p><strong>CAUTION.</strong> {escape(p)}</p>" for p in CAUTIONS)
    duration = (review.cases[0].thermal.describe() if review.cases else
                f"{settings.duration_s:g} s (plan repeated)" if settings.duration_s else "the plan repeated without end")
    mu = settings.friction if settings.friction is not None else robot.ground_friction
    rows = [
        ("Plan file", f"{escape(os.path.basename(plan.path) or plan.path)}<br><span class='small'>{escape(str(plan.path))}</span>"),
        ("Plan SHA-256", f"<span class='hash'>{escape(plan.sha256)}</span>"),
        ("Robot", escape(robot.name)),
        ("Robot file", f"{escape(os.path.basename(robot.source) or robot.source or 'in memory')}<br><span class='small'>{escape(str(robot.source))}</span>"),
        ("Robot SHA-256", f"<span class='hash'>{escape(robot.sha256)}</span>"),
        *([("Gait (biped)", escape(review.gait))] if review.gait else []),
        ("Cases", f"{len(plan.cases)}: {escape(', '.join(plan.case_names))}"),
        ("legbridge version", escape(version)),
        ("Software versions", escape(", ".join(f"{k} {v}" for k, v in review.provenance.items()
                                               if k != "legbridge" and v is not None))),
        ("Reviewed at", escape(created)),
        ("Export and check rate", f"{settings.rate_hz:g} Hz"),
        ("Test duration (thermal)", escape(duration)),
        ("Near-limit margin", f"{100 * settings.margin:g} % below each limit"),
        ("Ground friction coefficient", f"{mu:g} [-] ({'command line' if settings.friction is not None else 'robot file'})"),
    ]
    if getattr(settings, "supply_power_w", None) is not None:
        rows.append(("Supply power limit", f"{settings.supply_power_w:g} W"))
    if getattr(settings, "regen_energy_j", None) is not None:
        rows.append(("Regenerated energy limit", f"{settings.regen_energy_j:g} J"))
    sc = plan.scaling
    if sc is not None:
        rows.append(("Scaling (nondimensional plan)",
                     f"l0 = {sc.length_m:g} m, mass = {sc.mass_kg:g} kg, g = {sc.gravity_m_s2:g} m/s&sup2;; "
                     f"time unit {sc.time_s:.4g} s, force unit {sc.force_n:.4g} N; from {escape(sc.source)}"))
    else:
        rows.append(("Scaling", "plan in SI units (no scaling)"))
    for key in ("description", "note", "source"):
        if key in plan.metadata and isinstance(plan.metadata[key], str):
            rows.append((f"Plan {key}", escape(plan.metadata[key])))
    table = "".join(f"<tr><th>{k}</th><td>{v}</td></tr>" for k, v in rows)
    warn = "".join(f'<p class="note">Robot file note: {escape(w)}</p>' for w in robot.warnings)
    warn += "".join(f'<p class="note">Plan and robot: {escape(w)}</p>' for w in review.warnings)
    return (f'<section id="caution-and-identity"><h2>1. Caution and what was reviewed</h2>'
            f'<div class="caution">{caution}</div><table class="identity">{table}</table>{warn}</section>')


def answer(review) -> str:
    """The answer first: one line per case (verdict, worst limit, how far and where), worst first,
    from limits.review.text.answer_line (the terminal prints the same lines)."""
    from legbridge.limits.review.text import answer_line

    items = "".join(f'<li class="verdict {c.verdict.css_class}"><a href="#case-{slug(c.case)}">{escape(answer_line(c))}</a></li>'
                    for c in review.ranked)
    bad = sum(1 for c in review.cases if not c.passed)
    head = (f"{bad} of {len(review.cases)} case(s) exceed a modelled limit or could not be evaluated" if bad
            else f"Every case is {Verdict.WITHIN.words} (or near one)")
    return (f'<section id="answer"><h2>The answer, worst case first</h2><p><strong>{escape(head)}.</strong> '
            f'Modelled limits only: read the caution below.</p><ol class="answer">{items}</ol></section>')


def verdicts(review) -> str:
    """Section 2: per-case verdict table, worst limit and utilisation, and the ranking."""
    head = _row(["Case", "Ground height [m]", "Verdict", "Worst limit", "Joint", ("Utilisation [%]", "num"),
                 "Limits exceeded", ("Segments [-]", "num"), "Could not be evaluated"], header=True)
    body = []
    for r in review.cases:
        v = r.verdict
        w = r.summary.worst
        findings = "<br>".join(escape(f) for f in r.findings) or "&ndash;"
        body.append(_row([
            f'<a href="#case-{slug(r.case)}">{escape(r.case)}</a>', (num(r.ground_height_m), "num"),
            (escape(v.words), f"verdict {v.css_class}"),
            escape(limit_label(w.limit)) if w else "not evaluated", escape(joint_label(w.joint)) if w else "&ndash;",
            (pct(w.utilisation) if w else "not evaluated", "num"), escape(exceeded_limits(r)) or "&ndash;",
            (str(len(r.segments)), "num"), findings,
        ]))
    order = "".join(f"<li>{escape(r.case)}: {escape(r.verdict.words)}"
                    f"{', worst ' + escape(limit_label(r.summary.worst.limit)) + ' at ' + pct(r.summary.worst.utilisation) if r.summary.worst else ''}</li>"
                    for r in review.ranked)
    return (f'<section id="verdicts"><h2>2. Verdict per case</h2>'
            f'<p>Utilisation is the planned value divided by the allowed value at the same sample (100 % = at the limit). '
            f'"Near" means within the margin below a limit. "Not finite" means the allowed value was zero or a value could not be '
            f'computed at some sample; such a sample counts as exceeding. A case that could not be fully evaluated is not '
            f'counted as within the limits.</p>'
            f'<table class="verdicts">{head}{"".join(body)}</table>'
            f'<h3>Ranking, worst case first</h3><ol class="ranking">{order}</ol></section>')


def _figure_of(review, key, figs):
    """The figure ``key`` of ``review``: from ``figs`` (rendered ahead by plots.render_figures, on the
    available cores) when there, else drawn now."""
    got = (figs or {}).get(key)
    return got if got is not None else plots.figure_for(review, key)


def cases(review, figs=None) -> str:
    """Section 3: per case, the joint figure and the ground-force figure."""
    robot = review.robot
    parts = ['<section id="cases"><h2>3. Cases over time</h2>']
    for r in review.cases:
        fj = _figure_of(review, ("joints", r.case), figs)
        ff = _figure_of(review, ("force", r.case), figs)
        window = plots.zoom_window(r)
        fz = _figure_of(review, ("zoom", r.case), figs) if window is not None else None
        findings = "".join(f'<p class="finding">Could not be evaluated: {escape(f)}</p>' for f in r.findings)
        res = r.trajectory.base_residual_summary()
        weight = robot.total_mass_kg * STANDARD_GRAVITY_M_S2
        share = f" ({100.0 * max(res['max_force_x_n'], res['max_force_z_n']) / weight:.1f}&nbsp;% of the body weight)" if weight > 0 else ""
        if r.corrected is not None and not r.summary.passes:
            still = [w for w in r.corrected.by_limit if w.utilisation > 1.0]
            findings += ('<p class="note">Nearest feasible motion (motion QP; MODIFIED targets, not the plan), checked '
                         'again with every check: ' + (escape("within the modelled limits") if not still else
                         "still exceeds " + escape("; ".join(w.text for w in still))) + ".</p>")
        for j_name, hot in r.thermal.runaway.items():
            if hot:
                findings += (f'<p class="finding">Winding of {escape(j_name)}: thermal runaway '
                             f'{"when the plan is repeated" if r.thermal.periodic else "if the plan were repeated without end"}'
                             " (its copper loss grows faster with temperature than it cools: no steady state).</p>")
        if r.spring_steps:
            rows_ = "".join(_row([escape(x.joint), escape(x.kind), (num(x.time_s, ".4f"), "num"), (num(x.step_nm), "num"),
                                  (num(x.windup_rad), "num"), (num(1e3 * x.min_time_s, ".3g"), "num")]) for x in r.spring_steps)
            head_ = _row(["Joint", "Edge", ("Time [s]", "num"), ("Torque step [N m]", "num"), ("Wind-up [rad]", "num"),
                          ("Least time at speed limit [ms]", "num")], header=True)
            findings += ('<p class="note">Torque steps the plan asks through series springs. The torque through a spring '
                         'cannot step: the motor side must wind the spring up first, which takes at least the time shown; '
                         'these steps are not turned into currents.</p>'
                         f'<table class="spring-steps">{head_}{rows_}</table>')
        findings += (f'<p class="note">Base residual, the wrench the body would need beyond what the leg gives (the plan\'s '
                     f"body motion against this leg's masses): up to {num(res['max_force_x_n'], '.3g')} N along x, "
                     f"{num(res['max_force_z_n'], '.3g')} N along z{share} and {num(res['max_moment_nm'], '.3g')} N m in pitch. "
                     "It is not a hardware limit; a large value means the plan's model and this leg disagree.</p>")
        parts.append(
            f'<article class="case" id="case-{slug(r.case)}"><h3>Case {escape(r.case)} '
            f'(ground height {num(r.ground_height_m)} m): {escape(r.verdict.words)}</h3>{findings}'
            + figure(fj, "Joint angle [rad], speed [rad/s], torque [N m], drive current [A, DC-equivalent] and winding voltage "
                     "[V, the winding at its temperature limit] against time [s]. Solid dark-red lines: hard stops, maximum joint "
                     "speed, peak torque (the motor driving the joint), the drive's peak current and voltage; dashed: the torque the "
                     "voltage envelope allows at the planned speed, where that is tighter than the peak torque. Grey bands: this "
                     "joint's leg in stance (darker) and in its generated swing (lighter). Triangles at a panel edge: samples beyond "
                     "the plotted scale. Hatched spans: flagged segments (diagonal = exceeds, dotted = near), each drawn at least "
                     "1.2 % of the time axis wide; the limit exceeded is named above its span.")
            + (figure(fz, f"The joints from {window[0]:.3f} to {window[1]:.3f} s, around this case's worst flagged segment "
                      "(the plan is long: the overview above thins each line to its minima and maxima).") if fz is not None else "")
            + figure(ff, "Ground force on the foot [N] against time [s]: planned (wide light band), the closest achievable force "
                     "found by the force-feasibility QP (thin dark dashes on top) and the friction cone bound "
                     "&plusmn;&mu;F<sub>z</sub> (dotted).")
            + "</article>")
    parts.append("</section>")
    return "".join(parts)


def torque_speed(review, figs=None) -> str:
    """Section 4: per joint, the torque-speed plane with the envelope and every case."""
    robot = review.robot
    from legbridge.robots.actuator_limits import back_driven_joint_torque_nm, max_joint_speed, max_joint_torque

    parts = ['<section id="torque-speed"><h2>4. Torque-speed plane per joint</h2>']
    for j in robot.limb_joints:  # both legs' joints of a biped
        f = _figure_of(review, ("torque_speed", j.name), figs)
        ms, mt = max_joint_speed(j), max_joint_torque(j)
        act = j.actuator
        back = min(back_driven_joint_torque_nm(act), j.effort_limit_nm or math.inf)
        parts.append(f'<h3 id="joint-{slug(j.name)}">Joint {escape(j.name)}</h3>' + figure(
            f, f"Joint torque [N m] against joint speed [rad/s], one panel per case (the other cases in grey). Solid outline: "
               f"the voltage and drive-current envelope at steady speed (rotor inertia not included); dashed: peak torque "
               f"{mt.value:.4g} N m ({escape(mt.source)}) where the motor drives the joint (torque and speed of one sign); "
               f"dotted: {back:.4g} N m where the joint back-drives the motor (the gearbox losses then help); fine "
               f"dotted: continuous torque. Maximum joint speed {ms.value:.4g} rad/s ({escape(ms.source)}).")
            + f"<p>One allowed peak torque, {mt.value:.4g} N m, is what {escape(j.name)}'s drive gives at its peak current "
              f"({num(act.peak_current_a)} A) when the motor drives the joint. The check applies it sample by sample: "
              f"{back:.4g} N m where the joint back-drives the motor, less the torque the rotor's acceleration takes, and, "
              f"for the voltage, the envelope at the sample's speed with the winding at its temperature limit. The "
              f"segments table names the bound that applied to each finding.</p>")
    parts.append("</section>")
    return "".join(parts)


def thermal(review, figs=None) -> str:
    """Section 5: winding temperature over the test duration against its limit."""
    reviews, robot = review.cases, review.robot
    f = _figure_of(review, ("thermal", ""), figs)
    head = _row(["Case"] + [(f"{escape(j)}: time to limit [s]", "num") for j in robot.limb_joint_names], header=True)
    body = []
    for r in reviews:
        ttl = r.thermal.time_to_limit_s
        cells = []
        for j in robot.limb_joint_names:
            v = ttl.get(j)
            cells.append(("not reached" if v is None or (isinstance(v, float) and math.isinf(v)) else num(v), "num"))
        body.append(_row([escape(r.case)] + cells))
    return ('<section id="thermal"><h2>5. Winding temperature over the test</h2>'
            + figure(f, "Winding temperature [&deg;C] against time [s] over the whole assumed test (without --duration: the "
                        "plan repeated from cold until the periodic steady state); solid dark-red line: the winding limit, "
                        "dotted: ambient; one line style per case; a marker and the box give the time at which a winding "
                        "reaches its limit.")
            + f'<table>{head}{"".join(body)}</table></section>')


def segments(review) -> str:
    """Section 6: what set each allowed value (one row per joint and limit, at its worst finding), then
    every flagged segment of every case."""
    reviews = review.cases
    head = _row(["Case", "Joint", "Limit", "Severity", ("Start [s]", "num"), ("End [s]", "num"), ("Peak", "num"),
                 ("Allowed", "num"), "Unit", ("Utilisation [%]", "num")], header=True)
    order = {r.case: i for i, r in enumerate(reviews)}  # plan order, then time
    segs = sorted((s for r in reviews for s in r.segments), key=lambda s: (order.get(s.case, 0), s.t_start_s, s.joint, s.limit))
    body = "".join(_row([
        escape(s.case), escape(joint_label(s.joint)), escape(limit_label(s.limit)),
        (escape(s.severity.words), f"verdict {s.severity.css_class}"),
        (num(s.t_start_s, ".4f"), "num"), (num(s.t_end_s, ".4f"), "num"), (num(s.peak), "num"), (num(s.allowed), "num"),
        escape(s.unit), (pct(s.utilisation), "num")]) for s in segs)
    worst: dict = {}
    for s in segs:
        if (s.joint, s.limit) not in worst or s.utilisation > worst[(s.joint, s.limit)].utilisation:
            worst[(s.joint, s.limit)] = s
    bounds_head = _row(["Joint", "Limit", ("Allowed", "num"), "Unit", "At", "What set the allowed value"], header=True)
    bounds = "".join(_row([
        escape(joint_label(s.joint)), escape(limit_label(s.limit)), (num(s.allowed), "num"), escape(s.unit),
        escape(f"{s.case}, {s.t_start_s:.3f}-{s.t_end_s:.3f} s"), escape(bound_text(review.case(s.case), s, review.robot))])
        for s in sorted(worst.values(), key=lambda s: (-s.utilisation, s.joint, s.limit)))
    empty = "" if segs else "<p>No segment of any case is near or beyond a modelled limit.</p>"
    explained = ("" if not segs else
                 "<p>The allowed value of a limit can change from sample to sample (the power direction, the rotor's "
                 "acceleration, the speed). For each joint and limit, at its worst finding:</p>"
                 f'<table class="bounds">{bounds_head}{bounds}</table>')
    return (f'<section id="segments"><h2>6. Flagged segments</h2>{empty}{explained}'
            f'<table class="segments">{head}{body}</table></section>')


def sweep(result) -> str:
    """Optional section: the ground-height sweep of the plan's open-loop policy (limits.sweep)."""
    from legbridge.limits.sweep.plot import plot_sweep, png_bytes

    w = result.window
    fig = plots.Figure("sweep", png_bytes(plot_sweep(result)),
                       "Highest utilisation of each modelled limit against the ground offset")
    if w.empty:
        window = "No offset around zero completes within the modelled limits."
    else:
        window = (f"Offsets from {w.lo_m:+.4f} m to {w.hi_m:+.4f} m ({w.n_within} of {len(result.offsets)}) complete "
                  f"in the reduced model and stay within the modelled limits.")
    ends = f"<li>Below: {escape(w.below.text)}</li><li>Above: {escape(w.above.text)}</li>"
    head = _row(["Ground offset [m]", "Reduced model", "Verdict", "Worst limit", "Joint", ("Utilisation", "num"),
                 ("RMS apex height error [m]", "num"), ("RMS apex speed error [m/s]", "num")], header=True)
    body = []
    for r, e in zip(result.offsets, result.apex_errors):
        outcome = ("completed" if r.completed else f"tripped: {escape(r.fall_reason or '')}" if r.status == "tripped"
                   else f"fell at {r.end_time_s:.3f} s ({escape(r.fall_reason or '')})")
        verdict = Verdict(r.verdict).words if r.checked else "not checked (fell)"
        css = Verdict(r.verdict).css_class if r.checked else ""
        body.append(_row([(f"{r.offset_m:+.4f}", "num"), outcome, (escape(verdict), f"verdict {css}"),
                          escape(limit_label(r.worst_limit)) if r.worst_limit else "&ndash;",
                          escape(r.worst_joint) if r.worst_joint else "&ndash;",
                          (escape(utilisation_text(r.worst_utilisation)) if r.checked else "&ndash;", "num"),
                          (num(e.rms_dz_m, ".3g"), "num"), (num(e.rms_dvx_m_s, ".3g"), "num")]))
    caption = ("Highest utilisation [% of the modelled limit] of each limit over joints and samples against the "
               "ground offset [m]; the shaded band is the window; 'x': the reduced model fell. Each offset re-simulates "
               "the plan's open-loop policy on flat ground at that height and is checked like the plan's own cases.")
    return (f'<section id="{SWEEP_SECTION_ID}"><h2>6a. Ground-height sweep of the open-loop policy</h2>'
            f"<p>{escape(window)}</p><ul>{ends}</ul>{figure(fig, caption)}"
            f'<table class="sweep">{head}{"".join(body)}</table></section>')


def signoff(review) -> str:
    """Section 7: the reviewed drive values, a generic checklist deferring to the lab's rules, blanks to sign."""
    robot = review.robot
    from legbridge.robots.actuator_limits import max_joint_torque

    from legbridge.robots.actuator_limits import back_driven_joint_torque_nm

    head = _row(["Joint", ("Drive peak current [A]", "num"), ("Continuous current [A]", "num"), ("Bus voltage [V]", "num"),
                 ("Max motor speed [rad/s]", "num"), ("Winding limit [&deg;C]", "num"),
                 ("Torque at peak current: motor drives / back-driven [N m]", "num"), ("Range [rad]", "num")], header=True)
    body = "".join(_row([
        escape(j.name), (num(j.actuator.peak_current_a), "num"), (num(j.actuator.continuous_current_a), "num"),
        (num(j.actuator.bus_voltage_v), "num"), (num(j.actuator.max_motor_speed_rad_s), "num"),
        (num(j.actuator.thermal.max_winding_temp_c), "num"),
        (f"{num(max_joint_torque(j).value)} / {num(min(back_driven_joint_torque_nm(j.actuator), j.effort_limit_nm or math.inf))}", "num"),
        (f"{j.lower_rad:.4g} to {j.upper_rad:.4g}", "num")]) for j in robot.joints)
    settings_note = ("The check bounded each joint's torque through its drive current (DC-equivalent convention): "
                     "the drive's peak current gives the first torque when the motor drives the joint and the second, "
                     "higher, one when the joint back-drives the motor; the rotor's acceleration takes a share of it, "
                     "and at speed the voltage envelope lowers it further (section 4 and the segments table say "
                     "which bound applied where). Set current limits on the drives, at or below these values.")
    items = "".join(f"<li>{escape(i)}</li>" for i in SIGNOFF_ITEMS)
    blanks = "".join(_row([role, "", "", ""]) for role in ("Prepared by", "Checked by", "Person responsible for the test"))
    version = review.provenance.get("legbridge", "")
    what = _row(["What was reviewed", ""], header=True) + "".join(_row([escape(k), v]) for k, v in (
        ("Plan SHA-256", f"<span class='hash'>{escape(getattr(review.plan, 'sha256', '') or '')}</span>"),
        ("Robot SHA-256", f"<span class='hash'>{escape(robot.sha256)}</span>"),
        ("legbridge version", escape(version)),
        *[(f"Case {c.case}", escape(c.verdict.words)) for c in review.cases]))
    return (f'<section id="sign-off"><h2>7. Sign-off before the test</h2>'
            f'<table class="signoff-identity">{what}</table>'
            f'<p>The drive settings this review assumed, per joint:</p>'
            f'<table>{head}{body}</table><p>{escape(settings_note)}</p>'
            f'<p>Generic reminders only. The lab\'s own safety rules and the person responsible for the test decide what is '
            f'required; tick an item only when it has been done.</p><ul class="checklist">{items}</ul>'
            f'<table class="signoff">{_row(["Role", "Name", "Signature", "Date"], header=True)}{blanks}</table>'
            f'<p>Remarks:</p><div style="border:1px solid #c9ced3; height:5rem"></div></section>')
