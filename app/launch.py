"""Opening the window (Qt is imported here and nowhere on the command-line path)."""

from __future__ import annotations


def launch_window(args: list[str]) -> int:
    """Until the window lands: print the demo comparison so the main job is visible."""
    from .cli import run_cli

    return run_cli(["compute", *args])
