"""The HTML review report: structure, verdicts, the known violation, shading, cautions, no overwrite.

The review comes from the real check path (report_fixtures.py): the invented example leg with its hip
held still, hip torque humps of 30, 41 and 50 N m against the hip's peak torque eta N Kt I_peak =
0.9 * 10 * 0.12 * 40 = 43.2 N m (DC motor model, Hughes and Drury, Electric Motors and Drives, 4th ed.,
ch. 3; motoring at standstill). With the default 10 % margin the near band starts at 0.9 * 43.2 =
38.88 N m, so by hand: 30 N m is within, 41 N m is near, 50 N m exceeds. At standstill the drive
current is tau / (eta N Kt), so the hip's peak current (40 A) is reached at the same samples.
"""

from __future__ import annotations

import base64
import math
import re
from html import unescape
from pathlib import Path

import numpy as np
import pytest

from legbridge.limits.cautions import CAUTIONS
from legbridge.limits.review.report import SECTION_IDS, plots, render_report, write_report
from legbridge.limits.verdict import Verdict
from legbridge.robots.errors import OutputExistsError

fixtures = __import__("importlib").util.module_from_spec(
    spec := __import__("importlib").util.spec_from_file_location("report_fixtures", Path(__file__).with_name("report_fixtures.py")))
spec.loader.exec_module(fixtures)

VERDICT_WITHIN, VERDICT_NEAR, VERDICT_EXCEEDS, VERDICT_NOT_EVALUATED = (
    v.words for v in (Verdict.WITHIN, Verdict.NEAR, Verdict.EXCEEDS, Verdict.NOT_EVALUATED))


@pytest.fixture(scope="module")
def robot():
    return fixtures.robot()


@pytest.fixture(scope="module")
def reviewed(robot, parse_html):
    review = fixtures.review_with_violation(robot)
    html = render_report(review)
    return review, review.plan, html, parse_html(html)


def test_bump_case_exceeds_the_hand_computed_peak_torque(reviewed):
    # Peak joint torque = eta N Kt I_peak (DC motor model, Hughes and Drury, Electric Motors and Drives,
    # 4th ed., ch. 3): 0.9 * 10 * 0.12 N m/A * 40 A = 43.2 N m for the example hip (values from its file).
    bump = reviewed[0].case("bump")
    seg = [s for s in bump.segments if s.severity == "exceeds" and s.limit == "peak_torque"]
    assert len(seg) == 1 and seg[0].joint == "hip"
    assert math.isclose(seg[0].allowed, 43.2, rel_tol=1e-12)
    assert math.isclose(seg[0].peak, 50.0, rel_tol=1e-9)  # sin(pi t/T) reaches 1 at the sample t = T/2
    # 50 sin(pi t / 0.4) > 43.2 for t in (0.4/pi) (asin(0.864), pi - asin(0.864)) = (0.1327 s, 0.2673 s)
    lo = 0.4 / math.pi * math.asin(43.2 / 50.0)
    assert lo <= seg[0].t_start_s < lo + 1 / 200.0
    assert 0.4 - lo - 1 / 200.0 < seg[0].t_end_s <= 0.4 - lo


def test_every_section_in_order_and_every_case(reviewed):
    review, _, _, doc = reviewed
    positions = [doc.ids.index(s) for s in SECTION_IDS]  # ValueError if a section is missing
    assert positions == sorted(positions)
    for r in review.cases:
        assert f"case-{r.case}" in doc.ids
    for j in ("hip", "knee"):
        assert f"joint-{j}" in doc.ids


def test_verdict_table_agrees_with_hand_computed_verdicts(reviewed):
    # Hand values in the module docstring: 30 N m within, 41 N m near, 50 N m exceeds.
    _, _, _, doc = reviewed
    rows = doc.tables["verdicts"]
    header, body = rows[0], rows[1:]
    col = {name: i for i, name in enumerate(header)}
    got = {r[0]: r[col["Verdict"]] for r in body}
    assert got == {"nominal": VERDICT_WITHIN, "step": VERDICT_NEAR, "bump": VERDICT_EXCEEDS}
    bump = next(r for r in body if r[0] == "bump")
    assert bump[col["Worst limit"]] == "peak torque" and bump[col["Joint"]] == "hip"
    assert bump[col["Utilisation [%]"]] == f"{100 * 50 / 43.2:.1f} %"  # 115.7 %
    assert reviewed[0].exit_code == 1


def test_ranking_lists_worst_case_first(reviewed):
    _, _, html, _ = reviewed
    _, _, _, doc = reviewed
    items = [li.split(":")[0] for li in doc.lists["ranking"]]
    assert items == ["bump", "step", "nominal"]  # 115.7 % > 94.9 % > 69.4 %


def test_what_set_the_allowed_value_is_explained_once_per_joint_and_limit(reviewed):
    _, _, _, doc = reviewed
    rows = doc.tables["bounds"]
    col = {name: i for i, name in enumerate(rows[0])}
    torque = [r for r in rows[1:] if r[col["Limit"]] == "peak torque"]
    assert len(torque) == 1 and torque[0][col["Joint"]] == "hip"
    # the hump peaks at standstill, motoring: 0.9 x 10 x 0.12 N m/A x 40 A = 43.2 N m (Hughes and Drury, ch. 3)
    assert "43.2 N m = 10 x 0.12 N m/A x 40 A x efficiency 0.9 (the motor drives the joint)" in torque[0][col["What set the allowed value"]]


def test_known_violation_is_in_the_segments_table(reviewed):
    _, _, _, doc = reviewed
    rows = doc.tables["segments"]
    col = {name: i for i, name in enumerate(rows[0])}
    exceeding = [r for r in rows[1:] if r[col["Severity"]] == VERDICT_EXCEEDS]
    torque = [r for r in exceeding if r[col["Limit"]] == "peak torque"]
    assert len(torque) == 1
    r = torque[0]
    # the only other exceeding segment: the hip's drive current over the same samples (I = tau / (eta N Kt)
    # at standstill reaches 40 A exactly where tau reaches 43.2 N m)
    others = [x for x in exceeding if x is not r]
    assert [(x[col["Joint"]], x[col["Limit"]], x[col["Start [s]"]], x[col["End [s]"]]) for x in others] == [
        ("hip", "peak current", r[col["Start [s]"]], r[col["End [s]"]])]
    assert float(others[0][col["Peak"]]) == pytest.approx(50.0 / (0.9 * 10 * 0.12), rel=1e-3)  # 4 digits shown
    assert (r[col["Case"]], r[col["Joint"]], r[col["Limit"]], r[col["Unit"]]) == ("bump", "hip", "peak torque", "N m")
    assert float(r[col["Peak"]]) == pytest.approx(50.0, rel=1e-3)
    assert float(r[col["Allowed"]]) == pytest.approx(43.2, rel=1e-3)
    # The hump 50 sin(pi t / 0.4 s) crosses 43.2 N m at t = (0.4 / pi) asin(0.864) = 0.1327 s; first sample
    # at 200 Hz at or after it: 0.135 s.
    assert float(r[col["Start [s]"]]) == pytest.approx(0.135, abs=1e-9)
    # near segments on both sides (38.88 .. 43.2 N m) also listed for 'step' and 'bump'
    assert {x[col["Case"]] for x in rows[1:] if x[col["Severity"]] == VERDICT_NEAR} == {"step", "bump"}


def test_joint_figure_shades_the_violation_in_the_torque_row(robot, reviewed):
    reviews = reviewed[0].cases
    fig = plots.embed(plots.case_joints_figure(reviews[2], robot))
    exceeds = [s for s in fig.shaded if s.severity == "exceeds"]
    # the torque over its bound is, through Kt, the drive current over its peak: both rows, one span
    assert sorted((s.joint, s.row) for s in exceeds) == [("hip", "current"), ("hip", "torque")]
    for s in exceeds:
        assert s.t_start_s == pytest.approx(0.135) and s.t_end_s == pytest.approx(0.265)
    assert fig.png[:8] == b"\x89PNG\r\n\x1a\n"  # PNG signature (PNG specification, section 5.2)
    assert plots.case_joints_figure(reviews[0], robot).legbridge.shaded == ()  # the within case shades nothing
    # torque segments are not ground-force limits: the force figure shades nothing for them
    assert plots.case_force_figure(reviews[2], robot).legbridge.shaded == ()


def test_row_for_limit_names_of_the_checks():
    assert plots.row_for_limit("joint_range") == "angle"
    assert plots.row_for_limit("joint_speed") == "speed"
    for lim in ("peak_torque", "winding_temperature"):
        assert plots.row_for_limit(lim) == "torque"
    assert plots.row_for_limit("peak_current") == plots.row_for_limit("continuous_current") == "current"
    assert plots.row_for_limit("voltage") == "voltage"
    for lim in ("supply_power", "regen_energy", "friction_cone", "unilateral_force"):  # in no joint row
        assert plots.row_for_limit(lim) is None
    assert plots.is_ground_limit("friction_cone") and plots.is_ground_limit("unilateral_force")
    assert not plots.is_ground_limit("supply_power")


def test_caution_text_present_and_never_the_word_safe(reviewed):
    _, _, html, doc = reviewed
    text = unescape(" ".join(" ".join(doc.text).split()))
    for para in CAUTIONS:
        assert " ".join(para.split()) in text
    assert not re.search(r"\bsafe\b", text, re.I)
    alts = " ".join(i.get("alt", "") for i in doc.imgs)
    assert not re.search(r"\bsafe\b", alts, re.I)


def test_identity_and_self_contained(reviewed, robot):
    _, plan, html, doc = reviewed
    text = " ".join(doc.text)
    for needle in (plan.sha256, robot.sha256, robot.name, "200 Hz", "2 s", "10 %", "2025-01-01T12:00:00+00:00"):
        assert needle in text
    assert not any(t in ("script", "link", "iframe") for t, _ in doc.tags)
    for tag, a in doc.tags:
        for key in ("src", "href"):
            v = a.get(key, "")
            assert not v.startswith(("http:", "https:", "//")), (tag, v)
    assert doc.imgs and all(i["src"].startswith("data:image/png;base64,") for i in doc.imgs)
    png = base64.b64decode(doc.imgs[0]["src"].split(",", 1)[1])
    assert png[:8] == b"\x89PNG\r\n\x1a\n"
    # every column header of the numeric tables carries a unit
    for name in ("verdicts", "segments"):
        head = doc.tables[name][0]
        assert all("[" in h for h in head if h not in ("Case", "Verdict", "Worst limit", "Joint", "Limit", "Severity",
                                                       "Unit", "Could not be evaluated", "Peak", "Allowed", "Limits exceeded"))


def test_sign_off_has_checklist_and_blanks(reviewed):
    _, _, html, doc = reviewed
    sign = html[html.index('id="sign-off"'):]
    for item in ("emergency stop", "tether", "current limits", "reduced amplitude", "clear of the robot"):
        assert item in sign
    rows = doc.tables["signoff"]
    assert rows[0] == ["Role", "Name", "Signature", "Date"]
    assert all(r[1:] == ["", "", ""] for r in rows[1:]) and len(rows) >= 3


def test_a_case_that_could_not_be_evaluated_is_never_within(robot, parse_html):
    from legbridge.mapping.joint_trajectory import FLAG_IK_NOT_CONVERGED, FLAG_NAMES

    flags = np.zeros(81, int)
    flags[10:13] = FLAG_IK_NOT_CONVERGED  # the mapping could not solve 3 samples
    traj = fixtures.trajectory(robot, "ik-fail", 10.0, flags=flags)
    review = fixtures.review_of(robot, (traj,))
    doc = parse_html(render_report(review))
    rows = doc.tables["verdicts"]
    col = {n: i for i, n in enumerate(rows[0])}
    assert rows[1][col["Verdict"]] == VERDICT_NOT_EVALUATED
    assert f"{FLAG_NAMES[FLAG_IK_NOT_CONVERGED]} (3 samples" in rows[1][col["Could not be evaluated"]]
    assert review.exit_code == 1


def test_write_report_is_atomic_and_refuses_overwrite(tmp_path, robot):
    traj = fixtures.trajectory(robot, "nominal", 30.0, duration_s=0.1)
    review = fixtures.review_of(robot, (traj,))
    out = tmp_path / "report.html"
    write_report(review, out)
    first = out.read_bytes()
    with pytest.raises(OutputExistsError, match="report.html"):
        write_report(review, out)
    assert out.read_bytes() == first
    write_report(fixtures.review_of(robot, (traj,), created="x"), out, force=True)
    assert out.read_bytes() != first
    assert sorted(p.name for p in tmp_path.iterdir()) == ["report.html"]  # no temp file left
    assert review.exit_code == 0 and math.isfinite(review.cases[0].worst["peak_torque"])


def test_case_ids_differ_for_cases_that_differ_only_in_sign():
    # 'ground-0.06m' and 'ground+0.06m' must not share an anchor (links in the verdict table)
    from legbridge.limits.review.report.sections import slug

    names = ["ground-0.06m", "ground+0.06m", "ground_0.06m", "ground 0.06m", "nominal"]
    assert len({slug(n) for n in names}) == len(names)
    assert all(c.isalnum() or c in "-_" for n in names for c in slug(n))


def test_figures_do_not_depend_on_the_number_of_processes(reviewed):
    # The same review drawn in one process and in two forked ones: byte-identical figures (the
    # report must not depend on the number of workers; the reference is the one-process drawing).
    review = reviewed[0] if isinstance(reviewed, tuple) else reviewed
    one = plots.render_figures(review, jobs=1)
    two = plots.render_figures(review, jobs=2)
    assert list(one) == plots.figure_keys(review) and set(two) == set(one)
    for key in one:
        assert one[key].png == two[key].png, key


def test_envelope_keeps_every_peak_and_bounds_the_points():
    # A 100,000-sample sine with one sample spiking to 7 (by hand: the global maximum 7 and minimum -1
    # must survive, and every bucket of 100 samples keeps its own minimum and maximum).
    t = np.linspace(0.0, 10.0, 100_000)
    y = np.sin(2 * np.pi * 3 * t)
    y[43_210] = 7.0
    tt, yy = plots.envelope(t, y, max_points=2000)
    assert yy.size <= 2000 and np.all(np.diff(tt) > 0)
    assert yy.max() == 7.0 and tt[np.argmax(yy)] == t[43_210]
    assert yy.min() == pytest.approx(y.min())
    for b in (0, 431, 999):
        sl = slice(100 * b, 100 * (b + 1))
        assert y[sl].max() in yy and y[sl].min() in yy
    short_t, short_y = plots.envelope(t[:500], y[:500])
    assert np.array_equal(short_y, y[:500])


def test_the_answer_comes_first_and_the_sign_off_carries_what_was_signed(reviewed):
    # The report opens with one line per case, worst first, before the caution and the identity
    # table; the sign-off section repeats the plan and robot hashes, the version and every verdict,
    # so a detached sign-off page still says what was signed (the reference: the review itself).
    review, _, html, _ = reviewed
    i_answer, i_identity = html.index('id="answer"'), html.index('id="caution-and-identity"')
    assert i_answer < i_identity
    answer = html[i_answer:i_identity]
    for c in review.ranked:
        assert escape_text(c.case) in answer and escape_text(c.verdict.words) in answer
    order = [answer.index(escape_text(c.case) + ":") for c in review.ranked]
    assert order == sorted(order)  # worst first
    signoff = html[html.index('id="sign-off"'):]
    assert review.plan.sha256 in signoff and review.robot.sha256 in signoff
    for c in review.cases:
        assert escape_text(c.verdict.words) in signoff


def escape_text(s: str) -> str:
    from html import escape

    return escape(s)


def test_print_rules_keep_tables_whole_and_headings_with_what_follows(reviewed):
    # CSS Paged Media / CSS Fragmentation (W3C): break-after: avoid keeps a heading with what follows,
    # thead as table-header-group repeats on each printed page; a sideways-scrolling table is for
    # screens only (printed, it would be cut at the page edge)
    _, _, html, _ = reviewed
    css = html[html.index("<style>"):html.index("</style>")]
    printed = css[css.index("@media print"):]
    assert "break-after: avoid" in printed and "table-header-group" in printed
    assert "figure" in printed.split("break-inside")[0].rsplit("}", 1)[-1]
    assert "@media screen and (max-width: 900px)" in css and "@media (max-width" not in css
    # the first case does not start a page of its own below the section heading (no stranded heading)
    assert "article.case + article.case" in printed
