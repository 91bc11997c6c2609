"""The installed legbridge version, recorded in every output file, and the versions of what it ran on.

Versions are read from the installed distributions' metadata (importlib.metadata), so asking for
them imports none of the packages themselves (no NumPy, SciPy, Pinocchio or cvxpy import).
"""

from __future__ import annotations

import platform
from importlib.metadata import PackageNotFoundError, version

from .errors import LegbridgeError

# provenance() key -> distribution names to try, in order. Pinocchio's wheels on PyPI are the
# distribution "pin"; a conda-forge install registers it as "pinocchio".
_DISTRIBUTIONS: dict[str, tuple[str, ...]] = {
    "numpy": ("numpy",),
    "scipy": ("scipy",),
    "pin": ("pin", "pinocchio"),
    "cvxpy": ("cvxpy",),
    "clarabel": ("clarabel",),
    "osqp": ("osqp",),
}

# cvxpy solver name -> distribution that provides it.
_QP_SOLVERS = {"CLARABEL": "clarabel", "OSQP": "osqp"}


def tool_version() -> str:
    """The legbridge version from the installed package metadata ('0+unknown' in a bare source tree)."""
    try:
        return version("legbridge")
    except PackageNotFoundError:
        return "0+unknown"


def _distribution_version(*names: str) -> str | None:
    for name in names:
        try:
            return version(name)
        except PackageNotFoundError:
            continue
    return None


def provenance() -> dict:
    """Versions of legbridge, Python and the numerical packages it uses, as a new dict.

    Keys: 'legbridge' (as tool_version()), 'python' (platform.python_version()), and 'numpy',
    'scipy', 'pin' (Pinocchio), 'cvxpy', 'clarabel', 'osqp': the installed distribution's version
    string, or None when that distribution is not installed.
    """
    out: dict = {"legbridge": tool_version(), "python": platform.python_version()}
    for key, names in _DISTRIBUTIONS.items():
        out[key] = _distribution_version(*names)
    return out


def qp_solver_version(name: str) -> str | None:
    """Installed version of a QP solver given by its cvxpy name ('CLARABEL' or 'OSQP', any case).

    Returns None when the solver's distribution is not installed; raises LegbridgeError for
    another name.
    """
    key = name.upper() if isinstance(name, str) else None
    if key not in _QP_SOLVERS:
        raise LegbridgeError("unknown QP solver", key="solver", expected=f"one of {sorted(_QP_SOLVERS)}", found=name)
    return _distribution_version(_QP_SOLVERS[key])


__all__ = ["provenance", "qp_solver_version", "tool_version"]
