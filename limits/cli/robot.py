"""``legbridge robot``: show a robot file's derived limits, export its leg as URDF.

    legbridge robot show FILE                      summary of segments, joints and derived limits
    legbridge robot export-urdf FILE -o OUT [--force]
    legbridge robot list                           the bundled robots

FILE is a robot TOML path or a bundled library name (e.g. ``lab-biped-leg``). Bad input raises a
LegbridgeError, which legbridge.limits.cli turns into one line on stderr and exit status 2.
"""

from __future__ import annotations

from pathlib import Path

from legbridge.limits.cautions import caution_lines
from legbridge.limits.cli.options import add_output
from legbridge.robots.files import check_outputs, write_atomic
from legbridge.robots.library import library_names, resolve_robot
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
    add_output(exp, "URDF file to write", required=True)
    exp.set_defaults(func=run_export)
    lst = sub.add_parser("list", help="list the bundled example robots (actuator data invented)")
    lst.set_defaults(func=run_list)


def run_list(args) -> int:
    """``legbridge robot list``: the bundled robots, one per line with its description file; exit 0."""
    for name in library_names():
        robot = load_robot(resolve_robot(name))
        print(f"{name[:-5]:<24} {len(robot.joints)} joints ({', '.join(robot.joint_names)}), "
              f"{robot.total_mass_kg:g} kg")
    return 0


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
    check_outputs([out], inputs=[src, robot.urdf.urdf_path if robot.urdf else None], force=args.force)
    write_atomic(out, export_urdf(robot), force=args.force)
    print(f"wrote {out}")
    return 0
