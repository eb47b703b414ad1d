"""A dialog to edit the search's price table (``core.cost.CostTable``); the defaults are invented
example prices, which the dialog says."""

from __future__ import annotations

from PySide6.QtWidgets import (
    QDialog,
    QDialogButtonBox,
    QLabel,
    QPushButton,
    QTableWidget,
    QTableWidgetItem,
    QVBoxLayout,
    QWidget,
)

from rungwise.core.cost import EXAMPLE_NOTE, EXAMPLE_SCALARS, CostTable, grade_text
from rungwise.core.errors import DesignError

SCALAR_NAMES = {"switch": "per switch", "amplifier": "per amplifier",
                "area_per_part": "board area, per placed part"}
TABLE_NAMES = {"resistor": "resistor, grade", "array_package": "matched-array package, grade",
               "series_factor": "price factor, series"}


def cost_rows(table: CostTable) -> list[tuple[str, str, float]]:
    """(table key, entry, value) rows of ``table`` for editing."""
    rows = [(k, "", float(getattr(table, k))) for k in EXAMPLE_SCALARS]
    for key in ("resistor", "array_package"):
        rows += [(key, grade_text(g), p) for g, p in sorted(getattr(table, key).items(), reverse=True)]
    rows += [("series_factor", s, f) for s, f in table.series_factor.items()]
    return rows


def table_from_rows(rows: list[tuple[str, str, str]]) -> CostTable:
    """A validated table from edited rows; a price (or a whole table of them) left at its example
    value stays marked as an invented example."""
    data: dict = {}
    for key, entry, value in rows:
        if entry:
            data.setdefault(key, {})[entry] = value.strip()
        else:
            data[key] = value.strip()
    table = CostTable.from_dict(data)
    examples = {(k, e): v for k, e, v in cost_rows(CostTable())}
    mine = {(k, e): v for k, e, v in cost_rows(table)}
    same = {k for k, _, _ in cost_rows(table)
            if all(mine[key] == examples.get(key) for key in mine if key[0] == k)}
    return CostTable.from_dict({k: v for k, v in data.items() if k not in same})


class CostDialog(QDialog):
    """Edit every price; OK keeps the table only when every entry is valid."""

    def __init__(self, table: CostTable, parent: QWidget | None = None) -> None:
        super().__init__(parent)
        self.setObjectName("cost_dialog")
        self.setWindowTitle("Prices for the design search")
        self.table = table
        note = QLabel(f"Prices in any one currency. Shown now: {table.source}. Check them against "
                      "your suppliers.", objectName="label_note", wordWrap=True)
        self.grid = QTableWidget(0, 3, objectName="table_prices")
        self.grid.setHorizontalHeaderLabels(["Price", "Entry", "Value"])
        self._fill(table)
        self.label_error = QLabel("", objectName="label_error", wordWrap=True)
        reset = QPushButton("Examples again", objectName="button_examples")
        reset.setToolTip(f"Put back the {EXAMPLE_NOTE}")
        reset.clicked.connect(lambda: self._fill(CostTable()))
        buttons = QDialogButtonBox(QDialogButtonBox.StandardButton.Ok
                                   | QDialogButtonBox.StandardButton.Cancel)
        buttons.accepted.connect(self.accept)
        buttons.rejected.connect(self.reject)
        lay = QVBoxLayout(self)
        for w in (note, self.grid, self.label_error, reset, buttons):
            lay.addWidget(w)

    def _fill(self, table: CostTable) -> None:
        rows = cost_rows(table)
        self.grid.setRowCount(len(rows))
        for i, (key, entry, value) in enumerate(rows):
            name = SCALAR_NAMES.get(key) or TABLE_NAMES[key]
            for j, text in enumerate((name, entry, f"{value:g}")):
                item = QTableWidgetItem(text)
                item.setData(256, key)  # Qt.UserRole: the table key
                if j < 2:
                    item.setFlags(item.flags() & ~item.flags().ItemIsEditable)
                self.grid.setItem(i, j, item)

    def rows(self) -> list[tuple[str, str, str]]:
        """The edited rows as (table key, entry, text)."""
        return [(self.grid.item(i, 0).data(256), self.grid.item(i, 1).text(),
                 self.grid.item(i, 2).text()) for i in range(self.grid.rowCount())]

    def accept(self) -> None:
        """Keep the edited table, or show which entry is wrong and stay open."""
        try:
            self.table = table_from_rows(self.rows())
        except DesignError as exc:
            self.label_error.setText(str(exc))
            return
        super().accept()
