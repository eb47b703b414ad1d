"""The curves follow the palette (light/dark) and the readout lists every candidate at a code."""

from __future__ import annotations

from PySide6.QtGui import QPalette
from PySide6.QtWidgets import QApplication

from rungwise.app.window.theme import dark_palette, is_dark


def test_plots_follow_a_palette_change(window, qtbot):
    app = QApplication.instance()
    old = app.palette()
    try:
        app.setPalette(dark_palette())
        qtbot.waitUntil(lambda: window.plots.widgets["output"].backgroundBrush().color().name()
                        == dark_palette().color(QPalette.ColorRole.Base).name(), timeout=60000)
        axis = window.plots.plots["output"].getAxis("left")
        assert axis.textPen().color().name() == dark_palette().color(QPalette.ColorRole.Text).name()
        assert is_dark(window.plots.palette())
    finally:
        app.setPalette(old)
    qtbot.waitUntil(lambda: window.plots.widgets["output"].backgroundBrush().color().name()
                    == old.color(QPalette.ColorRole.Base).name(), timeout=60000)


def test_readout_lists_every_candidate_at_the_code(window):
    window.plots.show_readout(100)
    text = window.plots.readout.text()
    assert "Code 100" in text
    for cand in window.model.state.candidates:
        assert cand.name in text
        assert cand.colour in text
    ev = window.live.latest.results[0].evaluation
    assert f"{ev.vout[100]:.4g} V" in text  # the R-2R ladder's output at code 100
    assert window.plots.cursors["dnl"].isVisible()
    assert window.plots.cursors["dnl"].value() == 100
    window.plots.show_readout(-1)
    assert not window.plots.cursors["dnl"].isVisible()
