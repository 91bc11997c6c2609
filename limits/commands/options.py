"""The check options shared by ``check``, ``review`` and ``sweep``, and the settings they make."""

from __future__ import annotations


def add_check_options(p) -> None:
    """--rate, --duration, --margin, --friction, --supply-power, --regen-energy on parser ``p``."""
    p.add_argument("--rate", type=float, default=1000.0, metavar="HZ", help="controller / export rate [Hz] (default 1000)")
    p.add_argument("--duration", type=float, default=None, metavar="S",
                   help="test duration for the thermal model [s], plan repeated (default: one plan period)")
    p.add_argument("--margin", type=float, default=0.1, metavar="FRACTION",
                   help="'near' band below each limit as a fraction of it (default 0.1)")
    p.add_argument("--friction", type=float, default=None, metavar="MU", help="ground friction coefficient (default: robot file)")
    p.add_argument("--supply-power", type=float, default=None, metavar="W",
                   help="total electrical power the supply can deliver [W] (default: not checked)")
    p.add_argument("--regen-energy", type=float, default=None, metavar="J",
                   help="energy the supply can absorb per step when the motors regenerate [J] (default: reported only)")


def settings_from_args(args):
    """CheckSettings from the shared options (CheckSettings validates the values)."""
    from legbridge.limits.results import CheckSettings

    return CheckSettings(rate_hz=args.rate, duration_s=args.duration, margin=args.margin, friction=args.friction,
                         supply_power_w=args.supply_power, regen_energy_j=args.regen_energy)
