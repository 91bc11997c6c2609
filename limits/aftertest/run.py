"""``legbridge after-test``: a review folder and a hardware log in; the comparison (JSON, HTML) and a
corrected robot file out.

The review folder's review.json names the plan and the robot file that were reviewed with their
SHA-256; both are read again and must still hash the same (a changed file is refused: the comparison
would be against something that was not reviewed). The plan is looked for where the review found it,
then in the review folder (the demo review copies its plan there).
"""

from __future__ import annotations

import hashlib
import json
import os
from dataclasses import dataclass, fields, replace
from pathlib import Path

from legbridge.robots.errors import Described, InputFileNotFound, LegbridgeError, UsageError

OUTPUT_NAMES = ("after-test.json", "after-test.html")

# identified estimates written into the corrected robot file (only those that differ from the file's
# value: document.differs; a value the log cannot tell from the file's is left as it is)
DRIVE_KEYS = {"torque_constant_nm_per_a": "torque_constant_nm_per_a", "gearbox_efficiency": "gearbox_efficiency"}
THERMAL_KEYS = {"winding_resistance_k_per_w": "thermal_resistance_k_per_w",
                "winding_time_constant_s": "thermal_time_constant_s",
                "housing_resistance_k_per_w": "housing_thermal_resistance_k_per_w",
                "housing_time_constant_s": "housing_thermal_time_constant_s"}


@dataclass(frozen=True)
class ReviewedInputs:
    """What a review folder says was reviewed, found again and checked."""

    review_path: str
    review_sha256: str
    plan_path: str
    plan_sha256: str
    robot_path: str
    robot_sha256: str
    settings: object
    cases: tuple[str, ...]


def _sha256(path: Path) -> str:
    return hashlib.sha256(path.read_bytes()).hexdigest()


def read_review_folder(folder, robot=None) -> ReviewedInputs:
    """The plan, robot and settings a review folder's review.json records, each checked by its hash.
    ``robot``: a robot file or bundled name to use instead of the recorded path (its hash must match)."""
    from legbridge.limits.checks.results import CheckSettings
    from legbridge.robots.library import resolve_robot

    folder = Path(folder)
    doc_path = folder / "review.json" if folder.is_dir() else folder
    if not doc_path.is_file():
        raise InputFileNotFound("no review found", path=str(doc_path), expected="a review folder holding review.json "
                                "(legbridge review -o DIR)", found=Described("nothing"))
    data = doc_path.read_bytes()
    try:
        doc = json.loads(data)
    except (ValueError, UnicodeDecodeError) as exc:
        raise UsageError("not a review document", path=str(doc_path), expected="JSON written by legbridge review",
                         found=Described(str(exc).split("\n")[0])) from None
    if not isinstance(doc, dict) or not str(doc.get("schema", "")).startswith("legbridge.review"):
        raise UsageError("not a review document", path=str(doc_path), key="schema", expected="'legbridge.review/...'",
                         found=doc.get("schema") if isinstance(doc, dict) else Described(type(doc).__name__))
    for key in ("plan_path", "plan_sha256", "robot", "robot_sha256", "settings", "cases"):
        if key not in doc:
            raise UsageError("incomplete review document", path=str(doc_path), key=key, expected="present",
                             found=Described("nothing"))
    base = doc_path.parent
    recorded = Path(str(doc["plan_path"]))
    candidates = [recorded, base / recorded.name]
    plan = next((p for p in candidates if p.is_file() and _sha256(p) == doc["plan_sha256"]), None)
    if plan is None:
        found = [str(p) for p in candidates if p.is_file()]
        raise InputFileNotFound("the reviewed plan is not found unchanged", path=str(doc_path), key="plan_path",
                                expected=f"a file with SHA-256 {doc['plan_sha256'][:12]}... at {recorded} or in the review folder",
                                found=Described(", ".join(found) + " (other contents)" if found else "nothing"))
    # the robot file: the one named on the command line, else where the review found it, else the
    # bundled robot of that name (an installation moved); it must hash as reviewed
    sources = [robot] if robot else [doc.get("robot_path"), doc["robot"]]
    tried = []
    robot_path = None
    for src in (x for x in sources if x):
        try:
            p = Path(resolve_robot(str(src)))
        except LegbridgeError:
            continue
        tried.append(p)
        if p.is_file() and _sha256(p) == doc["robot_sha256"]:
            robot_path = p
            break
    if robot_path is None:
        shown = ", ".join(f"{p} ({_sha256(p)[:12]}...)" if p.is_file() else f"{p} (no file)" for p in tried) or "nothing"
        raise UsageError("the reviewed robot file is not found unchanged", path=str(doc_path), key="robot_sha256",
                         expected=f"a robot file with SHA-256 {str(doc['robot_sha256'])[:12]}...", found=Described(shown),
                         hint="give it with --robot, or review the plan again with the robot file you have")
    allowed = {f.name for f in fields(CheckSettings)}
    settings = CheckSettings(**{k: v for k, v in doc["settings"].items() if k in allowed})
    cases = tuple(c.get("name", "") for c in doc["cases"] if isinstance(c, dict))
    return ReviewedInputs(str(doc_path), hashlib.sha256(data).hexdigest(), str(plan), doc["plan_sha256"], str(robot_path),
                          doc["robot_sha256"], settings, cases)


def choose_case(inputs: ReviewedInputs, case: str | None) -> str:
    """The case the log is compared with: the one named, else 'nominal' when the review has it."""
    if case is not None:
        if case not in inputs.cases:
            raise UsageError("no such case in the review", key="--case", expected=f"one of {list(inputs.cases)}", found=case)
        return case
    if "nominal" in inputs.cases:
        return "nominal"
    if len(inputs.cases) == 1:
        return inputs.cases[0]
    raise UsageError("which case did the test run?", key="--case", expected=f"one of {list(inputs.cases)}",
                     found=Described("no --case"))


def changes_from(result) -> list:
    """ParameterChanges for the corrected robot file: every identified estimate that differs from the
    file's value (document.differs: outside the 95 % interval and by MIN_RELATIVE_CHANGE or more)."""
    from .document import differs
    from .robot_file import ParameterChange

    out = []
    for joint, fit in result.drive_fits.items():
        for attr, key in DRIVE_KEYS.items():
            e = getattr(fit, attr)
            if e is not None and differs(e):
                out.append(ParameterChange(joint, key, e.value, e.ci_low, e.ci_high, e.file_value, e.unit, e.method))
    for joint, fit in result.thermal_fits.items():
        for attr, key in THERMAL_KEYS.items():
            e = getattr(fit, attr)
            if e is not None and differs(e):
                out.append(ParameterChange(joint, key, e.value, e.ci_low, e.ci_high, e.file_value, e.unit, e.method))
    return out


@dataclass(frozen=True)
class AfterTestRun:
    """What ``run_after_test`` wrote, and the result."""

    result: object
    json_path: Path
    report_path: Path
    corrected: object | None     # robot_file.CorrectedRobot, or None when nothing was changed


def corrected_name(robot_path: str) -> str:
    """File name of the corrected robot file: ``<robot file stem>-identified.toml``."""
    stem = Path(robot_path).stem
    return f"{stem}-identified.toml"


def run_after_test(review_folder, log_path, out_dir, *, mapping=None, case=None, robot=None, force=False,
                   say=lambda msg: None) -> AfterTestRun:
    """Read the review and the log, compare, identify, and write after-test.json, after-test.html and
    the corrected robot file into ``out_dir`` (nothing is written when an input is refused)."""
    from legbridge.limits.checks.case import check_case
    from legbridge.mapping.pipeline import prepare
    from legbridge.robots import load_robot
    from legbridge.robots.files import check_output_folder, write_json
    from legbridge.robots.version import tool_version

    from .compare import compare_log
    from .document import after_test_to_json
    from .log_reader import read_log
    from .report import write_report
    from .robot_file import write_corrected_robot

    say("reading the review")
    inputs = read_review_folder(review_folder, robot)
    name = choose_case(inputs, case)
    names = OUTPUT_NAMES + (corrected_name(inputs.robot_path),)
    ins = [inputs.review_path, inputs.plan_path, inputs.robot_path, log_path] + ([mapping] if mapping else [])
    out = check_output_folder(out_dir, names, inputs=ins, force=force)
    say("reading the log")  # first: a bad log is refused before the (slower) translation
    robot_ = load_robot(inputs.robot_path)
    log = read_log(log_path, mapping, joints=tuple(robot_.limb_joint_names), legs=tuple(robot_.legs) or ("leg",))
    say(f"translating and checking case {name} at {inputs.settings.rate_hz:g} Hz, as reviewed")
    prepared = prepare(inputs.plan_path, robot_, rate_hz=inputs.settings.rate_hz, cases=[name],
                       gait=inputs.settings.gait)
    traj = prepared.trajectories[0]
    reviewed = check_case(traj, prepared.robot, replace(inputs.settings, run_qps=False))
    result = compare_log(log, reviewed, prepared.robot, inputs.settings, review_path=inputs.review_path,
                         review_sha256=inputs.review_sha256, plan_path=inputs.plan_path, plan_sha256=inputs.plan_sha256,
                         say=say)
    changes = changes_from(result)
    out.mkdir(parents=True, exist_ok=True)
    corrected = None
    if changes:
        say("writing the corrected robot file")
        corrected = write_corrected_robot(inputs.robot_path, changes, log_path=str(log_path), log_sha256=log.sha256,
                                          out_path=out / corrected_name(inputs.robot_path), force=force,
                                          tool_version=tool_version())
    say("writing the comparison")
    json_path = write_json(after_test_to_json(result, corrected), out / OUTPUT_NAMES[0], force=force)
    report_path = write_report(result, corrected, out / OUTPUT_NAMES[1], force=force)
    return AfterTestRun(result, json_path, report_path, corrected)


def rereview_command(run: AfterTestRun, inputs_plan: str) -> str:
    """The one command that reviews the plan again against the corrected robot file."""
    if run.corrected is None:
        return ""
    return (f"legbridge review {_quote(inputs_plan)} --robot {_quote(str(run.corrected.path))} "
            f"-o {_quote(os.path.join(os.path.dirname(str(run.json_path)) or '.', 're-review'))}")


def _quote(s: str) -> str:
    import shlex

    return shlex.quote(s)
