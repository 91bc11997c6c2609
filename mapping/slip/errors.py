"""Errors of the reduced-order (spring-mass) simulator.

Both derive from :class:`legbridge.robots.errors.LegbridgeError` and from ``ValueError``; messages
name the parameter or key, what was expected and what was found.
"""

from __future__ import annotations

from legbridge.robots.errors import LegbridgeError


class SlipInputError(LegbridgeError, ValueError):
    """A spring-mass parameter, policy, initial state or simulation setting is invalid."""


__all__ = ["SlipInputError"]
