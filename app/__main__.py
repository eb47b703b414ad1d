"""Entry point: ``rungwise`` opens the window; ``rungwise <command> …`` runs headless.

Qt is imported only on the branch that opens a window, so the command line never loads it.
"""

from __future__ import annotations

import sys


def main(argv: list[str] | None = None) -> int:
    """Run the program; returns the process exit code (0 ok, 1 internal error, 2 bad input)."""
    from .cli.main import COMMANDS, run_cli

    args = list(sys.argv[1:] if argv is None else argv)
    if args and (args[0] in COMMANDS or args[0] in {"-h", "--help", "--version"}):
        return run_cli(args)
    from .launch import launch_window

    return launch_window(args)


if __name__ == "__main__":
    sys.exit(main())
