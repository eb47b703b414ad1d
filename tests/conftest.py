"""Test set-up shared by every test: Qt offscreen before any Qt import, deterministic seeds."""

from __future__ import annotations

import os

os.environ.setdefault("QT_QPA_PLATFORM", "offscreen")
os.environ.setdefault("PYQTGRAPH_QT_LIB", "PySide6")


def pytest_runtest_setup(item):
    """A test marked ``ngspice`` skips when ngspice is missing, and fails instead when CI=true."""
    if item.get_closest_marker("ngspice") is not None:
        from references.spice import require_ngspice

        require_ngspice()
