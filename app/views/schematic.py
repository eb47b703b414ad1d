"""The Schematic view: each candidate drawn from its network, switches in the state of a code.

A candidate list and a code box sit above the drawing (``schematic_paint``); the layout comes from
``core.schematic`` (designators as in the bill of materials, values as built). Laying out is a
few milliseconds even for a 16-bit string, so it runs on the GUI thread; a design that cannot be
built says why in place of the drawing.
"""

from __future__ import annotations

from PySide6.QtCore import QRectF, QSize
from PySide6.QtGui import QColor, QPainter
from PySide6.QtWidgets import (
    QComboBox,
    QHBoxLayout,
    QLabel,
    QSizePolicy,
    QVBoxLayout,
    QWidget,
)

from rungwise.core.design import Design
from rungwise.core.errors import RungwiseError
from rungwise.core.netlist import code_text
from rungwise.core.schematic import Schematic, schematic

from ..plots.schematic_paint import paint_schematic
from ..plots.theme import candidate_colour
from ..window.number_box import NumberBox
from .candidate_combo import refill_candidates


class SchematicCanvas(QWidget):
    """Paints one :class:`Schematic` scaled to the widget (white sheet, our drawing style)."""

    def __init__(self, parent: QWidget | None = None) -> None:
        super().__init__(parent)
        self.setObjectName("schematic_canvas")
        self.sheet: Schematic | None = None
        self.accent = "#1f5fa8"
        self.setMinimumSize(420, 220)
        self.setSizePolicy(QSizePolicy.Policy.Expanding, QSizePolicy.Policy.Expanding)

    def show_sheet(self, sheet: Schematic | None, accent: str) -> None:
        self.sheet, self.accent = sheet, accent
        self.update()

    def sizeHint(self) -> QSize:
        return QSize(900, 420)

    def paintEvent(self, _event) -> None:
        painter = QPainter(self)
        painter.fillRect(self.rect(), QColor("white"))
        if self.sheet is not None:
            paint_schematic(painter, QRectF(self.rect()), self.sheet, self.accent)
        painter.end()


class SchematicPane(QWidget):
    """Registered in ``view_registry``: a candidate, a code, and its schematic."""

    def __init__(self, parent: QWidget | None = None) -> None:
        super().__init__(parent)
        self.setObjectName("schematic_pane")
        self.designs: list[Design] = []
        self.colours: list[str] = []
        self.code_chosen = False  # the person picked a code: keep it across edits
        self.combo = QComboBox(self, objectName="combo_schematic_candidate")
        self.combo.setSizeAdjustPolicy(QComboBox.SizeAdjustPolicy.AdjustToContents)
        self.spin_code = NumberBox(self, objectName="spin_schematic_code", label="Code")
        self.spin_code.setKeyboardTracking(False)
        self.code_label = QLabel(self, objectName="label_schematic_code")
        self.status = QLabel(self, objectName="label_schematic_status")
        self.status.setWordWrap(True)
        self.canvas = SchematicCanvas(self)
        row = QHBoxLayout()
        row.addWidget(QLabel("Candidate", self))
        row.addWidget(self.combo, 1)
        row.addSpacing(12)
        row.addWidget(QLabel("Switches at code", self))
        row.addWidget(self.spin_code)
        row.addWidget(self.code_label)
        row.addStretch(1)
        layout = QVBoxLayout(self)
        layout.addLayout(row)
        layout.addWidget(self.canvas, 1)
        layout.addWidget(self.status)
        self.combo.currentIndexChanged.connect(self._on_candidate)
        self.spin_code.valueChanged.connect(self._on_code)

    # --- the view protocol ---------------------------------------------------------------------
    def set_candidates(self, designs: list[Design]) -> None:
        """Show the compared candidates (keeps the chosen one and its code when it still fits)."""
        self.designs = list(designs)
        refill_candidates(self.combo, self.designs)
        self._on_candidate(self.combo.currentIndex(), keep_code=True)

    def set_colours(self, colours: list[str]) -> None:
        """Draw each candidate's closed switches and parts in its comparison colour."""
        self.colours = list(colours)
        self.redraw()

    # --- drawing -------------------------------------------------------------------------------
    @property
    def design(self) -> Design | None:
        i = self.combo.currentIndex()
        return self.designs[i] if 0 <= i < len(self.designs) else None

    def _on_code(self, _value: int) -> None:
        self.code_chosen = True
        self.redraw()

    def _on_candidate(self, _index: int, keep_code: bool = False) -> None:
        d = self.design
        if d is None:
            return
        top = min(2**d.bits - 1, 2**31 - 1)
        old = self.spin_code.value()
        self.spin_code.blockSignals(True)
        self.spin_code.setRange(0, top)
        keep = keep_code and self.code_chosen and old <= top
        self.spin_code.setValue(old if keep else (1 << (d.bits - 1)) | 1 if d.bits > 1 else 1)
        self.spin_code.blockSignals(False)
        self.redraw()

    def redraw(self) -> None:
        """Lay out the chosen candidate at the chosen code and paint it."""
        d = self.design
        if d is None:
            self.canvas.show_sheet(None, "#1f5fa8")
            return
        code = self.spin_code.value()
        self.code_label.setText(code_text(code, d.bits).split(" ", 1)[1])
        try:
            sheet = schematic(d, code)
        except (RungwiseError, ValueError) as exc:
            self.canvas.show_sheet(None, "#1f5fa8")
            self.status.setText(f"No schematic for {d.label}: {exc}")
            return
        self.status.setText("Designators as in the bill of materials; values as built (after "
                            "snapping and as-built changes). Long networks show their ends and "
                            "the parts around the code's tap; an ellipsis says what is left out.")
        self.canvas.show_sheet(sheet, candidate_colour(self.colours, self.combo.currentIndex()))
