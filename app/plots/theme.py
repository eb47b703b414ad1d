"""Analysis-view plots that follow the light or dark palette like the comparison curves do."""

from __future__ import annotations

import pyqtgraph as pg
from PySide6.QtCore import QEvent, QObject

from ..window.theme import plot_colours

PENS = ("#1f5fa8", "#c8651b", "#2f8a3a", "#8a2f7c", "#6b6b6b")
"""Our own line colours for analysis plots (used where no candidate colour is known)."""


def candidate_colour(colours: list[str], index: int) -> str:
    """Candidate ``index``'s colour in the comparison (``colours``), else one of :data:`PENS`."""
    if 0 <= index < len(colours):
        return colours[index]
    return PENS[index % len(PENS)]


def apply_plot_palette(widget: pg.PlotWidget) -> None:
    """Background, axes, title and grid of ``widget`` from its current palette."""
    colours = plot_colours(widget.palette())
    fg = pg.mkColor(colours.foreground)
    widget.setBackground(colours.background)
    item = widget.getPlotItem()
    for name in ("left", "bottom"):
        axis = item.getAxis(name)
        axis.setPen(fg)
        axis.setTextPen(fg)
    title = item.titleLabel.text
    if title:
        item.setTitle(title, color=colours.foreground)
    item.showGrid(x=True, y=True, alpha=colours.grid_alpha)


class _PaletteFollower(QObject):
    """Re-applies the plot colours when the widget's or the application's palette changes."""

    def eventFilter(self, obj: QObject, event: QEvent) -> bool:
        if event.type() in (QEvent.Type.PaletteChange, QEvent.Type.ApplicationPaletteChange):
            apply_plot_palette(obj)
        return False


def follow_palette(widget: pg.PlotWidget) -> pg.PlotWidget:
    """Colour ``widget`` from the palette now and whenever the palette changes; returns it."""
    apply_plot_palette(widget)
    follower = _PaletteFollower(widget)
    widget.installEventFilter(follower)
    return widget
