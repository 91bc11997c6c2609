"""Errors of the mapping layer (plan files and what is made of them).

Every class derives from :class:`legbridge.robots.errors.LegbridgeError` and from the matching
built-in, so ``except ValueError`` keeps working. Messages name the file, the row (CSV: the line
number a spreadsheet shows, header = row 1 when there are no comment lines) or key, what was
expected and what was found.
"""

from __future__ import annotations

from legbridge.robots.errors import LegbridgeError


class PlanFormatError(LegbridgeError, ValueError):
    """A plan file (or a plan about to be written) is malformed, inconsistent or not evaluable."""


class PlanScalingError(PlanFormatError):
    """A nondimensional plan cannot be scaled to SI: the nominal leg length or mass is not given."""


__all__ = ["LegbridgeError", "PlanFormatError", "PlanScalingError"]
