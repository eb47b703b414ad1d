"""The real window on the demo renders: a grab has many colours and dark text in the table."""

from __future__ import annotations

import numpy as np
from PySide6.QtCore import QPoint
from PySide6.QtGui import QImage


def _pixels(image: QImage) -> np.ndarray:
    image = image.convertToFormat(QImage.Format.Format_RGB32)
    ptr = image.constBits()
    arr = np.frombuffer(ptr, dtype=np.uint8, count=image.sizeInBytes())
    bgra = arr.reshape(image.height(), image.bytesPerLine() // 4, 4)[:, : image.width()]
    return bgra[..., 2::-1].copy()  # RGB32 is B, G, R, A in memory on little-endian machines


def test_window_on_demo_renders_text_and_curves(window, tmp_path):
    win = window  # the shared fixture: the real window on the demo, first results drawn
    path = tmp_path / "window.png"
    assert win.grab().save(str(path))
    img = QImage(str(path))
    assert (img.width(), img.height()) == (1366, 768)
    px = _pixels(img)
    colours = np.unique(px.reshape(-1, 3), axis=0)
    assert len(colours) > 200  # a blank or font-less grab has under ten
    # candidate colours are drawn in the curves
    for cand in win.model.state.candidates:
        rgb = np.array([int(cand.colour[i:i + 2], 16) for i in (1, 3, 5)])
        assert np.any(np.all(px == rgb, axis=-1))
    # dark text pixels (glyphs) inside the figures table
    table = win.table.viewport()
    top_left = table.mapTo(win, QPoint(0, 0))
    area = px[top_left.y(): top_left.y() + table.height(), top_left.x(): top_left.x() + table.width()]
    dark = np.all(area < 90, axis=-1).sum()
    assert dark > 500
    win.close()
    assert win.live.runner.active_count() == 0
