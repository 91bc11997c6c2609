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


def test_the_urdf_a_robot_file_names_is_an_input_too(tmp_path):
    # A robot TOML that names a URDF: writing any output over that URDF is refused, --force or not,
    # and the file stays byte-identical (the reference: its SHA-256 before and after).
    import hashlib
    import shutil

    import pytest

    from legbridge.robots.errors import OutputExistsError
    from legbridge.robots.files import check_output_folder, check_outputs
    from legbridge.robots.library import library_path

    for name in ("spatial-leg.toml", "spatial-leg.urdf"):
        shutil.copy(library_path(name), tmp_path / name)
    urdf = tmp_path / "spatial-leg.urdf"
    before = hashlib.sha256(urdf.read_bytes()).hexdigest()
    with pytest.raises(OutputExistsError, match="input"):
        check_outputs([urdf], inputs=[tmp_path / "plan.json", tmp_path / "spatial-leg.toml"], force=True)
    with pytest.raises(OutputExistsError, match="input"):
        check_output_folder(tmp_path, ("spatial-leg.urdf",), inputs=[tmp_path / "spatial-leg.toml"], force=True)
    assert hashlib.sha256(urdf.read_bytes()).hexdigest() == before
