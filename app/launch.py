"""Opening the window (Qt is imported here and nowhere on the command-line path)."""

from __future__ import annotations

import os
import sys
from pathlib import Path

NO_DISPLAY_HINT = (
    "rungwise: no screen found (neither DISPLAY nor WAYLAND_DISPLAY is set), so the window cannot "
    "open; showing the comparison as text instead.\n"
    "  To open the window on a machine without a screen: xvfb-run -a rungwise\n"
    "  Headless commands: rungwise --help\n")


def has_display() -> bool:
    """Whether Qt can open a window here (Linux needs X11 or Wayland; a set platform counts)."""
    if not sys.platform.startswith("linux") or os.environ.get("QT_QPA_PLATFORM"):
        return True
    return bool(os.environ.get("DISPLAY") or os.environ.get("WAYLAND_DISPLAY"))


def launch_window(args: list[str]) -> int:
    """Open the comparison window: ``rungwise`` on the demo (or the last design), ``rungwise FILE``.

    Returns the process exit code (2 when the arguments are not one design file).
    """
    if len(args) > 1 or (args and args[0].startswith("-")):
        print("usage: rungwise [DESIGN_FILE] | rungwise <command> … (see rungwise --help)",
              file=sys.stderr)
        return 2
    if not has_display():
        from .cli.main import run_cli

        print(NO_DISPLAY_HINT, file=sys.stderr)
        return run_cli(["compute", *args])
    from PySide6.QtWidgets import QApplication

    from .window.main_window import MainWindow

    app = QApplication.instance() or QApplication([sys.argv[0] if sys.argv else "rungwise"])
    app.setApplicationName("Rungwise")
    app.setOrganizationName("Rungwise")
    app.setDesktopFileName("rungwise")
    window = MainWindow()
    target = Path(args[0]) if args else window.last_file()
    if target is not None:
        window.open_file(target)
    window.show()
    window.files.offer_recovery()  # a comparison left unsaved by a crash
    return app.exec()
