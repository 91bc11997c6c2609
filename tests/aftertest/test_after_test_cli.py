"""`legbridge after-test` end to end on the shipped demo log, and its refusals.

References: the demo log was made (examples/make_demo_log.py) with a torque constant 0.88 x the file's,
knee gearbox efficiency 0.85 instead of 0.9 and winding thermal resistance 1.6 x the file's: those are
the values to find. Re-reviewed with them, the nominal case's knee peak current, I = tau / (eta N Kt)
(DC motor model, Hughes and Drury, Electric Motors and Drives, ch. 3), grows by 0.9 / (0.88 x 0.85)
= 1.203 for the same torque.
"""

from __future__ import annotations

import json
import shutil
from pathlib import Path

import pytest

from legbridge.limits.cli import main
from legbridge.robots import load_robot

ROOT = Path(__file__).resolve().parents[2]
PLAN = ROOT / "examples" / "demo-run-plan.json"
LOG = ROOT / "examples" / "demo-log.csv"
MAP = ROOT / "examples" / "demo-log-map.toml"


@pytest.fixture(scope="module")
def review_dir(tmp_path_factory):
    d = tmp_path_factory.mktemp("review")
    shutil.copy(PLAN, d / "plan.json")
    assert main(["check", str(d / "plan.json"), "--robot", "lab-biped", "-o", str(d / "review.json"), "--quiet"]) == 1
    return d


@pytest.fixture(scope="module")
def after(review_dir, tmp_path_factory):
    out = tmp_path_factory.mktemp("after") / "out"
    code = main(["after-test", str(review_dir), str(LOG), "--log-map", str(MAP), "-o", str(out), "--quiet"])
    return code, out


def test_the_demo_log_finds_the_planted_errors(after):
    code, out = after
    assert code == 1  # the hardware's knee current went over the drive's peak: a measured exceedance
    doc = json.loads((out / "after-test.json").read_text())
    assert doc["schema"] == "legbridge.after-test/1" and doc["verdict"] == "exceeds"
    assert doc["alignment"]["offset_s"] == pytest.approx(1.5 + 0.025, abs=0.005)  # standstill + lag (planted)
    found = {(e["joint"], e["parameter"]): e for e in doc["identified"]}
    for joint in ("left_hip", "left_knee", "right_hip", "right_knee"):
        kt = found[(joint, "torque_constant_nm_per_a")]
        assert kt["value"] == pytest.approx(0.88 * 0.20, rel=0.005) and kt["differs_from_file"]
        r = found[(joint, "winding_resistance_k_per_w")]
        assert r["relative_change"] == pytest.approx(0.6, abs=0.02) and r["differs_from_file"]
    for joint in ("left_knee", "right_knee"):
        eta = found[(joint, "gearbox_efficiency")]
        assert eta["value"] == pytest.approx(0.85, abs=0.003) and eta["differs_from_file"]
    for joint in ("left_hip", "right_hip"):  # as the file: not rewritten
        assert not found[(joint, "gearbox_efficiency")]["differs_from_file"]
    assert doc["cautions"]  # the report's text is checked for the caution and the word 'safe' below


def test_the_corrected_file_is_written_beside_and_changes_the_verdict_as_predicted(after, review_dir, tmp_path):
    code, out = after
    corrected = out / "lab-biped-identified.toml"
    robot = load_robot(corrected)
    knee = robot.joint("left_knee").actuator
    assert knee.torque_constant_nm_per_a == pytest.approx(0.176, rel=0.005)
    assert knee.gearbox_efficiency == pytest.approx(0.85, abs=0.003)
    assert knee.thermal.winding_resistance_k_per_w == pytest.approx(0.96, rel=0.02)
    assert "demo-log.csv" in corrected.read_text().splitlines()[0]
    before = json.loads((review_dir / "review.json").read_text())
    assert main(["check", str(review_dir / "plan.json"), "--robot", str(corrected), "-o", str(tmp_path / "again.json"),
                 "--quiet"]) == 1
    again = json.loads((tmp_path / "again.json").read_text())

    def knee_current(doc):
        c = next(c for c in doc["cases"] if c["name"] == "nominal")
        return max(w["utilisation"] for w in c["worst_by_joint"] if w["limit"] == "peak_current" and "knee" in w["joint"])

    ratio = knee_current(again) / knee_current(before)
    assert ratio == pytest.approx(0.9 / (0.88 * 0.85), rel=0.01)
    nominal = {c["name"]: c["verdict"] for c in again["cases"]}["nominal"]
    assert nominal == "exceeds"  # within the modelled limits before: the planted errors take it over


def _refused(argv, capsys, out: Path):
    code = main(argv)
    err = capsys.readouterr().err.strip()
    assert code == 2, err
    assert len(err.splitlines()) == 1 and "Traceback" not in err
    assert not out.exists()
    return err


def test_refusals_name_what_is_wrong_and_write_nothing(review_dir, tmp_path, capsys):
    out = tmp_path / "out"
    err = _refused(["after-test", str(tmp_path / "nope"), str(LOG), "--log-map", str(MAP), "-o", str(out)], capsys, out)
    assert "review.json" in err
    # a changed plan is not what was reviewed
    changed = tmp_path / "changed"
    changed.mkdir()
    doc = json.loads((review_dir / "review.json").read_text())
    doc["plan_path"] = str(changed / "plan.json")
    (changed / "review.json").write_text(json.dumps(doc))
    (changed / "plan.json").write_text((review_dir / "plan.json").read_text().replace("nominal", "nominal-x", 1))
    err = _refused(["after-test", str(changed), str(LOG), "--log-map", str(MAP), "-o", str(out)], capsys, out)
    assert "SHA-256" in err
    # a log of another motion: no credible alignment
    other = tmp_path / "other.csv"
    text = LOG.read_text().splitlines()
    head = [ln for ln in text if ln.startswith("#")]
    rows = [ln for ln in text if not ln.startswith("#")]
    cols = rows[0].split(",")
    import numpy as np

    data = np.genfromtxt(rows[1:], delimiter=",")
    rng = np.random.default_rng(7)
    for k, c in enumerate(cols):
        if c.endswith("_q_deg"):
            data[:, k] = np.cumsum(rng.normal(0.0, 0.3, data.shape[0]))  # a random walk, not the plan
    np.savetxt(other, data, delimiter=",", header="\n".join(h.lstrip("# ") for h in head) + "\n" + ",".join(cols),
               comments="", fmt="%.6g")
    lines = other.read_text().splitlines()
    other.write_text("\n".join(["# " + ln for ln in lines[:len(head)]] + lines[len(head):]) + "\n")
    err = _refused(["after-test", str(review_dir), str(other), "--log-map", str(MAP), "-o", str(out)], capsys, out)
    assert "align" in err.lower()
    # no such case
    err = _refused(["after-test", str(review_dir), str(LOG), "--log-map", str(MAP), "--case", "flat", "-o", str(out)],
                   capsys, out)
    assert "--case" in err and "nominal" in err


@pytest.fixture(scope="module")
def one_leg_review(tmp_path_factory):
    """A review of the hopping plan on the one-leg robot, whose joints (hip, knee) and leg ('leg') are
    those the log corpus is written for."""
    d = tmp_path_factory.mktemp("one-leg")
    shutil.copy(ROOT / "examples" / "demo-hop-plan.json", d / "plan.json")
    main(["check", str(d / "plan.json"), "--robot", "lab-biped-leg", "--rate", "200", "-o", str(d / "review.json"),
          "--quiet"])
    assert (d / "review.json").is_file()
    return d


def test_every_bad_log_of_the_corpus_exits_2_through_the_command(one_leg_review, tmp_path, capsys):
    import sys

    sys.path.insert(0, str(Path(__file__).parent))
    import log_corpus

    for k, case in enumerate(log_corpus.cases()):
        folder = tmp_path / f"c{k}"
        folder.mkdir()
        for name, data in case.files.items():
            if data is None:
                (folder / name).mkdir()
            else:
                (folder / name).write_bytes(data)
        before = {p.name: (p.read_bytes() if p.is_file() else None) for p in folder.iterdir()}
        out = folder / "out"
        argv = ["after-test", str(one_leg_review), str(folder / case.log), "-o", str(out), "--quiet"]
        if case.mapping:
            argv += ["--log-map", str(folder / case.mapping)]
        code = main(argv)
        err = capsys.readouterr().err.strip()
        assert code == 2, (case.name, err)
        assert len(err.splitlines()) == 1 and "Traceback" not in err, (case.name, err)
        assert (case.log if case.blame == "log" else case.mapping) in err, (case.name, err)
        assert not out.exists(), case.name
        assert {p.name: (p.read_bytes() if p.is_file() else None) for p in folder.iterdir() if p != out} == before


def test_the_post_test_report_opens_with_the_answer_and_carries_the_caution_and_hashes(after):
    import re
    from html import unescape

    from legbridge.limits.cautions import CAUTIONS

    _, out = after
    html = (out / "after-test.html").read_text()
    doc = json.loads((out / "after-test.json").read_text())
    ids = re.findall(r'<section id="([^"]+)"', html)
    assert ids == ["answer", "caution-and-identity", "measured", "tracking", "identified"]
    text = unescape(re.sub(r"<[^>]+>", " ", html))
    text = " ".join(text.split())
    for para in CAUTIONS:
        assert " ".join(para.split()) in text
    for sha in (doc["log"]["sha256"], doc["plan_sha256"], doc["robot_sha256"], doc["review_sha256"]):
        assert sha in html
    assert not re.search(r"\bsafe\b", text, re.I)
    assert html.count('src="data:image/png;base64,') == 2
    assert not re.search(r'(src|href)="(https?:|//)', html)  # self-contained: nothing fetched from a network
    assert "Measured: exceeds a modelled limit" in text


def test_a_moved_installation_finds_the_bundled_robot_by_its_hash(review_dir, tmp_path):
    from legbridge.limits.aftertest.run import read_review_folder
    from legbridge.robots.errors import LegbridgeError
    from legbridge.robots.library import resolve_robot

    doc = json.loads((review_dir / "review.json").read_text())
    doc["robot_path"] = str(tmp_path / "gone" / "lab-biped.toml")  # where an uninstalled copy used to be
    doc["plan_path"] = str(review_dir / "plan.json")
    (tmp_path / "review.json").write_text(json.dumps(doc))
    assert Path(read_review_folder(tmp_path).robot_path) == Path(resolve_robot("lab-biped"))
    with pytest.raises(LegbridgeError, match="robot_sha256.*lab-biped-leg"):
        read_review_folder(tmp_path, robot="lab-biped-leg")  # another robot: its hash differs
