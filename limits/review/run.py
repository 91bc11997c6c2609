"""The one-step review written to a folder: review.json, the joint targets, report.html and, when the
review swept the ground height, sweep.csv and sweep.json.

    run_review(plan, robot, settings, out_dir, *, force=False, ...) -> ReviewRun
    run_demo_review(settings, out_dir, *, force=False, ...) -> ReviewRun

Every input is read and every case checked before anything is written; the output folder is checked
first (a file, previous outputs without ``force``, an output that would replace an input: refused
before any work). Outputs are produced in a staging folder inside ``out_dir`` and moved into place
with os.replace, so a failure leaves the folder as it was.
"""

from __future__ import annotations
from legbridge.robots.errors import Described

import contextlib
import os
import shutil
import tempfile
import time
from dataclasses import dataclass, field
from pathlib import Path

from legbridge.limits.checks.results import CheckSettings
from legbridge.robots.files import check_output_folder, json_text

from .review import SWEEP_AUTO, Progress, Review, build_review

REVIEW_JSON = "review.json"
REPORT_HTML = "report.html"
TARGETS_FILE = "targets.csv"
SWEEP_CSV = "sweep.csv"
SWEEP_JSON = "sweep.json"
DEMO_PLAN = "demo-plan.json"
DEMO_ROBOT = "lab-biped"

OUTPUT_NAMES = {"review": REVIEW_JSON, "targets": TARGETS_FILE, "report": REPORT_HTML,
                "sweep_csv": SWEEP_CSV, "sweep_json": SWEEP_JSON}


@dataclass(frozen=True, eq=False)
class ReviewRun:
    """A review and where it was written: paths maps output kind ('review', 'targets', 'report',
    'sweep_csv', 'sweep_json', 'plan' for the demo) to the file; elapsed_s: wall time [s]."""

    review: Review
    paths: dict = field(default_factory=dict)
    elapsed_s: float = 0.0

    @property
    def exit_code(self) -> int:
        return self.review.exit_code


def _publish(staging: Path, out: Path) -> dict[str, Path]:
    """Move every file of ``staging`` into ``out`` (os.replace: each one appears whole or not at all),
    and remove the outputs of an earlier run that this run does not write (an old sweep.csv beside a
    new review would mix two runs). Interrupts (SIGINT, SIGTERM) are held back until the last move:
    the folder then holds one run's outputs, all of them."""
    import signal

    held = (signal.SIGINT, signal.SIGTERM)
    blocked = hasattr(signal, "pthread_sigmask")
    if blocked:
        previous = signal.pthread_sigmask(signal.SIG_BLOCK, held)
    try:
        moved = {}
        for entry in sorted(staging.iterdir()):
            dest = out / entry.name
            os.replace(entry, dest)
            moved[entry.name] = dest
        for name in OUTPUT_NAMES.values():
            if name not in moved and (out / name).is_file():
                (out / name).unlink()
        return moved
    finally:
        if blocked:
            signal.pthread_sigmask(signal.SIG_SETMASK, previous)


LOCK_NAME = ".legbridge-lock"


class FolderLock:
    """An exclusive claim on an output folder for one run: ``LOCK_NAME`` created with O_EXCL, holding
    the process id; a second run into the same folder is refused (exit 2) instead of replacing the
    first one's outputs while it writes. A lock left by a process that no longer exists is taken over."""

    def __init__(self, out: Path):
        self.path = Path(out) / LOCK_NAME
        self.held = False

    def __enter__(self):
        from legbridge.robots.errors import OutputFolderError

        for _ in range(2):
            try:
                fd = os.open(self.path, os.O_CREAT | os.O_EXCL | os.O_WRONLY, 0o644)
            except FileExistsError:
                try:
                    pid = int(self.path.read_text().strip() or "0")
                except (OSError, ValueError):
                    pid = 0
                if pid and _alive(pid):
                    raise OutputFolderError("another legbridge run is writing this folder", path=str(self.path.parent),
                                            expected="one run per output folder", found=Described(f"run {pid} (lock {self.path.name})"),
                                            hint="wait for it, or choose another folder") from None
                self.path.unlink(missing_ok=True)  # left by a run that ended without cleaning up
                continue
            with os.fdopen(fd, "w") as fh:
                fh.write(str(os.getpid()))
            self.held = True
            return self
        raise OutputFolderError("cannot claim the output folder", path=str(self.path.parent))

    def __exit__(self, *exc):
        if self.held:
            self.path.unlink(missing_ok=True)
        return False


def _alive(pid: int) -> bool:
    try:
        os.kill(pid, 0)
    except ProcessLookupError:
        return False
    except PermissionError:
        return True
    return True


def render_outputs(review: Review) -> dict[str, str | bytes]:
    """File name -> content of every output of ``review`` (nothing written)."""
    from legbridge.mapping.targets_export import targets_bytes

    from .json_doc import review_to_json
    from .report import render_report

    files: dict[str, str | bytes] = {
        REVIEW_JSON: json_text(review_to_json(review)),
        REPORT_HTML: render_report(review),
        TARGETS_FILE: targets_bytes(review.trajectories, TARGETS_FILE, plan=review.plan, robot=review.robot,
                                    rate_hz=review.settings.rate_hz, provenance=review.provenance),
    }
    if review.sweep is not None:
        from legbridge.limits.sweep.table import to_csv_text, to_json_doc

        files[SWEEP_CSV] = to_csv_text([review.sweep])
        files[SWEEP_JSON] = json_text(to_json_doc([review.sweep], review.provenance))
    return files


def write_review(review: Review, out_dir, *, force: bool = False, inputs=(), lock: bool = True) -> dict[str, Path]:
    """Write every output of ``review`` into ``out_dir`` (created if missing), all or nothing; returns
    output kind -> path. ``lock``: claim the folder (FolderLock) while writing; False when the caller
    holds the claim already (run_review holds it for the whole run)."""
    out = check_output_folder(out_dir, tuple(OUTPUT_NAMES.values()), inputs=inputs, force=force)
    files = render_outputs(review)
    created_dir = not out.exists()
    out.mkdir(parents=True, exist_ok=True)
    staging = None
    try:
        with FolderLock(out) if lock else contextlib.nullcontext():
            staging = Path(tempfile.mkdtemp(prefix=".legbridge-staging-", dir=str(out)))
            for name, content in files.items():
                (staging / name).write_bytes(content.encode("utf-8") if isinstance(content, str) else content)
            _publish(staging, out)
    except BaseException:
        if staging is not None:
            shutil.rmtree(staging, ignore_errors=True)
        if created_dir and out.is_dir() and not any(out.iterdir()):
            out.rmdir()
        raise
    shutil.rmtree(staging, ignore_errors=True)
    return {kind: out / name for kind, name in OUTPUT_NAMES.items() if name in files}


def _inputs(plan, robot) -> tuple:
    ins = []
    for x in (plan, robot):
        if isinstance(x, (str, os.PathLike)):
            ins.append(Path(x))
        else:
            src = getattr(x, "path", None) or getattr(x, "source", None)
            if src and Path(str(src)).is_file():
                ins.append(Path(str(src)))
    return tuple(ins)


def run_review(plan, robot, settings: CheckSettings | None, out_dir, *, force: bool = False,
               progress: Progress | None = None, created: str | None = None, sweep=SWEEP_AUTO,
               jobs: int | None = None, _claimed: bool = False) -> ReviewRun:
    """Review ``plan`` (Plan or plan file) on ``robot`` (Robot, description file or bundled robot name)
    into ``out_dir``: build_review, then write_review. Raises a LegbridgeError subclass on bad input
    (nothing written) and OutputExistsError when ``out_dir`` holds previous outputs and ``force`` is
    False. sweep: SWEEP_AUTO (default grid when the plan carries a policy), None, or offsets [m];
    jobs: sweep worker processes (default all cores). The sweep informs; the exit code speaks of the
    plan's own cases."""
    t0 = time.perf_counter()
    inputs = _inputs(plan, robot)
    out = check_output_folder(out_dir, tuple(OUTPUT_NAMES.values()), inputs=inputs, force=force)  # before any work
    created_dir = not out.exists()
    out.mkdir(parents=True, exist_ok=True)
    try:
        with contextlib.nullcontext() if _claimed else FolderLock(out):  # one run per folder, first check to last file
            review = build_review(plan, robot, settings, sweep=sweep, jobs=jobs, progress=progress, created=created)
            (progress or (lambda _m: None))("writing the review, the targets and the report")
            paths = write_review(review, out, force=force, inputs=inputs, lock=False)
    except BaseException:
        if created_dir and out.is_dir() and not any(out.iterdir()):
            out.rmdir()
        raise
    return ReviewRun(review, paths, time.perf_counter() - t0)


def run_demo_review(settings: CheckSettings | None, out_dir, *, force: bool = False, progress: Progress | None = None,
                    created: str | None = None, sweep=SWEEP_AUTO, jobs: int | None = None) -> ReviewRun:
    """Review the shipped demo running plan (invented data; the same bytes as
    examples/demo-run-plan.json) on the bundled demo biped, alternating legs. The plan is first copied to ``out_dir/demo-plan.json`` so the review
    records a real file and its SHA-256; the copy is removed again if the review fails."""
    from legbridge.mapping.slip.demo import SHIPPED_DEMO_RUN_PLAN, shipped_demo_plan_path
    from legbridge.robots.files import write_atomic

    out = check_output_folder(out_dir, tuple(OUTPUT_NAMES.values()) + (DEMO_PLAN,), force=force)
    (progress or (lambda _m: None))("copying the demo plan (invented data)")
    created_dir = not out.exists()
    out.mkdir(parents=True, exist_ok=True)
    plan_path = None
    old_copy = (out / DEMO_PLAN).read_bytes() if (out / DEMO_PLAN).is_file() else None  # an earlier run's
    try:
        with FolderLock(out):  # claimed before the plan copy: a second run cannot touch this run's files
            plan_path = write_atomic(out / DEMO_PLAN, shipped_demo_plan_path(SHIPPED_DEMO_RUN_PLAN).read_bytes(), force=force)
            run = run_review(plan_path, DEMO_ROBOT, settings, out, force=True, progress=progress, created=created,
                             sweep=sweep, jobs=jobs, _claimed=True)
    except BaseException:
        if plan_path is not None and old_copy is None:
            plan_path.unlink(missing_ok=True)
        elif plan_path is not None:  # the earlier review stays whole, with the plan copy it reviewed
            write_atomic(plan_path, old_copy, force=True)
        if created_dir and out.is_dir() and not any(out.iterdir()):
            out.rmdir()
        raise
    return ReviewRun(run.review, dict(run.paths, plan=Path(plan_path)), run.elapsed_s)


__all__ = ["DEMO_PLAN", "OUTPUT_NAMES", "REPORT_HTML", "REVIEW_JSON", "ReviewRun", "SWEEP_CSV", "SWEEP_JSON",
           "TARGETS_FILE", "render_outputs", "run_demo_review", "run_review", "write_review"]
