"""The figures table: summary figures (rows) of every candidate (columns), the best one marked."""

from __future__ import annotations

import math
from collections.abc import Sequence
from typing import Any

from PySide6.QtCore import Qt
from PySide6.QtGui import QBrush, QColor, QFont
from PySide6.QtWidgets import QAbstractItemView, QHeaderView, QTableWidget, QTableWidgetItem, QWidget

from rungwise.core.display_names import network_name
from rungwise.core.evaluate import SUMMARY_KEYS
from rungwise.core.figure_meaning import NO_MEANING_TEXT, shown
from rungwise.core.figure_registry import SUMMARY
from rungwise.core.figure_registry import Better as Best
from rungwise.core.formatting import format_quantity
from rungwise.core.skew import SKEW_FIGURES

from ..jobs.live_results import CandidateResult
from .comparison_state import Candidate

BEST_RULE: dict[str, Best] = {f.key: f.better for f in SUMMARY if f.better}
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

LABEL_CHARS = 30
"""Row captions longer than this wrap onto a second line (the values keep the width)."""

REL_TIE = 1e-9
"""Values within this relative distance of the best count as equally good."""


def cell_text(key: str, value: Any) -> str:
    """A summary value as shown in the table (engineering notation with the key's unit)."""
    return format_quantity(value, SUMMARY_KEYS[key][1])


def comparable(key: str, values: Sequence[Any], bits: Sequence[int] | None
               ) -> tuple[list[Any], str]:
    """A row's values made comparable, and how: figures in LSB compare as they are when every
    candidate has the same bits, else per full scale (value / (2^N − 1), an LSB being that share
    of the full scale); other figures compare as they are."""
    if bits is None or SUMMARY_KEYS[key][1] != "LSB" or len(set(bits)) <= 1:
        same = f", all {bits[0]} bits" if bits and SUMMARY_KEYS[key][1] == "LSB" else ""
        return list(values), same
    scaled = [None if v is None else float(v) / (2 ** n - 1) for v, n in zip(values, bits, strict=True)]
    return scaled, ", compared per full scale as the bits differ"


def best_columns(key: str, values: Sequence[Any], bits: Sequence[int] | None = None) -> set[int]:
    """Indices of the best values of a row (empty when the row is not judged or all are equal);
    ``bits`` per candidate makes LSB figures of different resolutions compare per full scale."""
    rule = BEST_RULE.get(key)
    values, _how = comparable(key, values, bits)
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


def wrapped(name: str, width: int = 14) -> str:
    """A candidate name broken into lines of about ``width`` characters at spaces (a narrow
    column header)."""
    lines: list[str] = []
    for word in name.split():
        if lines and len(lines[-1]) + 1 + len(word) <= width:
            lines[-1] += f" {word}"
        else:
            lines.append(word)
    return "\n".join(lines) or name


def reasons_text(candidates: Sequence[Candidate], results: Sequence[CandidateResult]) -> str:
    """One line per reason a figure has no meaning: which rows, for which candidates."""
    rows: dict[str, dict[str, list[str]]] = {}
    for cand, res in zip(candidates, results, strict=True):
        for key, why in (res.evaluation.no_meaning if res.evaluation is not None else {}).items():
            rows.setdefault(why, {}).setdefault(SUMMARY_KEYS[key][0].strip(), []).append(cand.name)
    lines = []
    for why, figures in rows.items():
        names = sorted({n for ns in figures.values() for n in ns})
        who = "every candidate" if len(names) == len(candidates) else ", ".join(names)
        lines.append(f"No meaning — {why} ({who}): {', '.join(figures)}.")
    return "\n".join(lines)


class CompareTable(QTableWidget):
    """Rows = :data:`SUMMARY_KEYS` figures, columns = candidates; best values bold with ◆. The
    ratio search's rows are left out: ``evaluate`` does not compute them (the values pane's "Make it
    monotonic by design" does, on request)."""

    def __init__(self, parent: QWidget | None = None) -> None:
        keys = [k for k in SUMMARY_KEYS if k not in SKEW_FIGURES]
        super().__init__(len(keys), 0, parent)
        self.setObjectName("table_figures")
        self.keys = keys
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
        label = SUMMARY_KEYS[key][0]
        indent = label[: len(label) - len(label.lstrip())]
        return indent + wrapped(label, LABEL_CHARS).replace("\n", "\n" + indent)

    def set_results(self, candidates: Sequence[Candidate], results: Sequence[CandidateResult]) -> None:
        """Fill the table from one result set (a candidate that failed shows its message)."""
        self.setUpdatesEnabled(False)
        try:
            self.setColumnCount(len(candidates))
            self._names = [c.name for c in candidates]
            for col, cand in enumerate(candidates):
                head = QTableWidgetItem(f"■ {wrapped(cand.name)}")
                head.setForeground(QBrush(QColor(cand.colour)))
                d = cand.design
                head.setToolTip(f"{cand.name}: {network_name(d.topology, d.output)}, {d.bits} bits")
                self.setHorizontalHeaderItem(col, head)
            bold = QFont(self.font())
            bold.setBold(True)
            self._texts = []
            bits = [c.design.bits for c in candidates]
            for row, key in enumerate(self.keys):
                values = [r.evaluation.summary.get(key) if r.evaluation is not None else None
                          for r in results]
                void = [r.evaluation.no_meaning.get(key) if r.evaluation is not None else None
                        for r in results]
                best = best_columns(key, [None if why else v for v, why in zip(values, void,
                                                                                strict=True)], bits)
                how = comparable(key, values, bits)[1]
                texts = []
                for col, (v, res) in enumerate(zip(values, results, strict=True)):
                    text = cell_text(key, v) if res.evaluation is not None else "not solved"
                    if void[col]:
                        text = NO_MEANING_TEXT
                    label = f"{text} {BEST_MARK}" if col in best else text
                    item = QTableWidgetItem(label)
                    item.setTextAlignment(Qt.AlignmentFlag.AlignRight | Qt.AlignmentFlag.AlignVCenter)
                    if col in best:
                        item.setFont(bold)
                        item.setToolTip(f"Best in this row ({RULE_WORDS[BEST_RULE[key]]}{how})")
                    elif res.evaluation is None:
                        item.setToolTip(res.message)
                    elif void[col]:
                        item.setToolTip(shown(void[col]).capitalize())
                        item.setForeground(QBrush(QColor("#7a7a7a")))
                        text = shown(void[col])
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
