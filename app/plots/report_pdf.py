"""Printing the design-review report to PDF with Qt's own writer (works with no display)."""

from __future__ import annotations

from pathlib import Path

from rungwise.core.atomic import write_atomically

from ..export.report_content import ReviewData, report_html
from ..qt_headless import gui_application


def write_report(path: Path, data: ReviewData) -> None:
    """Write ``data`` as an A4 PDF at ``path`` (atomically: nothing half-written on failure)."""
    gui_application()
    from PySide6.QtCore import QMarginsF, QSizeF, QUrl
    from PySide6.QtGui import QPageLayout, QPageSize, QPdfWriter, QTextDocument

    from .paint import plot_image

    doc = QTextDocument()
    doc.setDocumentMargin(0)
    doc.setDefaultStyleSheet("body { font-family: 'DejaVu Sans'; font-size: 9pt; } "
                             "h1 { font-size: 16pt; } h2 { font-size: 12pt; } "
                             "th { background-color: #eeeeee; }")
    for spec in data.plots:
        doc.addResource(QTextDocument.ResourceType.ImageResource, QUrl(f"plot:{spec.name}"),
                        plot_image(spec, 1200, 800))
    doc.setHtml(report_html(data))

    def write(tmp: str) -> None:
        writer = QPdfWriter(tmp)
        writer.setTitle(data.title)
        writer.setCreator("Rungwise")
        writer.setResolution(300)
        writer.setPageLayout(QPageLayout(QPageSize(QPageSize.PageSizeId.A4),
                                         QPageLayout.Orientation.Portrait,
                                         QMarginsF(15, 15, 15, 15), QPageLayout.Unit.Millimeter))
        rect = writer.pageLayout().paintRectPixels(writer.resolution())
        # lay the text out in points (72 per inch) and let the printer scale it to the page
        doc.setPageSize(QSizeF(rect.width() * 72.0 / 300, rect.height() * 72.0 / 300))
        doc.print_(writer)
        del writer  # finishes the file

    write_atomically(Path(path), write)
