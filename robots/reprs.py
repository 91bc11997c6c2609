"""Short reprs for the dataclasses that hold arrays or many parts: a notebook shows what an object is
(its name, sizes and shapes), never thousands of numbers."""

from __future__ import annotations

import numpy as np


def brief(value) -> str:
    """One short text for a field value: arrays by shape, long collections by their size."""
    if isinstance(value, np.ndarray):
        return f"<array {'x'.join(map(str, value.shape)) or 'scalar'} {value.dtype}>"
    if isinstance(value, (tuple, list)):
        if len(value) <= 4 and all(isinstance(v, (str, int, float)) for v in value):
            return repr(tuple(value))
        names = [getattr(v, "name", None) or getattr(v, "case", None) for v in value]
        if all(isinstance(n, str) for n in names) and len(names) <= 6:
            return "(" + ", ".join(names) + ")"
        return f"<{len(value)} items>"
    if isinstance(value, dict):
        return f"<{len(value)} entries>"
    if isinstance(value, float):
        return f"{value:.6g}"
    if isinstance(value, (str, int, bool)) or value is None:
        return repr(value)
    name = getattr(value, "name", None) or getattr(value, "case", None)
    return f"<{type(value).__name__} {name}>" if isinstance(name, str) else f"<{type(value).__name__}>"


def short_repr(*fields: str):
    """Class decorator (put it above @dataclass): repr shows only ``fields``, each through brief()."""
    def deco(cls):
        def __repr__(self) -> str:
            return f"{type(self).__name__}({', '.join(f'{f}={brief(getattr(self, f, None))}' for f in fields)})"

        cls.__repr__ = __repr__
        return cls
    return deco
