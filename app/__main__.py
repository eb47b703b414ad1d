"""Entry point: ``rungwise`` opens the window; ``rungwise <command> …`` runs headless.

Qt is imported only on the branch that opens a window, so the command line never loads it.
"""

from __future__ import annotations

import sys


def printable_output() -> None:
    """Let output that cannot show Ω, µ or ° (a Windows console or file in a legacy code page)
    replace those characters instead of failing with an encoding error."""
    for stream in (sys.stdout, sys.stderr):
        try:
            "Ωµ°≤".encode(stream.encoding or "ascii")
        except (UnicodeEncodeError, LookupError):
            reconfigure = getattr(stream, "reconfigure", None)
            if reconfigure is not None:
                reconfigure(errors="replace")
        except AttributeError:
            pass


def main(argv: list[str] | None = None) -> int:
    """Run the program; returns the process exit code (0 ok, 1 internal error, 2 bad input)."""
    from .cli.main import COMMANDS, run_cli

    printable_output()
    args = list(sys.argv[1:] if argv is None else argv)
    if args and (args[0] in COMMANDS or args[0] in {"-h", "--help", "--version"}):
        return run_cli(args)
    from .launch import launch_window

    return launch_window(args)


if __name__ == "__main__":
    sys.exit(main())
