"""Opening the window (Qt is imported here and nowhere on the command-line path)."""

from __future__ import annotations

import sys
from pathlib import Path


def launch_window(args: list[str]) -> int:
    """Open the comparison window: ``rungwise`` on the demo (or the last design), ``rungwise FILE``.

    Returns the process exit code (2 when the arguments are not one design file).
    """
    if len(args) > 1 or (args and args[0].startswith("-")):
        print("usage: rungwise [DESIGN_FILE] | rungwise <command> … (see rungwise --help)",
              file=sys.stderr)
        return 2
    from PySide6.QtWidgets import QApplication

    from .main_window import MainWindow

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
