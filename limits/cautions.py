"""Caution text shown with every check, summary and report. Never say that a plan is safe.

The list of what is checked is made from the limits the checks declare (limits.checks), so it always
names exactly the limits that were evaluated.
"""

from __future__ import annotations

import textwrap


def _checked_limits() -> str:
    from .checks import all_limits

    names: list[str] = []
    for lim in all_limits():
        words = lim.caution or lim.display
        if words not in names:
            names.append(words)
    return ", ".join(names[:-1]) + ", and " + names[-1] if len(names) > 1 else "".join(names)


CAUTIONS: tuple[str, ...] = (
    f"legbridge checks the modelled limits only: {_checked_limits()}, each as described in the robot file. "
    "A result within those limits does not mean the test is without risk.",
    "Not covered: impacts and their force peaks, backlash and gearbox wear, cable, connector and "
    "sensor limits, structural loads, controller tracking error, communication delays, battery state, "
    "and anything the robot file gets wrong.",
    "Follow your lab's safety rules and the instructions of the person responsible for the test. "
    "This review is an aid to their decision, not a replacement for it.",
)


def caution_lines(width: int = 100) -> list[str]:
    """The caution text wrapped for a terminal, each paragraph prefixed 'CAUTION:' once."""
    out: list[str] = []
    for para in CAUTIONS:
        out.extend(textwrap.wrap("CAUTION: " + para, width=width, subsequent_indent="         "))
    return out


__all__ = ["CAUTIONS", "caution_lines"]
