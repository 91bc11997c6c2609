"""What the leg is: robot description files -> validated Robot -> Pinocchio LegModel."""

from .errors import InputFileNotFound, LegbridgeError, OutputExistsError, RobotFileError
from .leg_model import LegModel, build_leg_model
from .robot import Actuator, Joint, Robot, Segment, Spring, ThermalModel, UrdfSource
from .toml_reader import load_robot

__all__ = [
    "Actuator", "InputFileNotFound", "Joint", "LegModel", "LegbridgeError", "OutputExistsError", "Robot",
    "RobotFileError", "Segment", "Spring", "ThermalModel", "UrdfSource", "build_leg_model", "load_robot",
]
