"""Code paths that differ on Windows and macOS have a fallback that works here too."""

from __future__ import annotations

import io
import sys

from rungwise.app import __main__ as entry
from rungwise.app.window import autosave


def test_output_in_a_legacy_code_page_replaces_what_it_cannot_show(monkeypatch):
    out = io.TextIOWrapper(io.BytesIO(), encoding="cp1252")  # a Windows console's code page
    err = io.TextIOWrapper(io.BytesIO(), encoding="ascii")
    monkeypatch.setattr(sys, "stdout", out)
    monkeypatch.setattr(sys, "stderr", err)
    assert entry.main(["compute", "--format", "table"]) == 0
    assert entry.main(["compute", "--set", "unit_r=1 %"]) == 2
    out.flush()
    err.flush()
    table = out.buffer.getvalue().decode("cp1252")
    assert "Ω" not in table
    assert "?" in table  # Ω shown as '?', the rest readable
    assert "unit_r" in err.buffer.getvalue().decode("ascii")


def test_a_process_probe_without_posix_or_win32_counts_every_copy_as_left_behind(monkeypatch):
    import os

    assert autosave._running(os.getpid())
    monkeypatch.setattr(os, "name", "java")
    assert not autosave._running(os.getpid() + 1)
    monkeypatch.setattr(os, "name", "nt")  # no kernel32 here: the probe answers "not running"
    assert not autosave._running(os.getpid() + 1)
