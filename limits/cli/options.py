"""Options shared by the commands, declared and validated once: the same option has the same name,
meaning and check in every command."""

from __future__ import annotations

import argparse

# Options whose value is a range LO:HI:N that may start with '-' (argparse would take it for an option);
# --heights (sweep) and --sweep (review) are the names of legbridge 0.1, still accepted, not shown.
OFFSET_OPTIONS = ("--ground-offsets", "--heights", "--sweep")


PLAN_HELP = "plan file (CSV, JSON, NPZ or MAT-file)"


def add_rate(p) -> None:
    """--rate HZ: the controller, export and check rate."""
    p.add_argument("--rate", type=float, default=1000.0, metavar="HZ", help="controller / export rate [Hz] (default 1000)")


def add_robot(p, *, required: bool = True) -> None:
    """--robot ROBOT: a robot description file or the name of a bundled robot."""
    p.add_argument("--robot", required=required, metavar="ROBOT",
                   help="robot description (TOML, or TOML naming a URDF), or a bundled robot name (legbridge robot list)")


def add_check_options(p) -> None:
    """--rate, --duration, --margin, --friction, --supply-power, --regen-energy on parser ``p``."""
    add_rate(p)
    p.add_argument("--duration", type=float, default=None, metavar="S",
                   help="a finite test of S seconds, the plan repeated, for the winding temperature (default: the "
                        "plan repeated for as long as the test runs: periodic steady state and time to limit)")
    p.add_argument("--margin", type=float, default=0.1, metavar="FRACTION",
                   help="'near' band below each limit as a fraction of it (default 0.1)")
    p.add_argument("--friction", type=float, default=None, metavar="MU", help="ground friction coefficient (default: robot file)")
    p.add_argument("--supply-power", type=float, default=None, metavar="W",
                   help="total electrical power the supply can deliver [W] (default: not checked)")
    p.add_argument("--regen-energy", type=float, default=None, metavar="J",
                   help="energy the supply can absorb per step when the motors regenerate [J] (default: reported only)")
    p.add_argument("--max-flight-pitch", type=float, default=0.15, metavar="RAD",
                   help="body pitch in flight beyond which the landing is flagged [rad] (default 0.15, a stated choice)")
    p.add_argument("--min-clearance", type=float, default=0.02, metavar="M",
                   help="bipeds: least height of a swing foot above the ground over its generated swing [m] "
                        "(default 0.02, a stated choice)")
    add_gait(p)
    from .progress import add_quiet

    add_quiet(p)


def add_gait(p) -> None:
    """--gait GAIT: which leg of a biped takes each stance."""
    p.add_argument("--gait", default=None, metavar="GAIT",
                   help="bipeds: alternating[:left|right] (running), same-leg[:left|right] (hopping on one leg, "
                        "the other held), or both (two-legged hop); default: the plan's, else alternating:left")


def add_output(p, help_text: str, *, required: bool = False) -> None:
    """-o/--output OUT and --force (which replaces earlier outputs, never an input)."""
    p.add_argument("-o", "--output", required=required, default=None, metavar="OUT", help=help_text)
    p.add_argument("--force", action="store_true", help="replace outputs that exist (never an input file)")


def add_jobs(p) -> None:
    """--jobs N: local worker processes for sweeps."""
    p.add_argument("--jobs", type=int, default=None, metavar="N", help="worker processes for the sweep (default: all cores)")


def add_ground_offsets(p, help_text: str) -> None:
    """--ground-offsets LO:HI:N (and the hidden 0.1 names --heights, --sweep)."""
    p.add_argument("--ground-offsets", dest="ground_offsets", default=None, metavar="LO:HI:N", help=help_text)
    for old in OFFSET_OPTIONS[1:]:
        p.add_argument(old, dest="ground_offsets", default=None, help=argparse.SUPPRESS)


# CheckSettings field -> the option that sets it (messages name what the user typed)
OPTION_OF = {"rate_hz": "--rate", "duration_s": "--duration", "margin": "--margin", "friction": "--friction",
             "supply_power_w": "--supply-power", "regen_energy_j": "--regen-energy",
             "max_flight_pitch_rad": "--max-flight-pitch", "min_swing_clearance_m": "--min-clearance",
             "gait": "--gait"}


def settings_from_args(args):
    """CheckSettings from the shared options (CheckSettings validates the values; a refusal names the
    option)."""
    from legbridge.limits.checks.results import CheckSettings
    from legbridge.robots.errors import CheckSettingsError

    try:
        return CheckSettings(rate_hz=args.rate, duration_s=args.duration, margin=args.margin, friction=args.friction,
                             supply_power_w=args.supply_power, regen_energy_j=args.regen_energy,
                             max_flight_pitch_rad=args.max_flight_pitch,
                             min_swing_clearance_m=args.min_clearance, gait=args.gait)
    except CheckSettingsError as exc:
        raise CheckSettingsError(key=OPTION_OF.get(exc.key, exc.key), expected=exc.expected, found=exc.found) from exc


def offsets_from_args(args):
    """The ground offsets [m] asked for, or None."""
    if args.ground_offsets is None:
        return None
    from legbridge.limits.sweep.model import parse_offsets

    return parse_offsets(args.ground_offsets)


def jobs_from_args(args):
    """The --jobs value, validated (None = all cores)."""
    from legbridge.limits.sweep.runner import check_jobs

    return check_jobs(args.jobs)
