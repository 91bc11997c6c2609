"""Atomic output files: whole or nothing, ordinary permissions, no overwrite without force."""

import os
import stat

import pytest

from legbridge.robots.errors import LegbridgeError, OutputExistsError
from legbridge.robots.files import write_atomic


def test_writes_with_the_umask_permissions_and_leaves_no_temporary_file(tmp_path):
    old = os.umask(0o022)
    try:
        p = write_atomic(tmp_path / "a.txt", "hello")
    finally:
        os.umask(old)
    assert p.read_text() == "hello"
    # 0666 less umask 022 = 0644, what open(..., "w") gives (POSIX open(2), common practice)
    assert stat.S_IMODE(p.stat().st_mode) == 0o644
    assert [q.name for q in tmp_path.iterdir()] == ["a.txt"]


def test_refuses_existing_file_and_missing_folder_and_cleans_up_on_failure(tmp_path):
    p = write_atomic(tmp_path / "a.bin", b"1")
    with pytest.raises(OutputExistsError, match="a.bin.*pass --force"):
        write_atomic(p, b"2")
    assert p.read_bytes() == b"1"
    write_atomic(p, b"2", force=True)
    assert p.read_bytes() == b"2"
    with pytest.raises(LegbridgeError, match="output folder does not exist"):
        write_atomic(tmp_path / "nope" / "a.bin", b"1")

    def broken(fh):
        fh.write(b"partial")
        raise RuntimeError("writer failed")

    with pytest.raises(RuntimeError):
        write_atomic(p, broken, force=True)
    assert p.read_bytes() == b"2"
    assert sorted(q.name for q in tmp_path.iterdir()) == ["a.bin"]


def test_a_folder_that_refuses_files_is_one_clear_error():
    # /proc accepts no new files (Linux procfs; common practice), even for root
    with pytest.raises(LegbridgeError, match="/proc: cannot write in this folder"):
        write_atomic("/proc/legbridge-test.txt", "x")
