"""The bad-input corpus (tests/corpus.py): every case must exit 2 with one line naming the file or
option, write nothing and leave every input byte-identical; a traceback, exit 3, a hang (30 s per
case) or an output written fails the suite."""

from __future__ import annotations

import contextlib
import hashlib
import io
import signal
import sys
from pathlib import Path

import pytest

sys.path.insert(0, str(Path(__file__).parent))
import corpus  # noqa: E402

CASES = corpus.cases()
HANG_S = 30


def _digest(folder: Path) -> dict:
    return {p.relative_to(folder).as_posix(): hashlib.sha256(p.read_bytes()).hexdigest()
            for p in sorted(folder.rglob("*")) if p.is_file()}


class _Hang(BaseException):
    """Raised by the per-case alarm: not an OSError (TimeoutError is one), so nothing in legbridge catches it."""


def run_case(case: corpus.Case, folder: Path) -> tuple[int | str, str]:
    """(exit status or 'hang', stderr) of one case run in this process."""
    from legbridge.limits.cli.entry import main

    for name, data in case.files.items():
        (folder / name).write_bytes(data)
    (folder / "out").mkdir()
    argv = [a.replace("{dir}", str(folder)) for a in case.argv]
    err, out = io.StringIO(), io.StringIO()

    def hang(signum, frame):
        raise _Hang

    previous = signal.signal(signal.SIGALRM, hang)
    signal.alarm(HANG_S)
    try:
        with contextlib.redirect_stderr(err), contextlib.redirect_stdout(out):
            try:
                code = main(argv)
            except SystemExit as exc:
                code = exc.code
    except _Hang:
        code = "hang"
    finally:
        signal.alarm(0)
        signal.signal(signal.SIGALRM, previous)
    return code, err.getvalue()


def test_the_corpus_is_large_enough():
    assert len(CASES) >= 300, len(CASES)
    assert len({c.name for c in CASES}) == len(CASES)


@pytest.mark.parametrize("case", CASES, ids=[c.name for c in CASES])
def test_bad_input_is_refused_cleanly(case, tmp_path):
    before = _digest(tmp_path) or None
    code, err = run_case(case, tmp_path)
    inputs = {n: hashlib.sha256(d).hexdigest() for n, d in case.files.items()}
    lines = [ln for ln in err.strip().splitlines() if ln]
    assert code == 2, f"exit {code}: {err[-600:]}"
    assert "Traceback" not in err
    assert len(lines) == 1 and lines[0].startswith("legbridge: error:"), err[-600:]
    after = _digest(tmp_path)
    assert {n: after.get(n) for n in inputs} == inputs, "an input was modified"
    assert set(after) == set(inputs), f"written: {sorted(set(after) - set(inputs))}"
    assert before is None


def test_files_too_large_are_refused_before_reading(tmp_path, monkeypatch, capsys):
    # the size bound (lowered here to 1 kB) is checked from the file system before a byte is read
    import legbridge.mapping.readers.raw as raw
    import legbridge.robots.toml_reader as toml_reader
    from legbridge.limits.cli.entry import main

    base = corpus.base_files()
    (tmp_path / "plan.json").write_bytes(base["plan.json"])
    (tmp_path / "r.toml").write_bytes(base["lab-biped-leg.toml"])
    monkeypatch.setattr(raw, "MAX_PLAN_FILE_BYTES", 1000)
    assert main(["check", str(tmp_path / "plan.json"), "--robot", corpus.ROBOT, "--quiet"]) == 2
    assert "plan file too large" in capsys.readouterr().err
    monkeypatch.setattr(raw, "MAX_PLAN_FILE_BYTES", 2_000_000_000)
    monkeypatch.setattr(toml_reader, "MAX_ROBOT_FILE_BYTES", 1000)
    assert main(["check", str(tmp_path / "plan.json"), "--robot", str(tmp_path / "r.toml"), "--quiet"]) == 2
    assert "robot file too large" in capsys.readouterr().err
