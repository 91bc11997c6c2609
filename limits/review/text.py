"""The terminal summary of a Review (``legbridge check`` and ``legbridge review`` print the same one).

No colour, never the word 'safe'; utilisations through limits.verdict.utilisation_text, so the
terminal, the JSON and the report agree to the digit.
"""

from __future__ import annotations

from legbridge.limits.cautions import caution_lines
from legbridge.limits.verdict import Verdict, joint_label, limit_label, utilisation_text

from .review import Review


SHOWN_PER_CASE = 3


def worst_segments(review: Review, n: int = 5) -> list:
    """The n worst segments over all cases (exceeds before near, then utilisation), one per (joint, limit)."""
    segs = [s for c in review.cases for s in c.segments]
    segs.sort(key=lambda s: (s.severity != Verdict.EXCEEDS, -s.utilisation, s.t_start_s))
    seen, out = set(), []
    for s in segs:
        if (s.joint, s.limit) not in seen:
            seen.add((s.joint, s.limit))
            out.append(s)
    return out[:n]


def case_findings(case) -> list:
    """A case's flagged segments, worst first (exceeding before near, then utilisation), one per
    (joint, limit)."""
    segs = sorted(case.segments, key=lambda s: (s.severity != Verdict.EXCEEDS, -s.utilisation, s.t_start_s))
    seen, out = set(), []
    for s in segs:
        if (s.joint, s.limit) not in seen:
            seen.add((s.joint, s.limit))
            out.append(s)
    return out


def bound_text(case, seg, robot, *, brief: bool = False) -> str:
    """What set the allowed value of a flagged segment at its worst sample, in words (the peak torque's
    power direction, efficiency and rotor share: robots.actuator_limits.explain_torque_bound; the
    trace's source for the other limits)."""
    import numpy as np

    from legbridge.robots.actuator_limits import explain_torque_bound

    tr = next((t for t in case.traces if t.limit == seg.limit and t.joint == seg.joint), None)
    if tr is None:
        return ""
    if seg.limit != "peak_torque":
        return "" if brief else tr.source
    traj = case.trajectory
    u = np.abs(np.asarray(tr.utilisation[seg.i_start:seg.i_end + 1], dtype=float))
    i = seg.i_start + int(np.nanargmax(u)) if np.isfinite(u).any() else seg.i_start
    j = list(traj.joint_names).index(seg.joint)
    joint = robot.joint(seg.joint)
    speed, accel = traj.motor_side_rates(j, joint.actuator.gear_ratio)
    return explain_torque_bound(joint, float(traj.tau[i, j]), float(speed[i]), float(accel[i]), brief=brief)


def answer_line(case) -> str:
    """The answer for one case in one line: verdict, worst limit and joint, how far, and where."""
    s = case.summary
    w = s.worst
    if w is None:
        return f"{case.case}: {s.verdict.words}"
    where = next((f" at {g.t_start_s:.3f}-{g.t_end_s:.3f} s" for g in case_findings(case)
                  if g.limit == w.limit and g.joint == w.joint), "")
    return f"{case.case}: {s.verdict.words}; worst {w.text}{where}"


def identity_lines(review: Review, command: str) -> list[str]:
    """What was reviewed: plan and its hash, robot, rate, margin, duration, scaling."""
    plan, robot, st = review.plan, review.robot, review.settings
    sha = getattr(plan, "sha256", "") or ""
    out = [f"legbridge {command}: plan {plan.path}" + (f" (SHA-256 {sha[:12]}...)" if sha else "")
           + f" on robot {robot.name}: {len(review.cases)} case(s) at {st.rate_hz:g} Hz, margin {100 * st.margin:g} %"]
    scaling = getattr(plan, "scaling", None)
    if scaling is not None:
        out.append(f"  {scaling.describe()}")
    if review.gait:
        out.append(f"  biped, legs {' and '.join(robot.legs)}: {review.gait}")
    if review.cases:
        out.append(f"  winding temperature: {review.cases[0].thermal.describe()}")
    out.extend(f"  Warning: {w}" for w in review.warnings)
    return out


def case_lines(review: Review) -> list[str]:
    """One line per case (verdict, worst limit, segment counts) and what could not be evaluated."""
    width = max((len(c.case) for c in review.cases), default=4)
    out = []
    for c in review.cases:
        s = c.summary
        w = s.worst
        worst = f"worst {w.text}" if w else "worst: nothing evaluated"
        out.append(f"  {c.case:<{width}}  {s.verdict.words:<27} {worst}; segments: {s.n_exceeds} exceeding, "
                   f"{s.n_near} near")
        for f in c.findings:
            out.append(f"  {'':<{width}}  could not be evaluated: {f}")
        if c.corrected is not None and not c.summary.passes:
            still = [w for w in c.corrected.by_limit if w.utilisation > 1.0]
            out.append(f"  {'':<{width}}  nearest feasible motion (QP, MODIFIED targets): "
                       + ("within the modelled limits when checked again" if not still else
                          "still exceeds " + "; ".join(w.text for w in still[:3])
                          + (f" (+{len(still) - 3} more)" if len(still) > 3 else "")))
        if c.spring_steps:
            big = max(c.spring_steps, key=lambda x: abs(x.step_nm))
            out.append(f"  {'':<{width}}  {len(c.spring_steps)} torque step(s) through series springs at touchdown/liftoff; "
                       f"largest {big.step_nm:+.4g} N m ({big.joint}, {big.kind} at {big.time_s:.3f} s): the motor side "
                       f"must wind up {big.windup_rad:+.4g} rad, at least {1e3 * big.min_time_s:.3g} ms at its speed limit")
        for j, t in c.thermal.time_to_limit_s.items():
            if c.thermal.runaway.get(j):
                when = "repeated" if c.thermal.periodic else "if the plan were repeated without end"
                out.append(f"  {'':<{width}}  {j} winding: thermal runaway {when} (its copper loss grows faster with "
                           f"temperature than it cools: no steady state)")
            if t is not None:
                out.append(f"  {'':<{width}}  {j} winding reaches its temperature limit after {t:.1f} s")
    return out


def finding_lines(review: Review) -> list[str]:
    """The ranking and the worst segments."""
    out = []
    if len(review.cases) > 1:
        out.append("Ranking, worst first: " + ", ".join(
            f"{c.case} ({c.summary.worst.text})" if c.summary.worst else c.case for c in review.ranked))
    shown = [c for c in review.ranked if not c.passed and c.segments] or [c for c in review.ranked if c.segments][:1]
    if shown:
        out.append("Worst findings of every case that exceeds a limit (or, when none does, of the worst case):")
        for c in shown:
            segs = case_findings(c)
            for s in segs[:SHOWN_PER_CASE]:
                why = bound_text(c, s, review.robot, brief=True)
                out.append(f"  {s.case} / {joint_label(s.joint)} / {limit_label(s.limit)}: {s.severity.value}, "
                           f"{s.t_start_s:.3f}-{s.t_end_s:.3f} s, peak {s.peak:.4g} {s.unit} against {s.allowed:.4g} {s.unit}"
                           + (f" ({why})" if why else "") + f", utilisation {utilisation_text(s.utilisation)}")
            if len(segs) > SHOWN_PER_CASE:
                out.append(f"  {c.case}: +{len(segs) - SHOWN_PER_CASE} more (every segment is in the review JSON and "
                           "the report's segments table)")
    else:
        out.append("No segment of any case is near or beyond a modelled limit.")
    bad = [c.case for c in review.cases if not c.passed]
    if bad:
        out.append(f"{len(bad)} of {len(review.cases)} case(s) exceed a modelled limit or could not be evaluated: "
                   f"{', '.join(bad)}")
    else:
        out.append(f"Every case is {Verdict.WITHIN.words} (or near one).")
    return out


def sweep_lines(review: Review) -> list[str]:
    """The ground-height sweep's window in two lines, or why there is none."""
    sw = review.sweep
    if sw is None:
        return [f"Note: {review.sweep_note}"] if review.sweep_note else []
    w = sw.window
    return [f"Ground-height sweep ({len(sw.offsets)} offsets, reduced model re-simulated): "
            + ("no offset around zero completes within the modelled limits" if w.empty else
               f"window {w.lo_m:+.4f} m to {w.hi_m:+.4f} m within the modelled limits"),
            f"  below: {w.below.text}", f"  above: {w.above.text}"]


def review_lines(review: Review, *, command: str = "review", paths: dict | None = None) -> list[str]:
    """The whole terminal summary: identity, cases, findings, sweep, output paths, caution text."""
    lines = identity_lines(review, command) + [""] + case_lines(review) + [""] + finding_lines(review)
    sw = sweep_lines(review)
    if sw:
        lines += [""] + sw
    if paths:
        lines.append("")
        labels = {"report": "Report", "review": "Results", "targets": "Targets", "sweep_csv": "Sweep table",
                  "sweep_json": "Sweep results", "plan": "Plan", "modified": "MODIFIED targets"}
        for key, p in paths.items():
            extra = " (demo plan, invented data)" if key == "plan" else (
                " (nearest feasible motion, NOT the plan)" if key == "modified" else "")
            lines.append(f"{labels.get(key, key) + ':':<15}{p}{extra}")
    lines.append("")
    lines += caution_lines()
    return lines


__all__ = ["answer_line", "case_findings", "case_lines", "finding_lines", "identity_lines", "review_lines", "sweep_lines", "worst_segments"]
