"""The modelled limits and the check of a case.

Each limit lives in one module of this folder that declares ``LIMITS`` (a tuple of
:class:`legbridge.limits.checks.base.Limit`: name, display name, unit, scope, report panel, order and
``evaluate``). The modules are found here by themselves: adding a limit is adding one module, and
the checker, segments, verdicts, JSON, sweeps, cautions and the report all take the list from
:func:`all_limits`.

    check_case(traj, robot, settings) -> CaseReview        (checks.case)
    check_plan(trajs, robot, settings) -> tuple[CaseReview, ...]
    all_limits() -> tuple[Limit, ...]                        in listing order
    limit_names(), display_name(name), get_limit(name)
"""

from __future__ import annotations

import importlib
import pkgutil
from functools import lru_cache

from .base import CheckContext, Limit

# Modules of this folder that hold machinery, not limits.
_MACHINERY = frozenset({"base", "case", "results", "segments", "thermal"})


@lru_cache(maxsize=1)
def all_limits() -> tuple[Limit, ...]:
    """Every Limit declared by a module of this folder, in listing order (Limit.order, then name)."""
    found: dict[str, Limit] = {}
    for info in pkgutil.iter_modules(__path__):
        if info.name in _MACHINERY or info.name.startswith("_"):
            continue
        mod = importlib.import_module(f"{__name__}.{info.name}")
        for lim in getattr(mod, "LIMITS", ()):
            if not isinstance(lim, Limit):
                raise TypeError(f"{mod.__name__}.LIMITS holds {lim!r}, not a Limit")
            if lim.name in found:
                raise ValueError(f"limit {lim.name!r} is declared twice ({mod.__name__})")
            found[lim.name] = lim
    return tuple(sorted(found.values(), key=lambda lim: (lim.order, lim.name)))


def limit_names() -> tuple[str, ...]:
    """The names of every limit, in listing order."""
    return tuple(lim.name for lim in all_limits())


def get_limit(name: str) -> Limit:
    """The Limit called ``name``; LookupError listing the known names otherwise."""
    for lim in all_limits():
        if lim.name == name:
            return lim
    raise LookupError(f"unknown limit {name!r}; known limits: {', '.join(limit_names())}")


def display_name(name: str) -> str:
    """The display name of a limit ('peak_torque' -> 'peak torque'); an unknown name with '_' as ' '."""
    for lim in all_limits():
        if lim.name == name:
            return lim.display
    return str(name).replace("_", " ")


def __getattr__(name):  # check_case / check_plan without importing the checker at package import
    if name in ("check_case", "check_plan"):
        from . import case

        return getattr(case, name)
    raise AttributeError(f"module {__name__!r} has no attribute {name!r}")


__all__ = ["CheckContext", "Limit", "all_limits", "check_case", "check_plan", "display_name", "get_limit",
           "limit_names"]
