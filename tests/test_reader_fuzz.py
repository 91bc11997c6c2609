"""Property-based fuzzing of every reader (Hypothesis, fixed seed, bounded examples): good files
mutated byte by byte are either read or refused with a LegbridgeError, never anything else (no
other exception, no hang). The reference: the readers' contract, every bad input an input error."""

from __future__ import annotations

import sys
from pathlib import Path

import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

sys.path.insert(0, str(Path(__file__).parent))
import corpus  # noqa: E402

from legbridge.robots.errors import LegbridgeError  # noqa: E402

BASE = corpus.base_files()
FUZZ = settings(max_examples=60, derandomize=True, deadline=None,
                suppress_health_check=[HealthCheck.function_scoped_fixture, HealthCheck.too_slow])


@st.composite
def mutated(draw, data: bytes):
    """``data`` with a few bytes replaced, inserted or deleted, or cut short."""
    b = bytearray(data)
    for _ in range(draw(st.integers(1, 4))):
        if not b:
            break
        i = draw(st.integers(0, len(b) - 1))
        op = draw(st.sampled_from(("replace", "insert", "delete", "cut")))
        if op == "replace":
            b[i] = draw(st.integers(0, 255))
        elif op == "insert":
            b[i:i] = draw(st.binary(min_size=1, max_size=8))
        elif op == "delete":
            del b[i:i + draw(st.integers(1, 16))]
        else:
            del b[i:]
    return bytes(b)


def _read_plan(tmp_path, name, data):
    from legbridge.mapping.readers import read_plan

    p = tmp_path / name
    p.write_bytes(data)
    try:
        read_plan(p)
    except LegbridgeError:
        pass


@pytest.mark.parametrize("ext", ["json", "csv", "npz", "mat"])
def test_plan_readers_refuse_or_read(ext, tmp_path):
    @FUZZ
    @given(mutated(BASE[f"plan.{ext}"]))
    def check(data):
        _read_plan(tmp_path, f"fuzz.{ext}", data)

    check()


def test_robot_reader_refuses_or_reads(tmp_path):
    from legbridge.robots.toml_reader import load_robot

    @FUZZ
    @given(mutated(BASE["lab-biped-leg.toml"]))
    def check(data):
        p = tmp_path / "fuzz.toml"
        p.write_bytes(data)
        try:
            load_robot(p)
        except LegbridgeError:
            pass

    check()


def test_urdf_reader_refuses_or_reads(tmp_path):
    from legbridge.robots.toml_reader import load_robot

    (tmp_path / "spatial-leg.toml").write_bytes(BASE["spatial-leg.toml"])

    @FUZZ
    @given(mutated(BASE["spatial-leg.urdf"]))
    def check(data):
        (tmp_path / "spatial-leg.urdf").write_bytes(data)
        try:
            load_robot(tmp_path / "spatial-leg.toml")
        except LegbridgeError:
            pass

    check()
