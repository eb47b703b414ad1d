"""Analysis-view plots take their background from the palette and follow a change of it."""

from __future__ import annotations

import pyqtgraph as pg
from PySide6.QtGui import QPalette

from rungwise.app.plots.theme import follow_palette
from rungwise.app.window.theme import dark_palette


def _background(w: pg.PlotWidget) -> str:
    return w.backgroundBrush().color().name()


def test_plot_follows_palette(qtbot):
    w = follow_palette(pg.PlotWidget(title="Boards by worst error"))
    qtbot.addWidget(w)
    assert _background(w) == w.palette().color(QPalette.ColorRole.Base).name()
    dark = dark_palette()
    w.setPalette(dark)
    assert _background(w) == dark.color(QPalette.ColorRole.Base).name()


def test_analysis_views_do_not_keep_pyqtgraph_black(qtbot):
    from rungwise.app.views.explorer import ExplorerPane
    from rungwise.app.views.stats import StatisticsPane

    for cls in (ExplorerPane, StatisticsPane):
        view = cls()
        qtbot.addWidget(view)
        plots = view.findChildren(pg.PlotWidget)
        assert plots
        base = view.palette().color(QPalette.ColorRole.Base).name()
        assert all(_background(p) == base for p in plots), cls.__name__
