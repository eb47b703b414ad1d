"""At 1366×768 every view of the real window is usable: no sideways scrollbar, no input cut off
at the side, and its text is really drawn (a missing font draws empty boxes). Screenshots of every
view are saved (to ``RUNGWISE_SCREENSHOTS`` when set, for looking at them)."""

from __future__ import annotations

import os
from pathlib import Path

import numpy as np
import pytest
from PySide6.QtCore import QPoint, Qt
from PySide6.QtGui import QImage
from PySide6.QtWidgets import (
    QAbstractScrollArea,
    QAbstractSpinBox,
    QApplication,
    QComboBox,
    QGraphicsView,
    QLabel,
    QLineEdit,
    QPushButton,
    QScrollArea,
)

INPUTS = (QLineEdit, QComboBox, QAbstractSpinBox, QPushButton)


def _pixels(image: QImage) -> np.ndarray:
    image = image.convertToFormat(QImage.Format.Format_Grayscale8)
    arr = np.frombuffer(image.constBits(), dtype=np.uint8, count=image.sizeInBytes())
    return arr.reshape(image.height(), image.bytesPerLine())[:, : image.width()].copy()


def _drawn(text: str, font) -> np.ndarray:
    label = QLabel(text)
    label.setFont(font)
    label.setStyleSheet("background: white; color: black;")
    label.adjustSize()
    return _pixels(label.grab().toImage())


def test_text_is_drawn_with_real_glyphs(qapp):
    # with no usable font every character comes out as the same empty box: two different
    # strings then draw the same pixels, and a symbol draws like a character no font has
    font = QApplication.font()
    words = _drawn("Max |INL| 0.0969 LSB", font)
    other = _drawn("Gain error -9.104 %", font)
    assert (words < 128).sum() > 40  # dark glyph pixels
    assert words.shape != other.shape or not np.array_equal(words, other)
    missing = _drawn("\ue000", font)  # a private-use code point: the missing-glyph box
    for symbol in "Ωµ◆½±√≤°■Δ":
        drawn = _drawn(symbol, font)
        assert (drawn < 128).sum() > 3, symbol
        assert drawn.shape != missing.shape or not np.array_equal(drawn, missing), symbol


def _tabs(win):
    for i in range(win.tabs.count()):
        win.tabs.setCurrentIndex(i)
        yield i, win.tabs.tabText(i), win.tabs.widget(i)


@pytest.mark.parametrize("size", [(1366, 768), (1920, 1080)])
def test_every_view_fits_the_screen(window, qtbot, tmp_path, size):
    folder = Path(os.environ.get("RUNGWISE_SCREENSHOTS", tmp_path))
    folder.mkdir(parents=True, exist_ok=True)
    window.resize(*size)
    window.arrange_panels()
    qtbot.wait(50)
    for i, title, holder in _tabs(window):
        qtbot.wait(50)
        QApplication.processEvents()
        path = folder / f"{size[0]}x{size[1]}-{i}-{title.replace(' ', '-')}.png"
        assert window.grab().save(str(path))
        assert (QImage(str(path)).width(), QImage(str(path)).height()) == size
        if isinstance(holder, QScrollArea):
            assert not holder.horizontalScrollBar().isVisible(), title
            for plot in holder.widget().findChildren(QGraphicsView):
                if plot.isVisibleTo(holder.widget()):
                    assert plot.height() >= 150, (title, plot.objectName())
            view = holder.widget()
            for w in (w for kind in INPUTS for w in view.findChildren(kind)):
                if not w.isVisibleTo(view) or w.width() <= 1 or w.objectName().startswith("qt_"):
                    continue
                left = w.mapTo(holder.viewport(), QPoint(0, 0)).x()
                assert left >= 0, (title, w.objectName())
                assert left + w.width() <= holder.viewport().width() + 1, (title, w.objectName())
                # not squeezed below what it needs to show itself
                assert w.width() >= min(w.minimumSizeHint().width(), 40), (title, w.objectName())
        for table in holder.findChildren(QAbstractScrollArea) if holder is not window.plots else []:
            policy = table.horizontalScrollBarPolicy()
            if table.isVisible() and policy != Qt.ScrollBarPolicy.ScrollBarAlwaysOff \
                    and table.objectName().startswith("table_"):
                assert not table.horizontalScrollBar().isVisible(), (title, table.objectName())
    # every view's tab is on screen (no scroll arrows on the tab bar)
    bar = window.tabs.tabBar()
    assert bar.tabRect(bar.count() - 1).right() <= bar.width(), size
    # the figures table shows every candidate's column without scrolling sideways
    window.dock_figures.raise_()
    QApplication.processEvents()
    assert not window.table.horizontalScrollBar().isVisible()


def test_value_fields_get_room_on_a_wide_screen(window, qtbot):
    window.resize(1920, 1080)
    window.arrange_panels()
    qtbot.wait(50)
    QApplication.processEvents()
    field = window.pane.findChild(QLineEdit, "edit_vref")
    caption = window.pane.fontMetrics().horizontalAdvance("Reference voltage")
    assert field.width() >= caption  # the value is at least as wide as a long caption
    for name in ("combo_topology", "combo_output"):  # the longest network name is not cut
        combo = window.pane.findChild(QComboBox, name)
        longest = max(combo.fontMetrics().horizontalAdvance(combo.itemText(i))
                      for i in range(combo.count()))
        assert combo.width() > longest
