"""A frame that holds an analysis view in its tab's scroll area at the viewport's size.

A scroll area sizes a widget whose layout has word-wrapped labels to its *preferred* height, so a
view with a stretching plot grew taller than a laptop screen and its plot's axis went out of
sight. This frame has no layout: it gives the view the viewport's size and scrolls only below the
view's minimum size.
"""

from __future__ import annotations

from PySide6.QtCore import QEvent, QObject, QSize
from PySide6.QtGui import QResizeEvent
from PySide6.QtWidgets import QWidget


class ViewFrame(QWidget):
    """Holds ``view``; its minimum size is the view's, its size the scroll area's viewport."""

    def __init__(self, view: QWidget, parent: QWidget | None = None) -> None:
        super().__init__(parent)
        self.view = view
        view.setParent(self)
        view.installEventFilter(self)

    def eventFilter(self, watched: QObject, event: QEvent) -> bool:
        """When the view's layout grows (a table filled, a label wrapped), grow with it so its
        widgets never overlap; the scroll area then scrolls."""
        if watched is self.view and event.type() == QEvent.Type.LayoutRequest:
            self.updateGeometry()
            need = self.minimumSizeHint()
            if self.height() < need.height() or self.width() < need.width():
                self.resize(self.size().expandedTo(need))
        return super().eventFilter(watched, event)

    def minimumSizeHint(self) -> QSize:
        """The view's own minimum."""
        return self.view.minimumSizeHint().expandedTo(self.view.minimumSize())

    def sizeHint(self) -> QSize:
        """No more than the minimum: the scroll area gives the rest of its viewport."""
        return self.minimumSizeHint()

    def resizeEvent(self, event: QResizeEvent) -> None:
        """The view fills the frame."""
        super().resizeEvent(event)
        self.view.setGeometry(self.rect())
