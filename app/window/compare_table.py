"""The figures table: summary figures (rows) of every candidate (columns), the best one marked."""

from __future__ import annotations

import math
from collections.abc import Sequence
from typing import Any, Literal

from PySide6.QtCore import Qt
from PySide6.QtGui import QBrush, QColor, QFont
from PySide6.QtWidgets import QAbstractItemView, QHeaderView, QTableWidget, QTableWidgetItem, QWidget

from rungwise.core.evaluate import SUMMARY_KEYS
from rungwise.core.units import format_value

from ..jobs.live_results import CandidateResult
from .comparison_state import Candidate

Best = Literal["smallest", "smallest_abs", "largest", "yes"]
"""How the best value of a row is chosen."""

BEST_RULE: dict[str, Best] = {
    "offset_error": "smallest_abs",
    "gain_error": "smallest_abs",
    "gain_error_lsb": "smallest_abs",
    "max_abs_inl_endpoint": "smallest",
    "max_abs_inl_bestfit": "smallest",
    "max_abs_dnl": "smallest",
    "monotonic": "yes",
    "rout_max": "smallest",
    "iref_max": "smallest_abs",
    "n_resistors": "smallest",
    "n_distinct_values": "smallest",
    "spread": "smallest",
    "total_r_units": "smallest",
    "n_switches": "smallest",
    "n_amplifiers": "smallest",
}
"""Rows with a "best" value and what best means there; other rows (LSB, full scale, the code where
an extreme occurs, the lowest output resistance and reference current) are shown but not judged:
the smallest output resistance matters less than the largest, which sets the loading error."""

RULE_WORDS: dict[Best, str] = {
    "smallest": "smallest is best", "smallest_abs": "closest to zero is best",
    "largest": "largest is best", "yes": "yes is best",
}
"""Tooltip text of each rule."""

BEST_MARK = "◆"
"""Drawn after the best value(s) of a row."""

REL_TIE = 1e-9
"""Values within this relative distance of the best count as equally good."""


def cell_text(key: str, value: Any) -> str:
    """A summary value as shown in the table (engineering notation with the key's unit)."""
    unit = SUMMARY_KEYS[key][1]
    if isinstance(value, bool):
        return "yes" if value else "NO"
    if value is None:
        return "—"
    if key.endswith("_code") or (unit == "" and isinstance(value, int)):
        return f"{value}"
    if unit == "fraction":
        return f"{value * 100:.4g} %"
    if unit in {"LSB", "×", "R"}:
        return f"{value:.4g} {unit}" if unit != "×" else f"{value:.4g}×"
    return format_value(value, unit)


def best_columns(key: str, values: Sequence[Any]) -> set[int]:
    """Indices of the best values of a row (empty when the row is not judged or all are equal)."""
    rule = BEST_RULE.get(key)
    known = [(i, v) for i, v in enumerate(values) if v is not None
             and not (isinstance(v, float) and math.isnan(v))]
    if rule is None or len(known) < 2:
        return set()
    if rule == "yes":
        score = {i: 0.0 if v else 1.0 for i, v in known}
    elif rule == "smallest_abs":
        score = {i: abs(float(v)) for i, v in known}
    elif rule == "largest":
        score = {i: -float(v) for i, v in known}
    else:
        score = {i: float(v) for i, v in known}
    best = min(score.values())
    tol = REL_TIE * max(abs(best), 1e-300)
    winners = {i for i, s in score.items() if s - best <= tol}
    return set() if len(winners) == len(known) else winners


class CompareTable(QTableWidget):
    """Rows = :data:`SUMMARY_KEYS` figures, columns = candidates; best values bold with ◆."""

    def __init__(self, parent: QWidget | None = None) -> None:
        super().__init__(len(SUMMARY_KEYS), 0, parent)
        self.setObjectName("table_figures")
        self.keys = list(SUMMARY_KEYS)
        self.setVerticalHeaderLabels([self._row_label(k) for k in self.keys])
        self.setEditTriggers(QAbstractItemView.EditTrigger.NoEditTriggers)
        self.setSelectionMode(QAbstractItemView.SelectionMode.ContiguousSelection)
        self.setAlternatingRowColors(True)
        self.setWordWrap(False)
        self.verticalHeader().setSectionResizeMode(QHeaderView.ResizeMode.ResizeToContents)
        self.verticalHeader().setDefaultAlignment(Qt.AlignmentFlag.AlignLeft | Qt.AlignmentFlag.AlignVCenter)
        self.horizontalHeader().setSectionResizeMode(QHeaderView.ResizeMode.ResizeToContents)
        self.horizontalHeader().setStretchLastSection(False)
        self._names: list[str] = []
        self._texts: list[list[str]] = []

    @staticmethod
    def _row_label(key: str) -> str:
        return SUMMARY_KEYS[key][0]

    def set_results(self, candidates: Sequence[Candidate], results: Sequence[CandidateResult]) -> None:
        """Fill the table from one result set (a candidate that failed shows its message)."""
        self.setUpdatesEnabled(False)
        try:
            self.setColumnCount(len(candidates))
            self._names = [c.name for c in candidates]
            for col, cand in enumerate(candidates):
                head = QTableWidgetItem(f"■ {cand.name}")
                head.setForeground(QBrush(QColor(cand.colour)))
                head.setToolTip(f"{cand.design.topology}, {cand.design.output}, {cand.design.bits} bits")
                self.setHorizontalHeaderItem(col, head)
            bold = QFont(self.font())
            bold.setBold(True)
            self._texts = []
            for row, key in enumerate(self.keys):
                values = [r.evaluation.summary.get(key) if r.evaluation is not None else None
                          for r in results]
                best = best_columns(key, values)
                texts = []
                for col, (v, res) in enumerate(zip(values, results, strict=True)):
                    text = cell_text(key, v) if res.evaluation is not None else "not solved"
                    shown = f"{text} {BEST_MARK}" if col in best else text
                    item = QTableWidgetItem(shown)
                    item.setTextAlignment(Qt.AlignmentFlag.AlignRight | Qt.AlignmentFlag.AlignVCenter)
                    if col in best:
                        item.setFont(bold)
                        item.setToolTip(f"Best in this row ({RULE_WORDS[BEST_RULE[key]]})")
                    elif res.evaluation is None:
                        item.setToolTip(res.message)
                    if key == "monotonic" and v is False:
                        item.setFont(bold)
                    self.setItem(row, col, item)
                    texts.append(text)
                self._texts.append(texts)
        finally:
            self.setUpdatesEnabled(True)

    # --- copying ----------------------------------------------------------------------------------
    def _rows(self) -> list[list[str]]:
        out = [["Figure", "Unit", *self._names]]
        for key, texts in zip(self.keys, self._texts, strict=True):
            label, unit = SUMMARY_KEYS[key]
            out.append([label.strip(), unit, *texts])
        return out

    def as_tsv(self) -> str:
        """The table as tab-separated text (pastes into a spreadsheet)."""
        return "\n".join("\t".join(r) for r in self._rows()) + "\n"

    def as_text(self) -> str:
        """The table as aligned plain text (pastes into a message or a review note)."""
        rows = [[c for i, c in enumerate(r) if i != 1] for r in self._rows()]
        widths = [max(len(r[i]) for r in rows) for i in range(len(rows[0]))]
        lines = []
        for r in rows:
            cells = [r[0].ljust(widths[0])] + [c.rjust(w) for c, w in zip(r[1:], widths[1:], strict=True)]
            lines.append("  ".join(cells).rstrip())
        return "\n".join(lines) + "\n"
