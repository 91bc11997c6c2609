"""Caution text shown with every check, summary and report. Never say that a plan is safe."""

from __future__ import annotations

VERDICT_WITHIN = "within the modelled limits"
VERDICT_NEAR = "near a modelled limit"
VERDICT_EXCEEDS = "exceeds a modelled limit"
VERDICT_NOT_EVALUATED = "could not be evaluated"

CAUTIONS: tuple[str, ...] = (
    "legbridge checks the modelled limits only: joint range, joint speed, peak torque, the motor "
    "voltage envelope, drive current, winding temperature, power and regenerated energy, and ground "
    "friction, each as described in the robot file. A result within those limits does not mean the "
    "test is without risk.",
    "Not covered: impacts and their force peaks, backlash and gearbox wear, cable, connector and "
    "sensor limits, structural loads, controller tracking error, communication delays, battery state, "
    "and anything the robot file gets wrong.",
    "Follow your lab's safety rules and the instructions of the person responsible for the test. "
    "This review is an aid to their decision, not a replacement for it.",
)


def caution_lines(width: int = 100) -> list[str]:
    """The caution text wrapped for a terminal, each paragraph prefixed 'CAUTION:' once."""
    import textwrap

    out: list[str] = []
    for para in CAUTIONS:
        out.extend(textwrap.wrap("CAUTION: " + para, width=width, subsequent_indent="         "))
    return out
