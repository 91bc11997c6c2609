"""Example robots shipped with legbridge (package data). Every number in them is invented, except the
geometry and inertia of bolt-biped, which come from a public robot description (see bolt-biped.toml):
its actuator data are invented too. None describes the actuators of a real robot."""

from importlib import resources
from pathlib import Path


def library_path(name: str) -> Path:
    """Path of a bundled robot file, e.g. ``library_path('example-leg.toml')``."""
    p = resources.files(__name__) / name
    return Path(str(p))


def library_names() -> list[str]:
    """File names of the bundled robot descriptions (``*.toml``)."""
    return sorted(p.name for p in resources.files(__name__).iterdir() if p.name.endswith(".toml"))


def resolve_robot(name_or_path) -> Path:
    """An existing file path as given, else a bundled robot by name ('lab-biped-leg' or 'lab-biped-leg.toml')."""
    from ..errors import InputFileNotFound

    p = Path(name_or_path)
    if p.is_file() or p.parent != Path("."):
        return p  # a path: a missing file is reported by whoever reads it
    names = library_names()
    if p.parent == Path(".") and (p.name in names or p.name + ".toml" in names):
        return library_path(p.name if p.name in names else p.name + ".toml")
    raise InputFileNotFound("no such file or bundled robot", path=str(p), hint=f"bundled robots: {[n[:-5] for n in names]}")


def as_robot(robot):
    """A Robot as given, or the Robot of a description file path or bundled robot name."""
    from ..robot import Robot
    from ..toml_reader import load_robot

    if isinstance(robot, Robot):
        return robot
    return load_robot(resolve_robot(robot))
