"""Printing the design-review report to PDF with QPainter on a ``QPdfWriter`` (no display needed).

The blocks of ``report_content.report_blocks`` are measured on the page, cut into pages by
``report_blocks.paginate`` (whole table rows, repeated headers, no lone rows) and drawn; plots
and schematics are drawn as vector graphics. Every page carries the report's title and page
number at the top and the file name, program version, seed and design checksum at the bottom.
"""

from __future__ import annotations

from pathlib import Path

from rungwise.core.atomic import write_atomically

from ..export.report_content import ReviewData, page_footer, report_blocks
from ..qt_headless import gui_application

DPI = 300
PAGE_W, PAGE_H = 595.0, 842.0
"""A4 in points."""
MARGIN_X, MARGIN_TOP, MARGIN_BOTTOM = 45.0, 58.0, 52.0
"""Page margins, points (the header and footer sit inside the top and bottom margins)."""

INK, MUTED, RULE, HEAD_FILL, ZEBRA = "#1d252d", "#5f6b77", "#c9d0d7", "#e6ebf0", "#f6f8fa"
"""Report colours: text, secondary text, rules, table header, alternate rows."""

STYLES = {  # font size (pt), bold, space before, space after, colour
    "h0": (17.0, True, 0.0, 6.0, INK), "h1": (13.0, True, 10.0, 6.0, INK),
    "h2": (10.5, True, 8.0, 3.0, INK), "h3": (9.5, True, 6.0, 3.0, INK),
    "body": (8.8, False, 0.0, 5.0, INK), "small": (7.8, False, 0.0, 4.0, MUTED),
    "verdict": (10.0, True, 2.0, 6.0, INK), "cell": (7.8, False, 0, 0, INK),
    "cellhead": (7.8, True, 0, 0, INK),
}


class _Page:
    """Measuring and drawing in points on a painter whose device is ``DPI`` dots per inch."""

    def __init__(self, painter) -> None:
        from PySide6.QtGui import QFont

        self.p = painter
        self.k = DPI / 72.0
        self.fonts = {}
        for name, (size, bold, *_rest) in STYLES.items():
            f = QFont("DejaVu Sans")
            f.setPixelSize(max(1, round(size * self.k)))
            f.setBold(bold)
            self.fonts[name] = f
        self.width = PAGE_W - 2 * MARGIN_X
        self.height = PAGE_H - MARGIN_TOP - MARGIN_BOTTOM

    def rect(self, x: float, y: float, w: float, h: float):
        from PySide6.QtCore import QRectF

        return QRectF(x * self.k, y * self.k, w * self.k, h * self.k)

    def text_height(self, text: str, style: str, width: float) -> float:
        from PySide6.QtCore import Qt

        self.p.setFont(self.fonts[style])
        r = self.p.boundingRect(self.rect(0, 0, width, 10000), int(Qt.TextFlag.TextWordWrap), text)
        return r.height() / self.k

    def text_width(self, text: str, style: str) -> float:
        from PySide6.QtGui import QFontMetricsF

        fm = QFontMetricsF(self.fonts[style])
        return max((fm.horizontalAdvance(line) for line in text.split("\n")), default=0) / self.k

    def draw_text(self, x: float, y: float, w: float, h: float, text: str, style: str,
                  colour: str | None = None, right: bool = False) -> None:
        from PySide6.QtCore import Qt
        from PySide6.QtGui import QColor

        self.p.setFont(self.fonts[style])
        self.p.setPen(QColor(colour or STYLES[style][4]))
        align = Qt.AlignmentFlag.AlignRight if right else Qt.AlignmentFlag.AlignLeft
        self.p.drawText(self.rect(x, y, w, h), int(Qt.TextFlag.TextWordWrap) | int(align), text)

    def fill(self, x: float, y: float, w: float, h: float, colour: str) -> None:
        from PySide6.QtGui import QColor

        self.p.fillRect(self.rect(x, y, w, h), QColor(colour))

    def hline(self, x0: float, x1: float, y: float, colour: str = RULE, width: float = 0.5) -> None:
        from PySide6.QtCore import QPointF
        from PySide6.QtGui import QColor, QPen

        self.p.setPen(QPen(QColor(colour), width * self.k))
        self.p.drawLine(QPointF(x0 * self.k, y * self.k), QPointF(x1 * self.k, y * self.k))


# --- tables ------------------------------------------------------------------------------------
PAD = 3.0
"""Cell padding, points."""
SWATCH = 6.0


def _column_widths(pg: _Page, table) -> list[float]:
    n = len(table.head)
    natural = []
    for c in range(n):
        cells = [pg.text_width(r[c], "cell") for r in table.rows]
        head = pg.text_width(table.head[c], "cellhead") + (SWATCH + 3 if c in table.swatches else 0)
        first = SWATCH + 3 if c == 0 and table.row_swatches else 0
        natural.append(max([head, *cells]) + 2 * PAD + first + 1.0)
    total = sum(natural)
    if total <= pg.width:
        return [w * pg.width / total for w in natural] if total > 0.7 * pg.width else natural
    # too wide: the row labels keep their width (up to a third of the page), the other columns
    # share the rest, narrow ones whole and wide ones in proportion
    first = min(natural[0], pg.width / 3) if n > 1 else pg.width
    rest = natural[1:]
    fair = (pg.width - first) / max(len(rest), 1)
    fixed = sum(w for w in rest if w <= fair)
    wide = [w for w in rest if w > fair]
    room = pg.width - first - fixed
    return [first, *[w if w <= fair else room * w / sum(wide) for w in rest]]


def _row_height(pg: _Page, cells: list[str], widths: list[float], style: str) -> float:
    return max(pg.text_height(c or " ", style, w - 2 * PAD - 0.5) for c, w in
               zip(cells, widths, strict=True)) + 2 * PAD


class _TableLayout:
    def __init__(self, pg: _Page, table) -> None:
        self.t = table
        self.widths = _column_widths(pg, table)
        inner = [w - (SWATCH + 3 if (c in table.swatches) else 0) for c, w in enumerate(self.widths)]
        self.head = _row_height(pg, table.head, inner, "cellhead")
        first = [w - (SWATCH + 3 if c == 0 and table.row_swatches else 0)
                 for c, w in enumerate(self.widths)]
        self.rows = [_row_height(pg, r, first, "cell") for r in table.rows]

    def draw(self, pg: _Page, x0: float, y: float, start: int, stop: int, continued: bool) -> None:
        t = self.t
        width = sum(self.widths)
        pg.fill(x0, y, width, self.head, HEAD_FILL)
        self._row(pg, x0, y, self.head,
                  [t.head[0] + (" (continued)" if continued else ""), *t.head[1:]], "cellhead",
                  t.swatches)
        y += self.head
        pg.hline(x0, x0 + width, y, INK, 0.6)
        for k in range(start, stop):
            h = self.rows[k]
            if (k - start) % 2:
                pg.fill(x0, y, width, h, ZEBRA)
            sw = {0: t.row_swatches[k]} if k in t.row_swatches else {}
            self._row(pg, x0, y, h, t.rows[k], "cell", sw)
            y += h
            pg.hline(x0, x0 + width, y)

    def _row(self, pg: _Page, x: float, y: float, h: float, cells: list[str], style: str,
             swatches: dict[int, str]) -> None:
        for c, (text, w) in enumerate(zip(cells, self.widths, strict=True)):
            left = x + PAD
            inner = w - 2 * PAD
            if c in swatches:
                right = self.t.align[c] == "r"
                used = min(pg.text_width(text, style), inner - SWATCH - 3) if right else 0.0
                at = left + inner - used - SWATCH - 3 if right else left
                pg.fill(at, y + PAD + 1.5, SWATCH, SWATCH, swatches[c])
                if not right:
                    left += SWATCH + 3
                inner -= SWATCH + 3
            pg.draw_text(left + (SWATCH + 3 if c in swatches and self.t.align[c] == "r" else 0),
                         y + PAD, inner, h - PAD, text, style, right=self.t.align[c] == "r")
            x += w


# --- blocks ------------------------------------------------------------------------------------
def _measure(pg: _Page, blocks):
    from ..export.report_blocks import Figure, Heading, Measured, PageBreak, Paragraph, Table

    out, layouts = [], {}
    for i, b in enumerate(blocks):
        if isinstance(b, PageBreak):
            out.append(Measured(page_break=True))
        elif isinstance(b, Heading):
            _, _, before, after, _ = STYLES[f"h{b.level}"]
            h = pg.text_height(b.text, f"h{b.level}", pg.width)
            out.append(Measured(height=before + h + after, keep_with_next=True))
        elif isinstance(b, Paragraph):
            _, _, before, after, _ = STYLES[b.style]
            indent = 12.0 if b.bullet else (8.0 if b.style == "verdict" else 0.0)
            h = pg.text_height(b.text, b.style, pg.width - indent)
            out.append(Measured(height=before + h + after + (4 if b.style == "verdict" else 0),
                                keep_with_next=b.keep_with_next))
        elif isinstance(b, Table):
            lay = _TableLayout(pg, b)
            layouts[i] = lay
            rows = list(lay.rows)
            rows[-1] += 8.0  # space after the table
            out.append(Measured(head=lay.head, rows=rows))
        elif isinstance(b, Figure):
            cap = pg.text_height(b.caption, "small", pg.width) + 2 if b.caption else 0.0
            full = pg.width * b.aspect + cap + 8.0
            out.append(Measured(height=full, least=full * b.shrink if b.shrink else 0.0))
    return out, layouts


def _draw_block(pg: _Page, b, placed, y: float, layouts) -> None:
    from ..export.report_blocks import Figure, Heading, Paragraph, Table

    x = MARGIN_X
    if isinstance(b, Heading):
        style = f"h{b.level}"
        _, _, before, _, _ = STYLES[style]
        pg.draw_text(x, y + before, pg.width, 200, b.text, style)
        if b.level == 1:
            hh = pg.text_height(b.text, style, pg.width)
            pg.hline(x, x + pg.width, y + before + hh + 1.5, RULE, 0.7)
    elif isinstance(b, Paragraph):
        _, _, before, _, _ = STYLES[b.style]
        if b.bullet:
            pg.draw_text(x + 2, y + before, 10, 20, "•", b.style)
            pg.draw_text(x + 12, y + before, pg.width - 12, 2000, b.text, b.style)
        elif b.style == "verdict":
            h = pg.text_height(b.text, b.style, pg.width - 8)
            pg.fill(x, y + before - 2, pg.width, h + 4, ZEBRA)
            pg.fill(x, y + before - 2, 2.5, h + 4, INK)
            pg.draw_text(x + 8, y + before, pg.width - 8, 2000, b.text, b.style)
        else:
            pg.draw_text(x, y + before, pg.width, 2000, b.text, b.style)
    elif isinstance(b, Table):
        layouts[placed.block].draw(pg, x, y, placed.start, placed.stop, placed.continued)
    elif isinstance(b, Figure):
        _draw_figure(pg, b, x, y, placed.height)


def _draw_figure(pg: _Page, b, x: float, y: float, given: float = 0.0) -> None:
    from .paint import paint_plot
    from .schematic_paint import paint_schematic

    height = pg.width * b.aspect
    if given:  # shrunk to finish a page: the drawing takes what is left after its caption
        cap = pg.text_height(b.caption, "small", pg.width) + 2 if b.caption else 0.0
        height = given - cap - 8.0
    rect = pg.rect(x, y, pg.width, height)
    if b.kind == "plot":
        paint_plot(pg.p, rect, b.item, b.colours)
    else:
        paint_schematic(pg.p, rect, b.item, b.accent or "#1f5fa8", caption=False)
    if b.caption:
        pg.draw_text(x, y + height + 2, pg.width, 40, b.caption, "small")


def _frame(pg: _Page, data: ReviewData, number: int, count: int) -> None:
    """The header and footer of one page."""
    top = MARGIN_TOP - 24
    pg.draw_text(MARGIN_X, top, pg.width * 0.7, 14, data.title, "small", INK)
    pg.draw_text(MARGIN_X, top, pg.width, 14, f"page {number} of {count}", "small", INK,
                 right=True)
    pg.hline(MARGIN_X, PAGE_W - MARGIN_X, top + 12)
    bottom = PAGE_H - MARGIN_BOTTOM + 16
    pg.hline(MARGIN_X, PAGE_W - MARGIN_X, bottom - 3)
    pg.draw_text(MARGIN_X, bottom, pg.width, 14, page_footer(data), "small")


def write_report(path: Path, data: ReviewData) -> None:
    """Write ``data`` as an A4 PDF at ``path`` (atomically: nothing half-written on failure)."""
    gui_application()
    from PySide6.QtCore import QMarginsF
    from PySide6.QtGui import QPageLayout, QPageSize, QPainter, QPdfWriter

    from ..export.report_blocks import paginate

    blocks = report_blocks(data)

    def write(tmp: str) -> None:
        writer = QPdfWriter(tmp)
        writer.setTitle(data.title)
        writer.setCreator(f"Rungwise {data.version}")
        writer.setResolution(DPI)
        writer.setPageLayout(QPageLayout(QPageSize(QPageSize.PageSizeId.A4),
                                         QPageLayout.Orientation.Portrait, QMarginsF(0, 0, 0, 0),
                                         QPageLayout.Unit.Point))
        painter = QPainter(writer)
        try:
            painter.setRenderHint(QPainter.RenderHint.Antialiasing, True)
            pg = _Page(painter)
            measured, layouts = _measure(pg, blocks)
            pages = paginate(measured, pg.height)
            for n, page in enumerate(pages, start=1):
                if n > 1:
                    writer.newPage()
                _frame(pg, data, n, len(pages))
                for placed in page:
                    _draw_block(pg, blocks[placed.block], placed, MARGIN_TOP + placed.y, layouts)
        finally:
            painter.end()

    write_atomically(Path(path), write)
