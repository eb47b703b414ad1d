"""Writing the comparison's plots to a folder as PNG and/or SVG files (Qt, works with no display)."""

from __future__ import annotations

from collections.abc import Sequence
from pathlib import Path

from rungwise.core import Evaluation

from ..qt_headless import gui_application
from .specs import comparison_plots


def export_plots(evs: Sequence[Evaluation], folder: Path, formats: Sequence[str] = ("png", "svg")
                 ) -> list[Path]:
    """Write every plot of ``comparison_plots(evs)`` as ``<folder>/<name>.<fmt>`` (the folder is
    created if missing); returns the paths."""
    gui_application()
    Path(folder).mkdir(parents=True, exist_ok=True)
    from .paint import save_plot  # after the platform is chosen

    written = []
    for spec in comparison_plots(evs):
        for fmt in formats:
            path = Path(folder) / f"{spec.name}.{fmt}"
            save_plot(spec, path)
            written.append(path)
    return written
