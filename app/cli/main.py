"""The headless command line: ``rungwise <command> …``.

Each command lives in its own module with ``NAME``, ``HELP``, ``add_arguments(parser)`` and
``run(args) -> int``; register it in ``COMMANDS``. Exit codes: 0 success, 2 bad input (the message
names the field and the allowed range; a file or folder that cannot be read or written is bad
input too), 1 internal error. Never imports Qt.
"""

from __future__ import annotations

import argparse
import sys
from types import ModuleType

from rungwise.core.errors import RungwiseError

from . import bom, compute, diagnose, export, netlist, new, report, search, sweep

COMMANDS: dict[str, ModuleType] = {
    m.NAME: m for m in (compute, new, export, report, bom, diagnose, sweep, netlist, search)}
"""Command name → module implementing it."""

EXIT_OK, EXIT_INTERNAL, EXIT_BAD_INPUT = 0, 1, 2


class _Parser(argparse.ArgumentParser):
    """An argument parser that raises instead of exiting, so every error takes one path."""

    def error(self, message: str) -> None:  # type: ignore[override]
        raise RungwiseError(f"{self.prog}: {message}")


def build_parser() -> argparse.ArgumentParser:
    """The top-level parser with one sub-parser per registered command."""
    parser = _Parser(prog="rungwise", description="Resistor-network DAC design, headless. Run "
                     "'rungwise' with no command to open the window on the demo design.")
    parser.add_argument("--version", action="version", version="rungwise 0.1.0")
    sub = parser.add_subparsers(dest="command", parser_class=_Parser)
    for name, module in COMMANDS.items():
        p = sub.add_parser(name, help=module.HELP, description=module.HELP)
        module.add_arguments(p)
    return parser


def run_cli(argv: list[str]) -> int:
    """Parse ``argv`` and run the command; print errors on stderr and return the exit code."""
    try:
        if any("\x00" in a for a in argv):  # no shell can pass one; a file name cannot hold one
            raise RungwiseError("an argument holds a NUL character")
        args = build_parser().parse_args(argv)
        if args.command is None:
            build_parser().print_help()
            return EXIT_OK
        return int(COMMANDS[args.command].run(args) or EXIT_OK)
    except SystemExit as exc:  # --help / --version
        return int(exc.code or 0)
    except RungwiseError as exc:
        print(f"rungwise: error: {exc}", file=sys.stderr)
        return EXIT_BAD_INPUT
    except BrokenPipeError:
        return EXIT_OK
    except OSError as exc:  # a path given by the user: no such folder, a folder, a full disk …
        where = f" {exc.filename}" if exc.filename else ""
        print(f"rungwise: error: cannot use{where}: {exc.strerror or exc}", file=sys.stderr)
        return EXIT_BAD_INPUT
    except Exception as exc:  # last resort: never a traceback for a user
        print(f"rungwise: internal error: {type(exc).__name__}: {exc}", file=sys.stderr)
        return EXIT_INTERNAL
