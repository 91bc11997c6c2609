"""The one-step review: read -> translate -> check -> write results, joint targets and the HTML report.

Every input is read and every case checked before anything is written; outputs are produced in a
staging folder inside ``out_dir`` and moved into place with os.replace, so a failure leaves the
folder as it was. Previous outputs are not overwritten unless ``force`` is given.
"""

from __future__ import annotations

import json
import os
import shutil
import tempfile
import time
from dataclasses import dataclass, field
from pathlib import Path
from typing import Callable

from legbridge.limits.results import CheckSettings
from legbridge.robots.errors import LegbridgeError, OutputExistsError

REVIEW_JSON = "review.json"
REPORT_HTML = "report.html"
TARGETS_FILE = "targets.csv"
DEMO_PLAN = "demo-plan.json"
DEMO_ROBOT = "lab-biped-leg.toml"

Progress = Callable[[str], None]


class OutputFolderError(LegbridgeError, NotADirectoryError):
    """The output path exists and is not a folder."""


@dataclass(frozen=True, eq=False)
class ReviewOutcome:
    """What run_review did.

    reviews: one CaseReview per case, in plan order; paths: output kind ('review', 'targets',
    'report', 'plan' for the demo) -> file written; exit_code: 0 every case within the modelled
    limits, 1 a limit is exceeded or something could not be evaluated; elapsed_s: wall time [s]
    """

    reviews: tuple
    paths: dict
    exit_code: int
    plan: object
    robot: object
    settings: CheckSettings
    elapsed_s: float = 0.0
    timings_s: dict = field(default_factory=dict)
    sweep: object = None  # limits.sweep.SweepResult when the review ran a ground-height sweep


def output_names() -> dict[str, str]:
    """Output kind -> file name inside the output folder."""
    return {"review": REVIEW_JSON, "targets": TARGETS_FILE, "report": REPORT_HTML}


def check_output_dir(out_dir, names, *, force: bool) -> Path:
    """Refuse an output folder that is a file, or that holds any of ``names`` (unless ``force``)."""
    out = Path(out_dir)
    if out.exists() and not out.is_dir():
        raise OutputFolderError(path=str(out), expected="a folder for the review outputs", found="a file")
    if out.is_dir() and not force:
        present = [n for n in names if (out / n).exists()]
        if present:
            raise OutputExistsError("previous review outputs", path=str(out), expected="a folder without them",
                                    found=", ".join(present), hint="Pass --force (force=True) to overwrite them")
    return out


def _load_robot(robot):
    if isinstance(robot, (str, os.PathLike)):
        from legbridge.robots import load_robot

        return load_robot(robot)
    return robot


def _load_plan(plan, robot):
    if isinstance(plan, (str, os.PathLike)):
        from legbridge.mapping.readers import read_plan

        return read_plan(plan, robot=robot)
    return plan


def _translate(plan, robot, settings):
    from legbridge.mapping.translate import translate_plan

    return translate_plan(plan, robot, rate_hz=settings.rate_hz)


def _check(trajs, robot, settings):
    from legbridge.limits.check import check_plan

    return tuple(check_plan(tuple(trajs), robot, settings))


def _review_json(reviews, plan, robot, settings) -> str:
    from legbridge.limits.review_json import review_to_json

    return json.dumps(review_to_json(reviews, plan, robot, settings), indent=2, allow_nan=False) + "\n"


def _write_targets(trajs, path: Path, plan, robot, settings) -> None:
    from legbridge.mapping.targets_export import write_targets

    write_targets(trajs, path, plan=plan, robot=robot, rate_hz=settings.rate_hz, force=True)


def _publish(staging: Path, out: Path) -> dict[str, Path]:
    """Move every file of ``staging`` into ``out`` (os.replace: each one appears whole or not at all)."""
    moved = {}
    for entry in sorted(staging.iterdir()):
        dest = out / entry.name
        if entry.is_dir() and dest.is_dir():
            shutil.rmtree(dest)
        os.replace(entry, dest)
        moved[entry.name] = dest
    return moved


SWEEP_AUTO = "auto"
SWEEP_CSV = "sweep.csv"
SWEEP_JSON = "sweep.json"


def _sweep(plan, robot, settings, sweep, jobs, say):
    """The ground-height sweep the review asked for, or None. ``sweep``: None (none), SWEEP_AUTO (the
    default grid when the plan carries an open-loop policy) or a sequence of offsets [m] (required:
    a plan without a policy is then refused)."""
    if sweep is None or (sweep == SWEEP_AUTO and plan.policy is None):
        return None
    from legbridge.limits.sweep_runner import run_sweep

    offsets = None if sweep == SWEEP_AUTO else tuple(sweep)
    say("sweeping the ground height (re-simulating the plan's open-loop policy)")
    (result,) = run_sweep([plan], [robot.source], offsets, settings=settings, jobs=jobs)
    return result


def run_review(plan, robot, settings: CheckSettings, out_dir, *, force: bool = False,
               progress: Progress | None = None, created: str | None = None,
               extra_names: tuple[str, ...] = (), sweep=SWEEP_AUTO, jobs: int | None = None) -> ReviewOutcome:
    """Review ``plan`` (Plan or plan file path) on ``robot`` (Robot or robot file path) into ``out_dir``.

    Writes review.json (review_to_json), the joint targets (write_targets) and report.html; returns a
    ReviewOutcome. Raises a LegbridgeError subclass on bad input (nothing written) and
    OutputExistsError when ``out_dir`` holds previous outputs and ``force`` is False.
    extra_names: further file names in ``out_dir`` that count as previous outputs (the demo plan).
    sweep: SWEEP_AUTO (default: when the plan carries an open-loop policy, re-simulate it on the
    default ground-height grid and add the sweep to the report, sweep.csv and sweep.json), None (no
    sweep) or the offsets [m] to sweep; jobs: worker processes for the sweep (default: all cores).
    The sweep informs; the exit code speaks of the plan's own cases.
    """
    say = progress or (lambda _msg: None)
    t0 = time.perf_counter()
    timings: dict[str, float] = {}
    names = output_names()
    out = check_output_dir(out_dir, tuple(names.values()) + (SWEEP_CSV, SWEEP_JSON) + tuple(extra_names), force=force)

    def lap(key, t):
        timings[key] = time.perf_counter() - t
        return time.perf_counter()

    t = time.perf_counter()
    say("reading the robot")
    robot = _load_robot(robot)
    say("reading the plan")
    plan = _load_plan(plan, robot)
    if sweep is not None and sweep != SWEEP_AUTO:  # an explicit sweep needs a policy: refuse before any work
        from legbridge.limits.sweep import setup_from_plan

        setup_from_plan(plan)
    t = lap("read_s", t)
    say(f"translating {len(plan.cases)} case(s) at {settings.rate_hz:g} Hz")
    trajs = _translate(plan, robot, settings)
    t = lap("translate_s", t)
    reviews = []
    for traj in trajs:
        say(f"checking case {traj.case}")
        reviews.extend(_check((traj,), robot, settings))
    reviews = tuple(reviews)
    t = lap("check_s", t)
    swept = _sweep(plan, robot, settings, sweep, jobs, say)
    t = lap("sweep_s", t)

    from legbridge.limits.report import exit_code, render_report

    say("writing the review, the targets and the report")
    json_text = _review_json(reviews, plan, robot, settings)
    html_text = render_report(reviews, plan, robot, settings, created=created, sweep=swept)
    t = lap("render_s", t)

    created_dir = not out.exists()
    out.mkdir(parents=True, exist_ok=True)
    staging = Path(tempfile.mkdtemp(prefix=".legbridge-staging-", dir=str(out)))
    try:
        (staging / names["review"]).write_text(json_text, encoding="utf-8")
        (staging / names["report"]).write_text(html_text, encoding="utf-8")
        _write_targets(trajs, staging / names["targets"], plan, robot, settings)
        if swept is not None:
            from legbridge.limits.sweep_table import to_csv_text, to_json_doc

            (staging / SWEEP_CSV).write_text(to_csv_text([swept]), encoding="utf-8")
            from legbridge.robots.version import tool_version

            doc = to_json_doc([swept], tool_version())
            (staging / SWEEP_JSON).write_text(json.dumps(doc, indent=2, allow_nan=False) + "\n", encoding="utf-8")
        moved = _publish(staging, out)
    except BaseException:
        shutil.rmtree(staging, ignore_errors=True)
        if created_dir and not any(out.iterdir()):
            out.rmdir()
        raise
    shutil.rmtree(staging, ignore_errors=True)
    lap("write_s", t)
    paths = {kind: moved.get(name, out / name) for kind, name in names.items()}
    if swept is not None:
        paths.update(sweep_csv=out / SWEEP_CSV, sweep_json=out / SWEEP_JSON)
    return ReviewOutcome(reviews, paths, exit_code(reviews), plan, robot, settings,
                         time.perf_counter() - t0, timings, swept)


def run_demo_review(settings: CheckSettings, out_dir, *, force: bool = False, progress: Progress | None = None,
                    created: str | None = None, sweep=SWEEP_AUTO, jobs: int | None = None) -> ReviewOutcome:
    """Review the in-memory demo plan (invented data) on the bundled demo leg.

    The demo plan is first written to ``out_dir/demo-plan.json`` so the review records a real file
    and its SHA-256; it is removed again if the review fails.
    """
    from legbridge.mapping.plan_writer import write_plan
    from legbridge.mapping.slip.demo import demo_plan
    from legbridge.robots.library import library_path

    out = check_output_dir(out_dir, tuple(output_names().values()) + (DEMO_PLAN,), force=force)
    say = progress or (lambda _msg: None)
    say("building the demo plan (invented data)")
    plan = demo_plan()
    created_dir = not out.exists()
    out.mkdir(parents=True, exist_ok=True)
    plan_path = write_plan(plan, out / DEMO_PLAN, force=force)
    try:
        outcome = run_review(plan_path, library_path(DEMO_ROBOT), settings, out, force=True,
                             progress=progress, created=created, sweep=sweep, jobs=jobs)
    except BaseException:
        plan_path.unlink(missing_ok=True)
        if created_dir and not any(out.iterdir()):
            out.rmdir()
        raise
    paths = dict(outcome.paths, plan=Path(plan_path))
    return ReviewOutcome(outcome.reviews, paths, outcome.exit_code, outcome.plan, outcome.robot, settings,
                         outcome.elapsed_s, outcome.timings_s, outcome.sweep)
