"""Packages whose public names load from their submodules on first use (so the command line starts
quickly): one helper for every such ``__init__``."""

from __future__ import annotations

from importlib import import_module


def lazy_exports(package: str, where: dict[str, str]):
    """(__getattr__, __dir__) for ``package`` whose names map to the submodule holding each one
    (``{"Review": "review"}``: ``package.Review`` is ``package.review.Review``)."""

    def __getattr__(name):
        if name in where:
            return getattr(import_module(f"{package}.{where[name]}"), name)
        raise AttributeError(f"module {package!r} has no attribute {name!r}")

    def __dir__():
        return sorted(set(where) | {"__doc__", "__name__"})

    return __getattr__, __dir__
