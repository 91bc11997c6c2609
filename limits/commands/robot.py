"""``legbridge robot``: show a robot file's derived limits, export its leg as URDF.

    legbridge robot show FILE                      summary of segments, joints and derived limits
    legbridge robot export-urdf FILE -o OUT [--force]

FILE is a robot TOML path or a bundled library name (e.g. ``lab-biped-leg``). Bad input raises a
LegbridgeError, which legbridge.limits.cli turns into one line on stderr and exit status 2.
"""

from __future__ import annotations

from pathlib import Path

from legbridge.limits.cautions import caution_lines
from legbridge.robots.errors import OutputExistsError
from legbridge.robots.files import write_atomic
from legbridge.robots.library import resolve_robot
from legbridge.robots.summary import robot_summary
from legbridge.robots.toml_reader import load_robot
from legbridge.robots.urdf_export import export_urdf


def register(subparsers) -> None:
    """Add the ``robot`` sub-command to ``legbridge`` (sets ``func``)."""
    p = subparsers.add_parser("robot", help="show a robot description's derived limits, or export it as URDF")
    sub = p.add_subparsers(dest="robot_command", metavar="ACTION", parser_class=type(p))
    show = sub.add_parser("show", help="print segments, joints, ranges and derived actuator limits")
    show.add_argument("file", metavar="FILE", help="robot TOML file or bundled robot name")
    show.set_defaults(func=run_show)
    exp = sub.add_parser("export-urdf", help="write the sagittal leg model as a URDF file")
    exp.add_argument("file", metavar="FILE", help="robot TOML file or bundled robot name")
    exp.add_argument("-o", "--output", required=True, metavar="OUT", help="URDF file to write")
    exp.add_argument("--force", action="store_true", help="overwrite OUT if it exists")
    exp.set_defaults(func=run_export)


def run_show(args) -> int:
    """``legbridge robot show``: print the summary; exit status 0."""
    robot = load_robot(resolve_robot(args.file))
    print(robot_summary(robot))
    print()
    print("\n".join(caution_lines()))
    return 0


def run_export(args) -> int:
    """``legbridge robot export-urdf``: write the URDF atomically; exit status 0."""
    src = resolve_robot(args.file)
    robot = load_robot(src)
    out = Path(args.output)
    inputs = {src.resolve()} | ({Path(robot.urdf.urdf_path).resolve()} if robot.urdf else set())
    if out.resolve() in inputs:
        raise OutputExistsError("refusing to overwrite an input file", path=str(out))
    write_atomic(out, export_urdf(robot), force=args.force)
    print(f"wrote {out}")
    return 0
