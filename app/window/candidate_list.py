"""The candidates pane: which designs are compared, their names and colours."""

from __future__ import annotations

from PySide6.QtCore import Qt
from PySide6.QtGui import QColor, QIcon, QPixmap
from PySide6.QtWidgets import (
    QAbstractItemView,
    QColorDialog,
    QGridLayout,
    QListWidget,
    QListWidgetItem,
    QMenu,
    QPushButton,
    QVBoxLayout,
    QWidget,
)

from .comparison_model import ComparisonModel
from .comparison_state import CANDIDATE_COLOURS, MAX_CANDIDATES


def swatch(colour: str, size: int = 14) -> QIcon:
    """A filled square of ``colour`` for lists and menus."""
    pm = QPixmap(size, size)
    pm.fill(QColor(colour))
    return QIcon(pm)


class CandidateListPane(QWidget):
    """Lists the candidates; add, duplicate, remove, rename (double-click) and recolour them."""

    def __init__(self, model: ComparisonModel, parent: QWidget | None = None) -> None:
        super().__init__(parent)
        self.setObjectName("candidate_pane")
        self.model = model
        self.list = QListWidget(self, objectName="list_candidates")
        self.list.setEditTriggers(QAbstractItemView.EditTrigger.DoubleClicked
                                  | QAbstractItemView.EditTrigger.EditKeyPressed)
        rows = self.list.sizeHintForRow(0) if self.list.count() else self.fontMetrics().height() + 8
        self.list.setFixedHeight(rows * MAX_CANDIDATES + 8)
        self.button_add = QPushButton("Add", self, objectName="button_add")
        self.button_duplicate = QPushButton("Duplicate", self, objectName="button_duplicate")
        self.button_remove = QPushButton("Remove", self, objectName="button_remove")
        self.button_colour = QPushButton("Colour", self, objectName="button_colour")
        self.button_add.setToolTip("Compare another network, starting from the edited one's values")
        self.button_duplicate.setToolTip("Compare a copy of the edited candidate, to vary its values")
        self.button_colour.setMenu(self._colour_menu())
        grid = QGridLayout()
        for i, b in enumerate((self.button_add, self.button_duplicate, self.button_remove,
                               self.button_colour)):
            grid.addWidget(b, i // 2, i % 2)
        layout = QVBoxLayout(self)
        layout.setContentsMargins(0, 0, 0, 0)
        layout.addWidget(self.list)
        layout.addLayout(grid)
        self.button_add.clicked.connect(lambda: self.model.state.add())
        self.button_duplicate.clicked.connect(lambda: self.model.state.duplicate(self.model.state.selected))
        self.button_remove.clicked.connect(lambda: self.model.state.remove(self.model.state.selected))
        self.list.currentRowChanged.connect(self._on_row)
        self.list.itemChanged.connect(self._on_renamed)
        model.candidates_changed.connect(self.refresh)
        model.selection_changed.connect(lambda _i: self.refresh())
        from .candidate_card import CardOnHover

        self.card = CardOnHover(self.list, lambda: [(c.design, c.colour)
                                                    for c in self.model.state.candidates])
        self.refresh()

    def _colour_menu(self) -> QMenu:
        menu = QMenu(self)
        for colour in CANDIDATE_COLOURS:
            act = menu.addAction(swatch(colour), colour)
            act.triggered.connect(lambda _c=False, col=colour: self.set_colour(col))
        menu.addSeparator()
        menu.addAction("Other colour…").triggered.connect(self._pick_colour)
        return menu

    def _pick_colour(self) -> None:
        current = QColor(self.model.state.current.colour)
        chosen = QColorDialog.getColor(current, self, "Candidate colour")
        if chosen.isValid():
            self.set_colour(chosen.name())

    def set_colour(self, colour: str) -> None:
        """Give the edited candidate ``colour``."""
        self.model.state.set_colour(self.model.state.selected, colour)

    def refresh(self) -> None:
        """Show the model's candidates and selection."""
        state = self.model.state
        self.list.blockSignals(True)
        try:
            self.list.clear()
            for cand in state.candidates:
                item = QListWidgetItem(swatch(cand.colour), cand.name)
                item.setFlags(item.flags() | Qt.ItemFlag.ItemIsEditable)
                self.list.addItem(item)
            self.list.setCurrentRow(state.selected)
        finally:
            self.list.blockSignals(False)
        self.button_add.setEnabled(state.can_add())
        self.button_duplicate.setEnabled(state.can_add())
        self.button_remove.setEnabled(len(state.candidates) > 1)

    def _on_row(self, row: int) -> None:
        if row >= 0:
            self.model.state.select(row)

    def _on_renamed(self, item: QListWidgetItem) -> None:
        row = self.list.row(item)
        if 0 <= row < len(self.model.state.candidates) and not self.model.state.rename(row, item.text()):
            self.refresh()
