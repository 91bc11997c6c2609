"""Provenance versions against the packages' own version attributes (the reference outside legbridge)."""

from __future__ import annotations

import subprocess
import sys
import tomllib
from importlib.metadata import PackageNotFoundError
from pathlib import Path

import pytest

import legbridge.robots.version as version_module
from legbridge.robots.errors import LegbridgeError
from legbridge.robots.version import provenance, qp_solver_version, tool_version

ROOT = Path(__file__).resolve().parents[2]
KEYS = {"legbridge", "python", "numpy", "scipy", "pin", "cvxpy", "clarabel", "osqp"}


def test_provenance_has_exactly_the_documented_keys():
    assert set(provenance()) == KEYS


def test_numerical_packages_match_their_own_version_attributes():
    import clarabel
    import cvxpy
    import numpy
    import osqp
    import pinocchio
    import scipy

    prov = provenance()
    # Each package's __version__ is its own statement of what it is (the reference).
    assert prov["numpy"] == numpy.__version__
    assert prov["scipy"] == scipy.__version__
    assert prov["cvxpy"] == cvxpy.__version__
    assert prov["pin"] == pinocchio.__version__  # the "pin" distribution ships the pinocchio module
    assert prov["clarabel"] == clarabel.__version__
    assert prov["osqp"] == osqp.__version__


def test_python_version_matches_sys_version_info():
    v = sys.version_info  # the interpreter's own version tuple
    # platform.python_version() is 'major.minor.micro', plus a suffix such as 'rc1' on pre-releases.
    assert provenance()["python"].startswith(f"{v.major}.{v.minor}.{v.micro}")


def test_legbridge_version_is_the_one_declared_in_pyproject():
    declared = tomllib.loads((ROOT / "pyproject.toml").read_text())["project"]["version"]
    assert provenance()["legbridge"] == tool_version() == declared


def test_qp_solver_versions_match_the_solvers_own_attributes():
    import clarabel
    import osqp

    assert qp_solver_version("CLARABEL") == clarabel.__version__
    assert qp_solver_version("OSQP") == osqp.__version__
    assert qp_solver_version("osqp") == osqp.__version__  # any case, as the check settings accept


def test_unknown_qp_solver_is_refused():
    with pytest.raises(LegbridgeError, match="SCS"):
        qp_solver_version("SCS")


def test_missing_distribution_gives_none(monkeypatch):
    # importlib.metadata.version raises PackageNotFoundError for a distribution that is not
    # installed (Python documentation, importlib.metadata); provenance() reports None for it.
    real = version_module.version

    def fake(name):
        if name in ("osqp", "pin", "pinocchio"):
            raise PackageNotFoundError(name)
        return real(name)

    monkeypatch.setattr(version_module, "version", fake)
    prov = provenance()
    assert prov["osqp"] is None and prov["pin"] is None
    assert qp_solver_version("OSQP") is None
    assert prov["numpy"] is not None


def test_provenance_returns_a_new_dict_each_call():
    a = provenance()
    a["qp_solver"] = "CLARABEL"
    assert "qp_solver" not in provenance()


def test_provenance_imports_none_of_the_packages():
    # Common practice for "no heavy imports": compare sys.modules before and after, in a fresh
    # interpreter (this test process has imported them all already).
    code = (
        "import sys\n"
        "from legbridge.robots.version import provenance, qp_solver_version\n"
        "before = set(sys.modules)\n"
        "provenance(); qp_solver_version('CLARABEL'); qp_solver_version('OSQP')\n"
        "heavy = {'numpy', 'scipy', 'pinocchio', 'cvxpy', 'clarabel', 'osqp'}\n"
        "print(sorted(m for m in set(sys.modules) - before if m.split('.')[0] in heavy))\n"
    )
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True, timeout=120)
    assert out.stdout.strip() == "[]"
