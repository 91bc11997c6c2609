"""Typed, validated look-ups in parsed TOML tables, with messages naming file and key."""

from __future__ import annotations
from legbridge.robots.errors import Described

import math
from collections.abc import Iterable, Mapping

from .errors import RobotFileError


MAX_MAGNITUDE = 1e6
"""No quantity of a lab robot exceeds this in the SI unit its key names (kg, m, A, V, s, rad/s...):
a larger value is refused as an input error, not carried into the model (a mass of 1e300 kg)."""


class Table:
    """A TOML table being read: remembers which keys were used so unknown ones can be refused."""

    def __init__(self, data: Mapping, path: str, prefix: str) -> None:
        if not isinstance(data, Mapping):
            raise RobotFileError(path=path, key=prefix, expected="a table", found=type(data).__name__)
        self.data = data
        self.path = path
        self.prefix = prefix
        self.used: set[str] = set()

    def key(self, name: str) -> str:
        return f"{self.prefix}.{name}" if self.prefix else name

    def has(self, name: str) -> bool:
        return name in self.data

    def raw(self, name: str, default=...):
        self.used.add(name)
        if name not in self.data:
            if default is ...:
                raise RobotFileError("missing key", path=self.path, key=self.key(name))
            return default
        return self.data[name]

    def number(self, name: str, default=..., *, positive=False, nonneg=False, lo=None, hi=None) -> float:
        """A finite real number; bool is refused. ``lo``/``hi`` are inclusive bounds."""
        if name not in self.data:
            return self.raw(name, default)
        val = self.raw(name)
        if isinstance(val, bool) or not isinstance(val, (int, float)):
            raise RobotFileError(path=self.path, key=self.key(name), expected="a number", found=val)
        try:
            val = float(val)
        except OverflowError:
            raise RobotFileError(path=self.path, key=self.key(name), expected="a number of ordinary size",
                                 found=Described(f"an integer of {len(str(val))} digits")) from None
        if not math.isfinite(val):
            raise RobotFileError(path=self.path, key=self.key(name), expected="a finite number", found=val)
        if abs(val) > MAX_MAGNITUDE:
            raise RobotFileError("not a physical value for a lab robot", path=self.path, key=self.key(name),
                                 expected=f"a magnitude up to {MAX_MAGNITUDE:g} in the key's SI unit", found=val)
        if positive and val <= 0:
            raise RobotFileError(path=self.path, key=self.key(name), expected="a value > 0", found=val)
        if nonneg and val < 0:
            raise RobotFileError(path=self.path, key=self.key(name), expected="a value >= 0", found=val)
        if lo is not None and val < lo or hi is not None and val > hi:
            raise RobotFileError(path=self.path, key=self.key(name), expected=f"a value in [{lo}, {hi}]", found=val)
        return val

    def string(self, name: str, default=..., *, choices: Iterable[str] | None = None) -> str:
        if name not in self.data:
            return self.raw(name, default)
        val = self.raw(name)
        if not isinstance(val, str):
            raise RobotFileError(path=self.path, key=self.key(name), expected="a string", found=val)
        if choices is not None and val not in choices:
            raise RobotFileError(path=self.path, key=self.key(name), expected=f"one of {sorted(choices)}", found=val)
        return val

    def table(self, name: str, default=...) -> "Table":
        val = self.raw(name, default)
        if val is None:
            return None
        return Table(val, self.path, self.key(name))

    def refuse_unknown(self) -> None:
        unknown = sorted(set(self.data) - self.used)
        if unknown:
            raise RobotFileError(
                f"unknown key '{unknown[0]}'",
                path=self.path,
                key=self.prefix or "top level",
                hint=f"known keys here: {sorted(self.used)}",
            )
