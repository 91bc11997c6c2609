"""Plausibility of a plan's units for the robot it is read against: unit slips are refused, milder
mismatches are returned as warnings.

    check_units(plan, robot, *, leg_model=None) -> tuple[str, ...]

A plan is SI (metres, radians, newtons, kilograms). The readers check that its values are numbers in
order; they cannot know that ``leg_length_m = 700`` is a millimetre figure, or that
``leg_angle_rad = 26`` is in degrees: such a plan runs and ends as "pose out of reach" at absurd joint
speeds. Here the plan is compared with the robot:

Refused (PlanFormatError naming the file, case, column, what was expected, what was found and the
probable slip):

- leg lengths: a case's median stance leg length is more than ``LENGTH_SLIP_TRIGGER_FACTOR`` times
  the robot's reach, and reading the column as millimetres (or centimetres) puts that median within
  ``PLAUSIBLE_LENGTH_FRACTIONS`` of the reach.
- leg angles: a case's leg angle leaves +-``MAX_LEG_ANGLE_RAD`` (the leg points above the
  horizontal) and reading the column as degrees puts every sample back within it.

Returned as warnings (one sentence each, naming the file and both values):

- the plan's median stance leg length (all cases) differs from the robot's nominal leg length
  (``Robot.nominal_leg_length_m``, else its reach) by more than ``LEG_LENGTH_MISMATCH_FRACTION``;
- leg angles beyond +-pi/2 that no unit slip explains;
- the plan's body mass (``mass_kg`` of the plan, its nondimensional scaling, or ``model.mass_kg``)
  differs from ``Robot.total_mass_kg`` by more than ``MASS_MISMATCH_FRACTION``.

The reach is the sum of the segment lengths (native legs) or ``LegModel.max_reach_m`` (URDF legs,
which have no segments; the leg model is built only then, or taken from ``leg_model``).

``check_leg_length_units`` and ``check_leg_angle_units`` do the refusals on plain arrays, so they can
also run on a file's columns before the reader converts an axial force with the leg angle (an angle
in degrees otherwise turns the ground force around and the reader refuses the case for a ground that
pulls on the foot).
"""

from __future__ import annotations

import math

import numpy as np

from legbridge.robots.errors import PlanFormatError, UsageError

# A stance leg cannot be longer than the leg's reach; a plan made for a somewhat bigger or smaller leg
# is off by a factor well below 10 (and ends as "out of reach" samples the mapping flags). A
# millimetre or centimetre slip multiplies the lengths by 1000 or 100, so a median stance length
# above 10x the reach is a unit-scale gap, not a size mismatch; 10 still catches a centimetre plan
# for a robot up to 10x longer than the plan's leg.
LENGTH_SLIP_TRIGGER_FACTOR = 10.0

# Where the converted median stance length must land, as fractions of the reach, for a slip to be
# named: no shorter than 0.2 of the reach (a crouch deeper than any running stance) and no longer
# than 1.5 times it (a plan somewhat past full extension, as a size mismatch gives). The band spans
# a factor 7.5 < 10, so millimetres and centimetres (a factor 10 apart) never both fit.
PLAUSIBLE_LENGTH_FRACTIONS = (0.2, 1.5)

# The length slips tried, in order: name, size of the unit in metres (unit definitions:
# 1 mm = 1e-3 m, 1 cm = 1e-2 m), the definition quoted in the message.
LENGTH_SLIPS = (("millimetres", 1e-3, "1 mm = 1e-3 m"), ("centimetres", 1e-2, "1 cm = 1e-2 m"))

# The leg angle is measured from the downward vertical (README, "Units and conventions"); beyond
# +-pi/2 the foot would be above the hip's horizontal, which no running plan asks of a leg (the
# open-loop policy reader refuses touchdown angles there for the same reason).
MAX_LEG_ANGLE_RAD = math.pi / 2

# 1 deg = pi/180 rad (unit definition).
RAD_PER_DEG = math.pi / 180.0

# A spring-mass leg is shorter in stance than at touchdown (typically by some 5-15 % at mid-stance
# in running, from memory); a robot's reach, used when it gives no nominal leg length, sits another
# few per cent above a working leg length (a knee is not run straight). 25 % leaves room for both
# and still flags a plan made for another leg.
LEG_LENGTH_MISMATCH_FRACTION = 0.25

# The plan's ground forces carry its body weight: a body mass off by more than a quarter means forces,
# and so torques and currents, off by as much.
MASS_MISMATCH_FRACTION = 0.25


def robot_reach_m(robot, leg_model=None) -> float:
    """Hip-to-foot distance of the straight leg [m]: the segment lengths' sum (native legs), else
    ``leg_model.max_reach_m`` (built from the robot when not given; URDF legs have no segments)."""
    if leg_model is None and robot.segments:
        return float(sum(s.length_m for s in robot.segments))
    if leg_model is None:
        from legbridge.robots.leg_model import build_leg_model

        leg_model = build_leg_model(robot)
    return float(leg_model.max_reach_m)


def stance_lengths(case) -> np.ndarray:
    """The case's leg lengths [m] in stance samples (all samples when it has no stance sample)."""
    ll = np.asarray(case.leg_length_m, dtype=float)
    st = np.asarray(case.stance, dtype=bool)
    return ll[st] if st.any() else ll


def _where(case_name: str, column: str) -> str:
    return f"case '{case_name}', column '{column}'"


def length_slip(median_length: float, reach_m: float):
    """(name, unit in metres, definition) of the unit slip explaining ``median_length``, or None."""
    if not median_length > LENGTH_SLIP_TRIGGER_FACTOR * reach_m:
        return None
    lo, hi = (f * reach_m for f in PLAUSIBLE_LENGTH_FRACTIONS)
    for slip in LENGTH_SLIPS:
        if lo <= median_length * slip[1] <= hi:
            return slip
    return None


def check_leg_length_units(leg_length_m, stance, *, reach_m: float, path: str, case: str,
                           robot_name: str = "", column: str = "leg_length_m", note: str = "") -> None:
    """Refuse one case's leg lengths [file units] that a millimetre or centimetre slip explains.

    stance: bool mask (the median is taken over stance samples, all samples when there are none)
    reach_m: the robot's reach [m]; note: a sentence appended to the hint (e.g. about scaling)
    """
    ll = np.asarray(leg_length_m, dtype=float)
    st = np.asarray(stance, dtype=bool)
    sel = ll[st] if st.any() else ll
    med = float(np.median(sel))
    slip = length_slip(med, reach_m)
    if slip is None:
        return
    name, unit_m, definition = slip
    lo, hi = (f * reach_m for f in PLAUSIBLE_LENGTH_FRACTIONS)
    who = f"robot '{robot_name}'" if robot_name else "the robot"
    over = "stance " if st.any() else ""
    raise PlanFormatError(
        f"leg lengths look like {name}, not metres",
        path=path, key=_where(case, column),
        expected=(f"a median {over}leg length of at most {LENGTH_SLIP_TRIGGER_FACTOR:g}x the reach of {who} "
                  f"({reach_m:.3g} m), i.e. <= {LENGTH_SLIP_TRIGGER_FACTOR * reach_m:.3g} m"),
        found=(f"median {med:.4g} over {sel.size} {over}samples ({med / reach_m:.0f}x the reach); read as {name} "
               f"it is {med * unit_m:.3g} m, within {lo:.3g}-{hi:.3g} m for this leg"),
        hint=(f"Probable unit slip: write lengths in metres ({definition}: multiply {column} and the file's "
              f"other length columns by {unit_m:g})" + (f". {note}" if note else "")),
    )


def check_leg_angle_units(leg_angle_rad, *, path: str, case: str, time_s=None, column: str = "leg_angle_rad",
                          note: str = "") -> None:
    """Refuse one case's leg angles [file units] that leave +-pi/2 and fit within it read as degrees.

    time_s: the case's times [s] (to say when the largest angle occurs); note: appended to the hint"""
    if not _degrees_like(leg_angle_rad):
        return
    a = np.abs(np.asarray(leg_angle_rad, dtype=float))
    i = int(np.argmax(a))
    amax = float(a[i])
    beyond = int(np.count_nonzero(a > MAX_LEG_ANGLE_RAD))
    at = f" at t = {float(np.asarray(time_s)[i]):.4g} s" if time_s is not None else f" at sample {i}"
    raise PlanFormatError(
        "leg angles look like degrees, not radians",
        path=path, key=_where(case, column),
        expected=(f"leg angles within +-pi/2 rad (+-{MAX_LEG_ANGLE_RAD:.4g}, from the downward vertical: a running "
                  f"leg stays below the horizontal)"),
        found=(f"|angle| up to {amax:.4g}{at}, {beyond} of {a.size} samples beyond pi/2; read as degrees the "
               f"largest is {amax * RAD_PER_DEG:.3g} rad"),
        hint=(f"Probable unit slip: write {column} in radians (1 deg = pi/180 rad: multiply degrees by {RAD_PER_DEG:.6g})"
              + (f". {note}" if note else "")),
    )


def _degrees_like(leg_angle_rad) -> bool:
    amax = float(np.max(np.abs(np.asarray(leg_angle_rad, dtype=float))))
    return amax > MAX_LEG_ANGLE_RAD and amax * RAD_PER_DEG <= MAX_LEG_ANGLE_RAD


def _alike(names: list, plan) -> str:
    if len(plan.cases) < 2:
        return ""
    if len(names) == len(plan.cases):
        return f"{len(names)} of {len(plan.cases)} cases show it"
    return f"{len(names)} of {len(plan.cases)} cases show it: {names}"


def _join(*notes: str) -> str:
    return ". ".join(n for n in notes if n)


def _scaling_note(plan) -> str:
    sc = plan.scaling
    if sc is None:
        return ""
    return (f"The plan is nondimensional, scaled with l0 = {sc.length_m:g} m (from the {sc.source}): "
            f"check nominal_leg_length_m as well")


def _positive(value) -> float | None:
    if isinstance(value, bool):
        return None
    try:
        x = float(value)
    except (TypeError, ValueError):
        return None
    return x if math.isfinite(x) and x > 0 else None


def plan_mass_kg(plan) -> tuple[float, str] | None:
    """The body mass a plan states [kg] and where: its ``mass_kg``, its scaling, or ``model.mass_kg``."""
    m = _positive(plan.metadata.get("mass_kg"))
    if m is not None:
        return m, "the plan's mass_kg"
    if plan.scaling is not None:
        return float(plan.scaling.mass_kg), f"the plan's scaling mass (from the {plan.scaling.source})"
    model = plan.metadata.get("model")
    m = _positive(model.get("mass_kg")) if isinstance(model, dict) else None
    return None if m is None else (m, "the plan's model.mass_kg")


def check_units(plan, robot, *, leg_model=None) -> tuple[str, ...]:
    """Refuse unit slips in ``plan`` for ``robot`` (PlanFormatError); return warnings for milder mismatches.

    plan: a legbridge.mapping.plan.Plan (or a plan file path, read against the robot)
    robot: a legbridge.robots.Robot (or a robot file path or bundled robot name)
    leg_model: the robot's LegModel when already built (used for the reach)
    Returns a tuple of warning sentences, empty when the plan fits the robot.
    """
    from legbridge.mapping.plan import Plan
    from legbridge.mapping.pipeline import read_against
    from legbridge.robots.library import as_robot

    robot = as_robot(robot)
    plan = read_against(plan, robot)
    if not isinstance(plan, Plan):
        raise UsageError("not a plan", key="plan", expected="a Plan or a plan file path", found=type(plan).__name__)
    reach = robot_reach_m(robot, leg_model)
    # which cases show each slip (one median and one maximum per case), so the refusal of the first
    # says how many share it
    length_slipped = [c.name for c in plan.cases if length_slip(float(np.median(stance_lengths(c))), reach)]
    angle_slipped = [c.name for c in plan.cases if _degrees_like(c.leg_angle_rad)]
    for c in plan.cases:
        check_leg_length_units(c.leg_length_m, c.stance, reach_m=reach, path=plan.path, case=c.name,
                               robot_name=robot.name, note=_join(_alike(length_slipped, plan), _scaling_note(plan)))
        check_leg_angle_units(c.leg_angle_rad, path=plan.path, case=c.name, time_s=c.time_s,
                              note=_alike(angle_slipped, plan))

    warnings: list[str] = []
    where = plan.path or "plan"
    lengths = np.concatenate([stance_lengths(c) for c in plan.cases])
    med = float(np.median(lengths))
    if robot.nominal_leg_length_m is not None:
        ref, ref_text = float(robot.nominal_leg_length_m), "nominal leg length (nominal_leg_length_m)"
    else:
        ref, ref_text = reach, "reach (it gives no nominal_leg_length_m)"
    off = (med - ref) / ref
    if abs(off) > LEG_LENGTH_MISMATCH_FRACTION:
        warnings.append(
            f"{where}: the plan's median stance leg length {med:.3g} m differs from the {ref_text} "
            f"of robot '{robot.name}', {ref:.3g} m, by {off:+.0%} (more than +-{LEG_LENGTH_MISMATCH_FRACTION:.0%}): the plan may be made for "
            f"another leg or scaled with another l0")

    angles = np.concatenate([np.abs(np.asarray(c.leg_angle_rad, dtype=float)) for c in plan.cases])
    beyond = int(np.count_nonzero(angles > MAX_LEG_ANGLE_RAD))
    if beyond:
        names = [c.name for c in plan.cases if np.any(np.abs(c.leg_angle_rad) > MAX_LEG_ANGLE_RAD)]
        warnings.append(
            f"{where}: leg_angle_rad leaves +-pi/2 rad (the leg above the horizontal) in {beyond} samples of case(s) "
            f"{names}, up to {float(angles.max()):.4g} rad; no unit slip explains it")

    pm = plan_mass_kg(plan)
    if pm is not None:
        m, src = pm
        rm = float(robot.total_mass_kg)
        off = (m - rm) / rm
        if abs(off) > MASS_MISMATCH_FRACTION:
            warnings.append(
                f"{where}: {src} {m:.4g} kg differs from the total mass of robot '{robot.name}', {rm:.4g} kg, by {off:+.0%} "
                f"(more than +-{MASS_MISMATCH_FRACTION:.0%}): the plan's ground forces carry another body weight")
    return tuple(warnings)


__all__ = [
    "LEG_LENGTH_MISMATCH_FRACTION", "LENGTH_SLIPS", "LENGTH_SLIP_TRIGGER_FACTOR", "MASS_MISMATCH_FRACTION",
    "MAX_LEG_ANGLE_RAD", "PLAUSIBLE_LENGTH_FRACTIONS", "RAD_PER_DEG", "check_leg_angle_units",
    "check_leg_length_units", "check_units", "length_slip", "plan_mass_kg", "robot_reach_m", "stance_lengths",
]
