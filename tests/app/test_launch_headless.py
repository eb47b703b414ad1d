"""Starting the program on a machine with no screen prints the demo comparison, not a crash."""

from __future__ import annotations

import os
import subprocess
import sys

from rungwise.core.demo import DEMO_BASE


def test_no_display_falls_back_to_text():
    env = {k: v for k, v in os.environ.items()
           if k not in {"DISPLAY", "WAYLAND_DISPLAY", "QT_QPA_PLATFORM"}}
    run = subprocess.run([sys.executable, "-m", "rungwise.app"], capture_output=True, text=True,
                         env=env, timeout=120)
    assert run.returncode == 0, run.stderr
    assert "no screen found" in run.stderr
    assert "xvfb-run" in run.stderr
    assert DEMO_BASE.label in run.stdout  # the demo's first candidate, as a text table
    assert "Max |DNL|" in run.stdout
