"""Drawing a :class:`rungwise.core.schematic.Schematic` with QPainter (window, hover card, report).

Our drawing style: resistors as tinted boxes with the designator in bold and the value as built
beside them, switches as a blade from a hollow pole to the closed throw (open throws hollow),
junction dots, the reference as a circled ± source, the amplifier as a triangle. ``accent`` (the
candidate's colour) tints the resistor boxes and the closed switch blades.
"""

from __future__ import annotations

from PySide6.QtCore import QPointF, QRectF, Qt
from PySide6.QtGui import QColor, QFont, QFontMetricsF, QImage, QPainter, QPen, QPolygonF

from rungwise.core import schematic as sm

INK = QColor("#26303a")
"""Wires and outlines."""
MUTED = QColor("#6b7683")
"""Node names and notes."""


class _Painter:
    def __init__(self, painter: QPainter, rect: QRectF, sch: sm.Schematic, accent: QColor) -> None:
        x0, y0, x1, y1 = sch.bounds()
        margin_l, margin_r, margin_t, margin_b = 1.9, 1.0, 1.0, 1.2  # room for labels, grid units
        gw, gh = (x1 - x0) + margin_l + margin_r, (y1 - y0) + margin_t + margin_b
        self.s = min(rect.width() / gw, rect.height() / gh)
        ox = rect.left() + (rect.width() - gw * self.s) / 2 + (margin_l - x0) * self.s
        oy = rect.top() + (rect.height() - gh * self.s) / 2 + (margin_t - y0) * self.s
        self.o = (ox, oy)
        self.p = painter
        self.accent = accent
        self.tint = QColor(accent)
        self.tint.setAlpha(40)
        self.font = QFont("DejaVu Sans")
        self.font.setPixelSize(max(9, round(self.s * 0.24)))
        self.bold = QFont(self.font)
        self.bold.setBold(True)
        self.small = QFont(self.font)
        self.small.setPixelSize(max(8, round(self.s * 0.2)))

    def pt(self, p: sm.Point) -> QPointF:
        return QPointF(self.o[0] + p[0] * self.s, self.o[1] + p[1] * self.s)

    def pen(self, colour: QColor = INK, width: float = 0.035, style=Qt.PenStyle.SolidLine,
            least: float = 1.0) -> QPen:
        pen = QPen(colour, max(least, width * self.s), style)
        pen.setCapStyle(Qt.PenCapStyle.RoundCap)
        return pen

    def text(self, at: QPointF, text: str, font: QFont, colour: QColor = INK,
             align: str = "left") -> None:
        self.p.setFont(font)
        self.p.setPen(colour)
        w = QFontMetricsF(font).horizontalAdvance(text)
        dx = {"left": 0.0, "center": -w / 2, "right": -w}[align]
        self.p.drawText(QPointF(at.x() + dx, at.y()), text)


def _draw(d: _Painter, it) -> None:
    p, s = d.p, d.s
    if isinstance(it, sm.Wire):
        p.setPen(d.pen())
        p.drawPolyline(QPolygonF([d.pt(q) for q in it.points]))
    elif isinstance(it, sm.Dot):
        p.setPen(Qt.PenStyle.NoPen)
        p.setBrush(INK)
        p.drawEllipse(d.pt(it.at), 0.07 * s, 0.07 * s)
    elif isinstance(it, sm.Resistor):
        _resistor(d, it)
    elif isinstance(it, sm.Capacitor):
        _capacitor(d, it)
    elif isinstance(it, sm.Switch):
        _switch(d, it)
    elif isinstance(it, sm.Ground):
        c = d.pt(it.at)
        p.setPen(d.pen())
        p.drawLine(c, QPointF(c.x(), c.y() + 0.2 * s))
        for k, half in enumerate((0.28, 0.18, 0.08)):
            y = c.y() + (0.2 + 0.09 * k) * s
            p.drawLine(QPointF(c.x() - half * s, y), QPointF(c.x() + half * s, y))
    elif isinstance(it, sm.Source):
        a, b = d.pt(it.plus), d.pt(it.minus)
        c = QPointF(a.x(), (a.y() + b.y()) / 2)
        r = 0.3 * s
        p.setPen(d.pen())
        p.setBrush(Qt.BrushStyle.NoBrush)
        p.drawLine(a, QPointF(c.x(), c.y() - r))
        p.drawLine(QPointF(c.x(), c.y() + r), b)
        p.drawEllipse(c, r, r)
        d.text(QPointF(c.x(), c.y() - r * 0.15), "+", d.font, align="center")
        d.text(QPointF(c.x(), c.y() + r * 0.75), "−", d.font, align="center")
        d.text(QPointF(c.x() - r * 1.3, c.y() - 0.05 * s), it.name, d.bold, align="right")
        d.text(QPointF(c.x() - r * 1.3, c.y() + 0.25 * s), it.value, d.font, align="right")
    elif isinstance(it, sm.Amplifier):
        _amplifier(d, it)
    elif isinstance(it, sm.Terminal):
        c = d.pt(it.at)
        p.setPen(d.pen())
        p.setBrush(QColor("white"))
        p.drawEllipse(c, 0.1 * s, 0.1 * s)
        d.text(QPointF(c.x() + 0.18 * s, c.y() + 0.08 * s), it.name, d.bold)
    elif isinstance(it, sm.Label):
        c = d.pt(it.at)
        if it.kind == "node":
            d.text(c, it.text, d.small, MUTED)
        elif it.kind == "ellipsis":
            d.text(c, it.text, d.bold, MUTED, align="center")
        else:
            d.text(c, it.text, d.small, MUTED, align="center")


def _resistor(d: _Painter, it: sm.Resistor) -> None:
    p, s = d.p, d.s
    a, b = d.pt(it.a), d.pt(it.b)
    vertical = abs(a.x() - b.x()) < 1e-6
    length = abs(b.y() - a.y()) if vertical else abs(b.x() - a.x())
    body = min(0.75 * s, length * 0.7)
    half_w = 0.13 * s
    p.setPen(d.pen())
    if vertical:
        top, bot = min(a.y(), b.y()), max(a.y(), b.y())
        mid = (top + bot) / 2
        p.drawLine(QPointF(a.x(), top), QPointF(a.x(), mid - body / 2))
        p.drawLine(QPointF(a.x(), mid + body / 2), QPointF(a.x(), bot))
        box = QRectF(a.x() - half_w, mid - body / 2, 2 * half_w, body)
        label_at = QPointF(a.x() + half_w + 0.08 * s, mid - 0.04 * s)
        value_at = QPointF(a.x() + half_w + 0.08 * s, mid + 0.24 * s)
        align = "left"
    else:
        left, right = min(a.x(), b.x()), max(a.x(), b.x())
        mid = (left + right) / 2
        p.drawLine(QPointF(left, a.y()), QPointF(mid - body / 2, a.y()))
        p.drawLine(QPointF(mid + body / 2, a.y()), QPointF(right, a.y()))
        box = QRectF(mid - body / 2, a.y() - half_w, body, 2 * half_w)
        label_at = QPointF(mid, a.y() - half_w - 0.3 * s)
        value_at = QPointF(mid, a.y() - half_w - 0.06 * s)
        align = "center"
    p.setBrush(d.tint)
    p.drawRoundedRect(box, 0.04 * s, 0.04 * s)
    d.text(label_at, it.name, d.bold, align=align)
    d.text(value_at, it.value, d.font, align=align)


def _capacitor(d: _Painter, it: sm.Capacitor) -> None:
    p, s = d.p, d.s
    a, b = d.pt(it.a), d.pt(it.b)
    mid = (a.y() + b.y()) / 2
    gap = 0.06 * s
    p.setPen(d.pen())
    p.drawLine(a, QPointF(a.x(), mid - gap))
    p.drawLine(QPointF(a.x(), mid + gap), b)
    p.setPen(d.pen(width=0.06))
    for y in (mid - gap, mid + gap):
        p.drawLine(QPointF(a.x() - 0.22 * s, y), QPointF(a.x() + 0.22 * s, y))
    d.text(QPointF(a.x() + 0.3 * s, mid - 0.04 * s), it.name, d.bold)
    d.text(QPointF(a.x() + 0.3 * s, mid + 0.24 * s), it.value, d.font)


def _switch(d: _Painter, it: sm.Switch) -> None:
    p, s = d.p, d.s
    pole = d.pt(it.pole)
    r = 0.055 * s
    p.setBrush(QColor("white"))
    p.setPen(d.pen())
    throws = [d.pt(t) for t in it.throws]
    for k, t in enumerate(throws):
        if k == it.closed:
            p.setBrush(INK)
        else:
            p.setBrush(QColor("white"))
        p.drawEllipse(t, r, r)
    if it.closed is not None:
        end = throws[it.closed]
        p.setPen(d.pen(d.accent, width=0.06, least=2.5))
        p.drawLine(pole, end)
    else:  # open: the blade stops short of the throw, lifted
        t = throws[0]
        p.setPen(d.pen(MUTED, width=0.05))
        if abs(t.y() - pole.y()) < 1e-6:  # horizontal tap switch
            p.drawLine(pole, QPointF(pole.x() + (t.x() - pole.x()) * 0.8, pole.y() - 0.3 * s))
        else:
            p.drawLine(pole, QPointF(pole.x(), pole.y() + (t.y() - pole.y()) * 0.8))
    p.setPen(d.pen())
    p.setBrush(QColor("white"))
    p.drawEllipse(pole, r, r)
    if it.name:
        if throws and abs(throws[0].y() - pole.y()) < 1e-6:
            d.text(QPointF((pole.x() + throws[0].x()) / 2, pole.y() + 0.3 * s), it.name, d.small,
                   MUTED, align="center")
        else:
            d.text(QPointF(pole.x() + 0.12 * s, pole.y() - 0.04 * s), it.name, d.small, MUTED)


def _amplifier(d: _Painter, it: sm.Amplifier) -> None:
    p, s = d.p, d.s
    top, bot, tip = d.pt(it.minus), d.pt(it.plus), d.pt(it.out)
    half = 0.3 * s if it.kind == "summing" else 0.45 * s
    up, down = min(top.y(), bot.y()) - half, max(top.y(), bot.y()) + half
    x = top.x()
    tri = QPolygonF([QPointF(x, up), QPointF(x, down), tip])
    p.setPen(d.pen())
    p.setBrush(d.tint)
    p.drawPolygon(tri)
    if it.kind == "summing":
        d.text(QPointF(x + 0.08 * s, top.y() + 0.08 * s), "−", d.font)
        d.text(QPointF(x + 0.08 * s, bot.y() + 0.08 * s), "+", d.font)
    else:
        d.text(QPointF(x + 0.08 * s, bot.y() + 0.08 * s), "+", d.font)
    d.text(QPointF((x + tip.x()) / 2, down + 0.3 * s), it.name, d.bold, align="center")
    d.text(QPointF((x + tip.x()) / 2, down + 0.55 * s), it.note, d.small, MUTED, align="center")


def paint_schematic(painter: QPainter, rect: QRectF, sch: sm.Schematic,
                    accent: QColor | str = "#1f5fa8", caption: bool = True) -> None:
    """Draw ``sch`` fitted into ``rect`` (device units), its caption along the bottom."""
    painter.save()
    painter.setRenderHint(QPainter.RenderHint.Antialiasing, True)
    painter.fillRect(rect, QColor("white"))
    area = QRectF(rect)
    if caption and sch.caption:
        area.setHeight(rect.height() * 0.92)
    d = _Painter(painter, area, sch, QColor(accent))
    for it in sch.items:
        _draw(d, it)
    if caption and sch.caption:
        d.text(QPointF(rect.left() + rect.width() / 2, rect.bottom() - rect.height() * 0.025),
               sch.caption, d.small, MUTED, align="center")
    painter.restore()


def schematic_image(sch: sm.Schematic, width: int, height: int, accent: QColor | str = "#1f5fa8",
                    caption: bool = True) -> QImage:
    """``sch`` drawn on a white ``width`` × ``height`` image (pixels)."""
    img = QImage(width, height, QImage.Format.Format_ARGB32)
    img.fill(QColor("white"))
    painter = QPainter(img)
    paint_schematic(painter, QRectF(0, 0, width, height), sch, accent, caption)
    painter.end()
    return img
