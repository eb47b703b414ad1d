"""Drawing a :class:`PlotSpec` with QPainter, and saving plots as PNG or SVG.

The same painter code serves the PNG export (``QImage``), the SVG export (``QSvgGenerator``) and
the report, so every output shows the same curves. Needs a ``QGuiApplication``
(``qt_headless.gui_application``).
"""

from __future__ import annotations

from collections.abc import Sequence
from pathlib import Path

import numpy as np
from PySide6.QtCore import QPointF, QRectF, QSize, Qt
from PySide6.QtGui import QColor, QFont, QImage, QPainter, QPen, QPolygonF

from rungwise.core.formatting import format_si

from .specs import PlotSpec, axis_range, nice_ticks

PALETTE = ("#1f5fa8", "#c8501e", "#2e8b57", "#8a3f9e", "#b08800", "#4a4a4a")
"""Curve colours, in candidate order."""


def _fmt(v: float, step: float) -> str:
    if v == 0:
        return "0"
    if abs(v) >= 1e5 or abs(v) < 1e-3:  # an SI prefix, never an exponent
        return format_si(v, "", 3)
    decimals = max(0, -int(np.floor(np.log10(step)))) if step < 1 else 0
    return f"{v:.{decimals}f}"


def _runs(x: np.ndarray, y: np.ndarray) -> list[tuple[np.ndarray, np.ndarray]]:
    """Consecutive finite stretches of a curve."""
    ok = np.isfinite(x) & np.isfinite(y)
    out = []
    idx = np.flatnonzero(ok)
    if idx.size == 0:
        return out
    breaks = np.flatnonzero(np.diff(idx) > 1) + 1
    for part in np.split(idx, breaks):
        out.append((x[part], y[part]))
    return out


def paint_plot(painter: QPainter, rect: QRectF, spec: PlotSpec,
               palette: Sequence[str] | None = None) -> None:
    """Draw ``spec`` inside ``rect`` (device units): frame, grid, ticks, curves, legend, labels.

    ``palette`` gives the curve colours in candidate order (default :data:`PALETTE`)."""
    palette = tuple(palette or ()) + PALETTE[len(palette or ()):]
    painter.save()
    painter.setRenderHint(QPainter.RenderHint.Antialiasing, True)
    unit = max(rect.height() / 40.0, rect.width() / 80.0)  # wide, short plots keep legible text
    font = QFont("DejaVu Sans")
    font.setPixelSize(max(6, round(unit * 1.1)))
    painter.setFont(font)
    painter.fillRect(rect, QColor("white"))
    xs = np.concatenate([np.asarray(s.x, float) for s in spec.series] or [np.zeros(1)])
    ys = np.concatenate([np.asarray(s.y, float) for s in spec.series] or [np.zeros(1)])
    x0, x1 = axis_range(xs)
    y0, y1 = axis_range(ys, pad=0.05)
    xt, yt = nice_ticks(x0, x1), nice_ticks(y0, y1)
    legend_rows = (len(spec.series) + 2) // 3
    area = QRectF(rect.left() + unit * 7, rect.top() + unit * (3.2 + 1.5 * legend_rows),
                  rect.width() - unit * 8.5, rect.height() - unit * (7.5 + 1.5 * legend_rows))

    def px(x):
        return area.left() + (np.asarray(x) - x0) / (x1 - x0) * area.width()

    def py(y):
        return area.bottom() - (np.asarray(y) - y0) / (y1 - y0) * area.height()

    grid = QPen(QColor("#dddddd"))
    grid.setWidthF(unit * 0.06)
    text_pen = QPen(QColor("#222222"))
    for v in xt:
        painter.setPen(grid)
        painter.drawLine(QPointF(px(v), area.top()), QPointF(px(v), area.bottom()))
        painter.setPen(text_pen)
        painter.drawText(QRectF(px(v) - unit * 4, area.bottom() + unit * 0.4, unit * 8, unit * 1.6),
                         Qt.AlignmentFlag.AlignHCenter | Qt.AlignmentFlag.AlignTop,
                         _fmt(v, float(xt[1] - xt[0]) if xt.size > 1 else 1.0))
    for v in yt:
        painter.setPen(grid)
        painter.drawLine(QPointF(area.left(), py(v)), QPointF(area.right(), py(v)))
        painter.setPen(text_pen)
        painter.drawText(QRectF(rect.left(), py(v) - unit * 0.8, unit * 6.6, unit * 1.6),
                         Qt.AlignmentFlag.AlignRight | Qt.AlignmentFlag.AlignVCenter,
                         _fmt(v, float(yt[1] - yt[0]) if yt.size > 1 else 1.0))
    frame = QPen(QColor("#444444"))
    frame.setWidthF(unit * 0.08)
    painter.setPen(frame)
    painter.drawRect(area)
    for i, s in enumerate(spec.series):
        pen = QPen(QColor(palette[(i if s.colour is None else s.colour) % len(palette)]))
        pen.setWidthF(unit * 0.12)
        if s.dashed:
            pen.setStyle(Qt.PenStyle.DashLine)
        painter.setPen(pen)
        for rx, ry in _runs(np.asarray(s.x, float), np.asarray(s.y, float)):
            if rx.size < 2:
                continue
            poly = QPolygonF([QPointF(a, b) for a, b in zip(px(rx).tolist(), py(ry).tolist(),
                                                            strict=True)])
            painter.drawPolyline(poly)
        col_w = area.width() / 3
        lx = area.left() + col_w * (i % 3)
        ly = rect.top() + unit * (2.6 + 1.5 * (i // 3))
        painter.drawLine(QPointF(lx, ly + unit * 0.7), QPointF(lx + unit * 1.8, ly + unit * 0.7))
        painter.setPen(text_pen)
        painter.drawText(QRectF(lx + unit * 2.2, ly, col_w - unit * 2.4, unit * 1.5),
                         Qt.AlignmentFlag.AlignLeft | Qt.AlignmentFlag.AlignVCenter, s.label)
    painter.setPen(text_pen)
    bold = QFont(font)
    bold.setBold(True)
    painter.setFont(bold)
    painter.drawText(QRectF(rect.left(), rect.top() + unit * 0.5, rect.width(), unit * 2),
                     Qt.AlignmentFlag.AlignHCenter, spec.title)
    painter.setFont(font)
    painter.drawText(QRectF(area.left(), rect.bottom() - unit * 2.6, area.width(), unit * 2),
                     Qt.AlignmentFlag.AlignHCenter, spec.x_label)
    painter.translate(rect.left() + unit * 0.6, area.center().y())
    painter.rotate(-90)
    painter.drawText(QRectF(-area.height() / 2, 0, area.height(), unit * 2),
                     Qt.AlignmentFlag.AlignHCenter, spec.y_label)
    painter.restore()


def plot_image(spec: PlotSpec, width: int = 1200, height: int = 800,
               palette: Sequence[str] | None = None) -> QImage:
    """``spec`` drawn on a white ``QImage`` of ``width`` × ``height`` pixels."""
    img = QImage(width, height, QImage.Format.Format_ARGB32)
    img.fill(QColor("white"))
    painter = QPainter(img)
    try:
        paint_plot(painter, QRectF(0, 0, width, height), spec, palette)
    finally:
        painter.end()
    return img


def save_plot(spec: PlotSpec, path: Path, palette: Sequence[str] | None = None) -> None:
    """Write ``spec`` as PNG or SVG, chosen by the file's suffix (``.svg``, else PNG) — the one
    way a plot becomes a file; written to a temporary file and renamed, so a failure never leaves
    half a file."""
    if Path(path).suffix.lower() == ".svg":
        save_svg(spec, path, palette=palette)
    else:
        save_png(spec, path, palette=palette)


def save_png(spec: PlotSpec, path: Path, width: int = 1200, height: int = 800,
             palette: Sequence[str] | None = None) -> None:
    """Write ``spec`` as a PNG image."""
    from rungwise.core.atomic import write_atomically

    img = plot_image(spec, width, height, palette)

    def write(tmp: str) -> None:
        if not img.save(tmp, "PNG"):
            raise OSError(f"Qt could not write a PNG image to {path}")

    write_atomically(path, write)


def save_svg(spec: PlotSpec, path: Path, width: int = 900, height: int = 600,
             palette: Sequence[str] | None = None) -> None:
    """Write ``spec`` as an SVG drawing (vector curves)."""
    from PySide6.QtSvg import QSvgGenerator

    from rungwise.core.atomic import write_atomically

    def write(tmp: str) -> None:
        gen = QSvgGenerator()
        gen.setFileName(tmp)
        gen.setSize(QSize(width, height))
        gen.setViewBox(QRectF(0, 0, width, height))
        gen.setTitle(spec.title)
        gen.setDescription(f"{spec.y_label} against {spec.x_label}")
        painter = QPainter(gen)
        try:
            paint_plot(painter, QRectF(0, 0, width, height), spec, palette)
        finally:
            painter.end()

    write_atomically(path, write)
