"""Test set-up shared by every test: Qt offscreen before any Qt import, deterministic seeds."""

from __future__ import annotations

import os

os.environ.setdefault("QT_QPA_PLATFORM", "offscreen")
os.environ.setdefault("PYQTGRAPH_QT_LIB", "PySide6")
