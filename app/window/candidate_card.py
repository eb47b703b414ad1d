"""The hover card of a candidate in the candidates list: its name, network and schematic.

Resting the pointer on a candidate (Qt's tool-tip event) shows a small frameless card beside it
with the schematic at mid-scale (``core.schematic`` drawn by ``schematic_paint``); it hides when
the pointer leaves the row. Images are kept per design value, so hovering again is instant.
"""

from __future__ import annotations

from PySide6.QtCore import QEvent, QObject, QPoint, Qt
from PySide6.QtGui import QPixmap
from PySide6.QtWidgets import QLabel, QListWidget, QVBoxLayout, QWidget

from rungwise.core.design import Design
from rungwise.core.errors import RungwiseError
from rungwise.core.schematic import schematic

from ..plots.schematic_paint import schematic_image

CARD_SIZE = (760, 300)
"""Width and usual height of the schematic on the card, pixels (tall layouts get up to twice
the height)."""


def card_code(design: Design) -> int:
    """The code the card shows: mid-scale plus one LSB (both switch positions appear)."""
    return (1 << (design.bits - 1)) | 1 if design.bits > 1 else 1


class CandidateCard(QWidget):
    """A frameless card: title line, schematic image, note."""

    def __init__(self, parent: QWidget | None = None) -> None:
        super().__init__(parent, Qt.WindowType.ToolTip)
        self.setObjectName("candidate_card")
        self.title = QLabel(self, objectName="label_card_title")
        self.picture = QLabel(self, objectName="label_card_schematic")
        self.note = QLabel(self, objectName="label_card_note")
        self.note.setWordWrap(True)
        layout = QVBoxLayout(self)
        layout.setContentsMargins(8, 6, 8, 6)
        for w in (self.title, self.picture, self.note):
            layout.addWidget(w)
        self._cache: dict[tuple[str, str], QPixmap] = {}

    def show_for(self, design: Design, colour: str, at: QPoint) -> None:
        """Fill the card for ``design`` and show it with its top-left corner at ``at`` (global)."""
        from rungwise.core.display_names import network_name

        self.title.setText(f"<b>{design.label}</b> — "
                           f"{network_name(design.topology, design.output)}, {design.bits} bits")
        key = (repr(design), colour)  # a design holds dicts: its repr is the key
        if key not in self._cache:
            try:
                sheet = schematic(design, card_code(design))
                x0, y0, x1, y1 = sheet.bounds()
                width = CARD_SIZE[0]
                height = int(min(2 * CARD_SIZE[1], max(CARD_SIZE[1] * 0.8, width * (y1 - y0 + 2.2)
                                                       / (x1 - x0 + 2.9))))
                self._cache[key] = QPixmap.fromImage(schematic_image(sheet, width, height, colour))
            except (RungwiseError, ValueError) as exc:
                self.picture.clear()
                self.note.setText(f"No schematic: {exc}")
                self._place(at)
                return
        self.picture.setPixmap(self._cache[key])
        self.note.setText("Designators as in the bill of materials; values as built. The "
                          "Schematic tab shows any code.")
        self._place(at)

    def _place(self, at: QPoint) -> None:
        self.adjustSize()
        self.move(at)
        self.show()


class CardOnHover(QObject):
    """Event filter on a candidates list's viewport that shows a :class:`CandidateCard`.

    ``candidates()`` returns the current ``(design, colour)`` pairs in row order.
    """

    def __init__(self, view: QListWidget, candidates) -> None:
        super().__init__(view)
        self.view = view
        self.candidates = candidates
        self.card = CandidateCard(view)
        self.row = -1
        view.viewport().installEventFilter(self)
        view.viewport().setMouseTracking(True)

    def eventFilter(self, obj, event) -> bool:
        kind = event.type()
        if kind == QEvent.Type.ToolTip:
            row = self.view.indexAt(event.pos()).row()
            shown = self.candidates()
            if 0 <= row < len(shown):
                design, colour = shown[row]
                rect = self.view.visualRect(self.view.model().index(row, 0))
                at = self.view.viewport().mapToGlobal(rect.topRight() + QPoint(12, 0))
                self.card.show_for(design, colour, at)
                self.row = row
                return True
            self.hide()
        elif kind == QEvent.Type.MouseMove:
            if self.row >= 0 and self.view.indexAt(event.pos()).row() != self.row:
                self.hide()
        elif kind in (QEvent.Type.Leave, QEvent.Type.Hide, QEvent.Type.MouseButtonPress):
            self.hide()
        return False

    def hide(self) -> None:
        self.card.hide()
        self.row = -1
