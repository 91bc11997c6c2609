"""Which leg of a biped takes each stance phase of a one-leg (spring-mass) plan.

A one-leg plan says, per sample, whether "the" foot is on the ground. On a biped, a gait decides which
leg that is. The plan's stance phases are its maximal runs of stance samples, numbered 0, 1, 2, ... in
time order; a gait gives each phase to one leg or to both:

- ``alternating``: phase k goes to ``first_leg`` when k is even, to the other leg when k is odd;
- ``same-leg``: ``first_leg`` takes every phase, the other leg is held at a fixed posture
  (``held_leg_angle_rad``, ``held_leg_length_m``);
- ``both``: both legs take every phase together, the ground force shared equally between them.

Legs are named by strings; the biped's legs are :data:`LEGS`. Per sample, :class:`LegPhases` records
which leg stands (codes 0 left, 1 right, 2 both, -1 none = flight) and which stance phase is under way.
"""

from __future__ import annotations
from legbridge.robots.errors import Described

import math
from collections.abc import Mapping
from dataclasses import dataclass, field
from types import MappingProxyType

import numpy as np

from legbridge.robots.errors import PlanFormatError

LEGS = ("left", "right")
GAIT_KINDS = ("alternating", "same-leg", "both")

# Per-sample stance codes of LegPhases.stance_leg.
FLIGHT_CODE = -1
BOTH_CODE = 2

# The text forms parse_gait accepts (command line, plan files).
GAIT_TEXT_FORMS = ("alternating", "alternating:left", "alternating:right",
                   "same-leg", "same-leg:left", "same-leg:right", "both")


def _other_leg(leg: str) -> str:
    return LEGS[1 - LEGS.index(leg)]


@dataclass(frozen=True)
class Gait:
    """How the stance phases of a one-leg plan are shared between the two legs (module docstring).

    kind: one of GAIT_KINDS; first_leg: the leg of phase 0 (alternating) or of every phase (same-leg);
    held_leg_angle_rad, held_leg_length_m: same-leg only, the posture of the other leg (leg angle from
    the downward vertical [rad], hip-to-foot length [m]); a length of None stands for the plan's nominal
    leg length, which the caller fills in before the leg motion is made.
    """

    kind: str = "alternating"
    first_leg: str = "left"
    held_leg_angle_rad: float = 0.0
    held_leg_length_m: float | None = None

    def __post_init__(self) -> None:
        if self.kind not in GAIT_KINDS:
            raise PlanFormatError("unknown gait", key="gait", expected="one of " + ", ".join(map(repr, GAIT_KINDS)),
                                  found=self.kind)
        if self.first_leg not in LEGS:
            raise PlanFormatError("unknown leg", key="gait.first_leg", expected="one of " + ", ".join(map(repr, LEGS)),
                                  found=self.first_leg)
        try:
            angle = float(self.held_leg_angle_rad)
        except (TypeError, ValueError):
            angle = math.nan
        if not math.isfinite(angle):
            raise PlanFormatError("held leg angle is not a finite number", key="gait.held_leg_angle_rad",
                                  expected="a finite angle [rad]", found=self.held_leg_angle_rad)
        object.__setattr__(self, "held_leg_angle_rad", angle)
        if self.held_leg_length_m is not None:
            try:
                length = float(self.held_leg_length_m)
            except (TypeError, ValueError):
                length = math.nan
            if not (math.isfinite(length) and length > 0.0):
                raise PlanFormatError("held leg length is not a positive length", key="gait.held_leg_length_m",
                                      expected="a positive finite length [m] or None (the plan's nominal)",
                                      found=self.held_leg_length_m)
            object.__setattr__(self, "held_leg_length_m", length)

    @property
    def other_leg(self) -> str:
        """The leg that is not ``first_leg``."""
        return _other_leg(self.first_leg)

    def describe(self) -> str:
        """One line for people."""
        if self.kind == "alternating":
            return f"alternating legs, {self.first_leg} first"
        if self.kind == "both":
            return "both legs together, ground force shared equally"
        length = ("the plan's nominal length" if self.held_leg_length_m is None
                  else f"{self.held_leg_length_m:g} m")
        return (f"same leg: {self.first_leg} takes every stance, {self.other_leg} held at "
                f"{self.held_leg_angle_rad:g} rad and {length}")


def parse_gait(text: str) -> Gait:
    """The gait named by its command-line / plan-file form: ``kind`` or ``kind:first_leg`` (GAIT_TEXT_FORMS).

    Surrounding blanks and letter case are ignored; anything else raises PlanFormatError naming the forms.
    """
    expected = "one of " + ", ".join(map(repr, GAIT_TEXT_FORMS))
    if not isinstance(text, str):
        raise PlanFormatError("gait is not text", key="gait", expected=expected, found=text)
    norm = text.strip().lower()
    if norm not in GAIT_TEXT_FORMS:
        raise PlanFormatError("unknown gait", key="gait", expected=expected, found=text)
    kind, _, leg = norm.partition(":")
    return Gait(kind=kind, first_leg=leg or "left")


def _frozen(a, dtype) -> np.ndarray:
    out = np.array(a, dtype=dtype, copy=True)
    out.setflags(write=False)
    return out


def stance_runs(stance) -> np.ndarray:
    """(m, 2) int array: (first, last + 1) sample of every maximal run of True in a (n,) bool array."""
    s = np.asarray(stance, dtype=bool)
    edges = np.diff(np.concatenate(([0], s.astype(np.int8), [0])))
    return np.column_stack((np.flatnonzero(edges == 1), np.flatnonzero(edges == -1))).astype(np.intp)


@dataclass(frozen=True, eq=False)
class LegPhases:
    """Per-sample leg assignment of a plan (from :func:`assign_legs`).

    contact: leg -> (n,) bool, True where that leg is the (or a) stance leg (read-only mapping);
    stance_leg: (n,) int8, 0 left, 1 right, 2 both, -1 flight;
    stance_index: (n,) int, running number of the plan's stance phase, -1 in flight;
    runs: (m, 2) int, (first, last + 1) sample of each stance phase, in phase order;
    gait: the gait that made the assignment.
    """

    contact: Mapping[str, np.ndarray]
    stance_leg: np.ndarray
    stance_index: np.ndarray
    runs: np.ndarray
    gait: Gait = field(default_factory=Gait)

    @property
    def n_samples(self) -> int:
        return int(self.stance_leg.shape[0])

    def phase_text(self, leg: str) -> np.ndarray:
        """(n,) str per sample for export columns: "stance", "swing", or "held" (the other leg of same-leg)."""
        if leg not in LEGS:
            raise PlanFormatError("unknown leg", key="leg", expected="one of " + ", ".join(map(repr, LEGS)), found=leg)
        if self.gait.kind == "same-leg" and leg != self.gait.first_leg:
            return np.full(self.n_samples, "held", dtype="<U6")
        return np.where(self.contact[leg], "stance", "swing").astype("<U6")


def assign_legs(stance, gait: Gait) -> LegPhases:
    """Give each stance phase of the plan's (n,) bool phase ``stance`` (True = foot on the ground) to a leg."""
    if not isinstance(gait, Gait):
        raise PlanFormatError("not a gait", key="gait", expected="a Gait", found=type(gait).__name__)
    raw = np.asarray(stance)
    if raw.ndim != 1 or raw.shape[0] == 0:
        raise PlanFormatError("stance is not a non-empty sequence", key="stance",
                              expected="a (n,) bool array with n >= 1", found=Described(f"shape {raw.shape}"))
    if raw.dtype != bool and not (np.issubdtype(raw.dtype, np.number) and np.all((raw == 0) | (raw == 1))):
        raise PlanFormatError("stance holds values other than true/false", key="stance",
                              expected="bool values (or 0/1)", found=Described(f"dtype {raw.dtype}"))
    s = raw.astype(bool)
    n = s.shape[0]
    runs = stance_runs(s)
    starts = np.zeros(n, dtype=np.int64)
    starts[runs[:, 0]] = 1
    stance_index = np.where(s, np.cumsum(starts) - 1, -1)

    first = LEGS.index(gait.first_leg)
    phase_no = np.arange(runs.shape[0])
    if gait.kind == "alternating":
        owner = np.where(phase_no % 2 == 0, first, 1 - first)
    elif gait.kind == "same-leg":
        owner = np.full(runs.shape[0], first)
    else:
        owner = np.full(runs.shape[0], BOTH_CODE)
    stance_leg = np.where(s, owner[np.maximum(stance_index, 0)] if owner.size else 0, FLIGHT_CODE)
    contact = {leg: _frozen(s & ((stance_leg == code) | (stance_leg == BOTH_CODE)), bool)
               for code, leg in enumerate(LEGS)}
    return LegPhases(contact=MappingProxyType(contact), stance_leg=_frozen(stance_leg, np.int8),
                     stance_index=_frozen(stance_index, np.int64), runs=_frozen(runs, np.intp), gait=gait)
