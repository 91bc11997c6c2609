"""The project's exception family.

Every error legbridge raises on purpose derives from :class:`LegbridgeError`. Subclasses also
inherit the matching built-in (``ValueError``, ``FileNotFoundError``...) so callers that catch the
built-in keep working. Messages name the file, the key or row, what was expected and what was
found; the command line prints the message alone (no traceback) and exits with status 2.
"""

from __future__ import annotations


class LegbridgeError(Exception):
    """Base of every deliberate legbridge error.

    Parameters are all optional; the message is assembled as
    ``<path>: <row/key>: expected <expected>, found <found>. <hint>``.
    """

    def __init__(
        self,
        message: str | None = None,
        *,
        path: str | None = None,
        key: str | None = None,
        row: int | None = None,
        expected: str | None = None,
        found: object = None,
        hint: str | None = None,
    ) -> None:
        self.path = None if path is None else str(path)
        self.key = key
        self.row = row
        self.expected = expected
        self.found = found
        self.hint = hint
        parts: list[str] = []
        if self.path:
            parts.append(self.path)
        if row is not None:
            parts.append(f"row {row}")
        if key:
            parts.append(f"'{key}'" if " " not in key else key)
        head = ": ".join(parts)
        body = message or ""
        if expected is not None:
            body = (body + "; " if body else "") + f"expected {expected}, found {_show(found)}"
        if hint:
            body = (body + ". " if body else "") + hint
        text = f"{head}: {body}" if head and body else (head or body or "legbridge error")
        super().__init__(text)


class Described(str):
    """What was found, described in words ("nothing", "a folder", "3 columns"): shown as written,
    where a value taken from the input is shown quoted (so blanks and case are visible)."""


def _show(value: object) -> str:
    if isinstance(value, Described):
        return str(value)
    if isinstance(value, str):
        return repr(value)
    if isinstance(value, float):
        return f"{value:g}"
    return str(value)


class RobotFileError(LegbridgeError, ValueError):
    """A robot description (TOML, URDF or actuator table) is missing, malformed or implausible."""


class InputFileNotFound(LegbridgeError, FileNotFoundError):
    """An input file named on the command line or in a description does not exist."""


class OutputExistsError(LegbridgeError, FileExistsError):
    """An output file exists and overwriting it was not asked for (``--force``)."""


class OutputFolderError(LegbridgeError, NotADirectoryError):
    """An output folder is missing, or the output path is a file where a folder is needed."""


class UsageError(LegbridgeError, ValueError):
    """A command or function was given an impossible combination or value of options."""


class PlanFormatError(LegbridgeError, ValueError):
    """A plan file (or a plan about to be written) is malformed, inconsistent or not evaluable.

    CSV rows are the line numbers a spreadsheet shows (header = row 1 when there are no comment lines)."""


class PlanScalingError(PlanFormatError):
    """A nondimensional plan cannot be scaled to SI: the nominal leg length or mass is not given."""


class ResampleError(LegbridgeError, ValueError):
    """A plan case cannot be resampled at the requested rate."""


class TargetsExportError(LegbridgeError, ValueError):
    """Joint targets cannot be written as asked (format, rate, inconsistent cases)."""


class SlipInputError(LegbridgeError, ValueError):
    """A spring-mass parameter, policy, initial state or simulation setting is invalid."""


class CheckSettingsError(LegbridgeError, ValueError):
    """A check setting is out of its allowed range."""


class SweepInputError(LegbridgeError, ValueError):
    """A sweep cannot be set up from the inputs given (plan without policy, bad offsets...)."""


class SchedulerError(LegbridgeError, ConnectionError):
    """The Dask scheduler could not be reached or is not usable."""


class CorrectedTargetsError(LegbridgeError, ValueError):
    """The modified targets cannot be written (no QP result, a failed QP, an unmarked file name)."""


class LogFormatError(LegbridgeError, ValueError):
    """A hardware log or its column mapping cannot be read (unknown or missing column, unit, bad value)."""


class AlignmentError(LegbridgeError, ValueError):
    """A hardware log cannot be credibly aligned with the reviewed targets (no sync, no matching motion)."""


class IdentificationError(LegbridgeError, ValueError):
    """A parameter cannot be identified from the log (too few samples, no excitation, a singular fit)."""
