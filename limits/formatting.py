"""How utilisations are written for people: one rule for the terminal, the report and sweeps."""

from __future__ import annotations

import math


def utilisation_text(u) -> str:
    """Utilisation (value / allowed) in %: 0.1 % steps, 0.01 % steps within 0.5 % of the limit (so an
    exceeding 100.004 % reads '100.00 %', not a misleading '100.0 %' next to 'exceeds'); words when it
    is not a number ('not evaluated') or infinite ('not finite (counted as exceeding)': fail closed)."""
    if u is None or math.isnan(float(u)):
        return "not evaluated"
    u = float(u)
    if math.isinf(u):
        return "not finite (counted as exceeding)"
    digits = 2 if abs(u - 1.0) < 0.005 else 1
    return f"{100.0 * u:.{digits}f} %"
