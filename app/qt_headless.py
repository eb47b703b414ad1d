"""Qt for commands that draw (plots, reports) with or without a screen."""

from __future__ import annotations

import os
import sys

_APP = None


def gui_application():
    """The running ``QGuiApplication``, creating one if needed.

    Without a display (no ``DISPLAY``/``WAYLAND_DISPLAY`` on Linux) Qt's ``offscreen`` platform is
    chosen before Qt is imported, unless ``QT_QPA_PLATFORM`` is already set.
    """
    global _APP
    if sys.platform.startswith("linux") and not (os.environ.get("DISPLAY")
                                                 or os.environ.get("WAYLAND_DISPLAY")):
        os.environ.setdefault("QT_QPA_PLATFORM", "offscreen")
    from PySide6.QtGui import QGuiApplication

    app = QGuiApplication.instance()
    if app is None:
        _APP = app = QGuiApplication([sys.argv[0] if sys.argv else "rungwise"])
    return app
