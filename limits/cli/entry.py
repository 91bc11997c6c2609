"""The ``legbridge`` command line: one sub-command per module of limits/cli/ (check, review, robot,
sweep, translate, after-test); shared options in limits/cli/options.py.

Exit status: 0 every case within the modelled limits, 1 a limit is exceeded (the review
is still written), 2 bad input (one message on stderr, no traceback, nothing written), 3 an
internal error (a bug: the run did not complete).
"""

from __future__ import annotations

import argparse
import importlib
import sys

from legbridge.robots.errors import LegbridgeError
from legbridge.robots.version import tool_version

# Sub-command modules, each with register(subparsers) that sets ``func(args) -> int``.
COMMAND_MODULES = ("robot", "translate", "check", "review", "sweep", "after_test")

EXIT_WITHIN, EXIT_EXCEEDS, EXIT_BAD_INPUT, EXIT_INTERNAL = 0, 1, 2, 3


class Terminated(BaseException):
    """SIGTERM, raised where the command is (not a KeyboardInterrupt, which the interpreter treats
    specially at exit): the same clean-up as an interrupt, exit 130."""


class _Parser(argparse.ArgumentParser):
    def error(self, message: str):  # one line, exit 2, like every other bad input (no usage block)
        print(f"legbridge: error: {self.prog}: {message} (see '{self.prog} --help')", file=sys.stderr)
        raise SystemExit(EXIT_BAD_INPUT)


def build_parser() -> argparse.ArgumentParser:
    """The argument parser with every sub-command registered."""
    parser = _Parser(
        prog="legbridge",
        description="Translate spring-mass leg plans into joint targets and review them against the hardware's modelled limits.",
    )
    parser.add_argument("--version", action="version", version=f"legbridge {tool_version()}")
    sub = parser.add_subparsers(dest="command", metavar="COMMAND", parser_class=_Parser)
    for name in COMMAND_MODULES:
        importlib.import_module(f"legbridge.limits.cli.{name}").register(sub)
    return parser


from .options import OFFSET_OPTIONS as RANGE_OPTIONS  # values LO:HI:N that may start with '-'


def attach_range_values(argv: list[str]) -> list[str]:
    """``--heights -0.05:0.05:5`` -> ``--heights=-0.05:0.05:5`` (the form argparse accepts)."""
    out: list[str] = []
    i = 0
    while i < len(argv):
        a = argv[i]
        if a in RANGE_OPTIONS and i + 1 < len(argv) and argv[i + 1].startswith("-") and ":" in argv[i + 1]:
            out.append(f"{a}={argv[i + 1]}")
            i += 2
            continue
        out.append(a)
        i += 1
    return out


def main(argv: list[str] | None = None) -> int:
    """Run the command line; returns the exit status (0 within, 1 exceeds, 2 bad input)."""
    parser = build_parser()
    args = parser.parse_args(attach_range_values(list(sys.argv[1:] if argv is None else argv)))
    if not getattr(args, "func", None):
        parser.print_help(sys.stderr)
        return EXIT_BAD_INPUT
    import signal

    def terminated(signum, frame):  # SIGTERM as an interrupt: the same clean-up (temporary files, workers)
        signal.signal(signal.SIGTERM, signal.SIG_IGN)  # once is enough: the clean-up is not interrupted again
        raise Terminated

    previous = signal.signal(signal.SIGTERM, terminated) if hasattr(signal, "SIGTERM") else None
    try:
        return int(args.func(args))
    except LegbridgeError as exc:
        print(f"legbridge: error: {exc}", file=sys.stderr)
        return EXIT_BAD_INPUT
    except BrokenPipeError:  # output piped into a program that stopped reading (e.g. head); before OSError,
        import os            # its base class

        os.dup2(os.open(os.devnull, os.O_WRONLY), sys.stdout.fileno())  # Python docs, "Note on SIGPIPE"
        return EXIT_EXCEEDS
    except OSError as exc:  # the file system refused (permissions, a full disk...): one line, no traceback
        where = f"{exc.filename}: " if getattr(exc, "filename", None) else ""
        print(f"legbridge: error: {where}{exc.strerror or exc}", file=sys.stderr)
        return EXIT_BAD_INPUT
    except (KeyboardInterrupt, Terminated):
        print("legbridge: interrupted; no output was written", file=sys.stderr)
        return 130
    except Exception as exc:  # a bug: fail closed, never a silent pass; the traceback on request
        import os
        import traceback

        if os.environ.get("LEGBRIDGE_TRACEBACK"):
            traceback.print_exc()
        print(f"legbridge: internal error ({type(exc).__name__}: {exc}); the run did not complete and nothing it "
              "would have written can be relied on. Please report it with the input files; set "
              "LEGBRIDGE_TRACEBACK=1 to see the traceback.", file=sys.stderr)
        return EXIT_INTERNAL
    finally:
        if previous is not None:
            signal.signal(signal.SIGTERM, previous)


if __name__ == "__main__":  # pragma: no cover
    sys.exit(main())
