"""The parts view: a candidate built from buyable parts — values, bill of materials with export,
flagged overloads with the caution, settling, noise, drift and amplifier figures — and suggested
unit values for limits the user types.

Follows the view contract of ``view_registry.py``: ``set_candidates`` returns at once; the work
runs on ``workers.JobRunner`` channels ``parts`` and ``suggest``.
"""

from __future__ import annotations

import re
from pathlib import Path

from PySide6.QtCore import Qt, Signal
from PySide6.QtGui import QColor
from PySide6.QtWidgets import (
    QComboBox,
    QFileDialog,
    QFormLayout,
    QGridLayout,
    QGroupBox,
    QHBoxLayout,
    QHeaderView,
    QLabel,
    QLineEdit,
    QPushButton,
    QTableWidget,
    QTableWidgetItem,
    QVBoxLayout,
    QWidget,
)

from rungwise.core import Design
from rungwise.core.errors import RungwiseError
from rungwise.core.parts.bom import CAUTION, to_csv
from rungwise.core.topologies import build
from rungwise.core.types import SERIES

from ..jobs.workers import JobRunner
from .parts_report import (
    BOM_COLUMNS,
    DRIFT_ROLES,
    SUGGEST_COLUMNS,
    PartsOutcome,
    bom_cells,
    limits_from_text,
    parts_job,
    suggest_job,
    suggestion_cells,
    summary_lines,
    with_drift_choices,
)

AS_DESIGNED = "as designed"
"""Series choice that keeps each candidate's own series."""

FLAG_COLOUR = QColor("#f6d5c8")
"""Background of a flagged BOM row (our own choice)."""

LIMIT_FIELDS = (("iref_max", "Reference current at most", "e.g. 1m (A)"),
                ("rout_max", "Output resistance at most", "e.g. 20k (Ω)"),
                ("settling_max", "Settling time at most", "e.g. 2u (s), needs load_c"),
                ("noise_lsb_max", "Noise at most (LSB rms)", "e.g. 0.01"))
"""Suggestion limits: (Limits field, label, placeholder)."""


class PartsPane(QWidget):
    """Real parts of one compared candidate at a time.

    Signals
    -------
    candidate_requested(object)
        A ``Design`` with the chosen series or a suggested unit value, to add as a candidate.
    result_changed(object)
        A finished ``PartsOutcome`` is shown.
    suggestions_changed(object)
        A finished list of ``Suggestion`` is shown.
    """

    candidate_requested = Signal(object)
    result_changed = Signal(object)
    suggestions_changed = Signal(object)

    def __init__(self, parent: QWidget | None = None) -> None:
        super().__init__(parent)
        self.setObjectName("parts_pane")
        self._designs: list[Design] = []
        self._outcome: PartsOutcome | None = None
        self._suggestions: list = []
        self.runner = JobRunner(self)
        self.runner.finished.connect(self._on_finished)
        self.runner.failed.connect(self._on_failed)
        self._build()

    def _build(self) -> None:
        top = QHBoxLayout()
        self.combo_candidate = QComboBox(objectName="combo_candidate")
        self.combo_series = QComboBox(objectName="combo_series")
        self.combo_series.addItems([AS_DESIGNED, *SERIES])
        self.button_use_series = QPushButton("Add these choices as a candidate",
                                             objectName="button_use_series")
        for w in (QLabel("Candidate"), self.combo_candidate, QLabel("Values"), self.combo_series,
                  self.button_use_series):
            top.addWidget(w)
        top.addStretch(1)
        self.label_status = QLabel("", objectName="label_status")
        self.table_figures = QTableWidget(0, 2, objectName="table_figures")
        self.table_figures.setHorizontalHeaderLabels(["Figure", "Value"])
        self.table_figures.horizontalHeader().setStretchLastSection(True)
        self.table_figures.verticalHeader().setVisible(False)
        self.label_caution = QLabel(CAUTION, objectName="label_caution")
        self.label_caution.setWordWrap(True)
        self.label_caution.setVisible(False)
        self.table_bom = QTableWidget(0, len(BOM_COLUMNS), objectName="table_bom")
        self.table_bom.setHorizontalHeaderLabels(BOM_COLUMNS)
        for wrapping in ("Parts", "Note"):  # long texts share what the short columns leave
            self.table_bom.horizontalHeader().setSectionResizeMode(BOM_COLUMNS.index(wrapping),
                                                                   QHeaderView.ResizeMode.Stretch)
        self.table_bom.setWordWrap(True)  # the part ids wrap instead of scrolling sideways
        self.table_bom.setHorizontalScrollBarPolicy(Qt.ScrollBarPolicy.ScrollBarAlwaysOff)
        self.button_export = QPushButton("Export parts list (CSV)…", objectName="button_export")
        self._build_suggest()
        self._build_drift()
        lay = QVBoxLayout(self)
        lay.addLayout(top)
        lay.addWidget(self.box_drift)
        lay.addWidget(self.label_status)
        lay.addWidget(self.table_figures, 2)
        lay.addWidget(self.label_caution)
        lay.addWidget(self.table_bom, 2)
        lay.addWidget(self.button_export, 0, Qt.AlignmentFlag.AlignLeft)
        lay.addWidget(self.box_suggest, 2)
        self.combo_candidate.currentIndexChanged.connect(lambda _: self.refresh())
        self.combo_series.currentIndexChanged.connect(lambda _: self.refresh())
        self.button_use_series.clicked.connect(self._request_series)
        self.button_export.clicked.connect(self._export_dialog)

    def _build_drift(self) -> None:
        self.box_drift = QGroupBox("Temperature coefficients by part role, and the drift range")
        grid = QGridLayout(self.box_drift)  # roles on one line, the range on the next: fits a laptop
        row = QHBoxLayout()
        grid.addLayout(row, 0, 0)
        wide = self.fontMetrics().horizontalAdvance("design's") + 24
        self.tempco_edits: dict[str, QLineEdit] = {}
        for role in DRIFT_ROLES:
            edit = QLineEdit(objectName=f"edit_tempco_{role}")
            edit.setPlaceholderText("ppm/K")
            edit.setToolTip(f"Temperature coefficient of every '{role}' part: 100 (ppm/K), 100 ppm or 1e-4; "
                            "empty keeps the design's")
            edit.setMaximumWidth(90)
            edit.setMinimumWidth(wide)
            edit.editingFinished.connect(self.refresh)
            self.tempco_edits[role] = edit
            row.addWidget(QLabel(role))
            row.addWidget(edit)
        self.edit_temp_low = QLineEdit(objectName="edit_temp_low")
        self.edit_temp_high = QLineEdit(objectName="edit_temp_high")
        row.addStretch(1)
        span = QHBoxLayout()
        grid.addLayout(span, 1, 0)
        span.addWidget(QLabel("Drift range"))
        for label, edit in (("from °C", self.edit_temp_low), ("to °C", self.edit_temp_high)):
            edit.setPlaceholderText("design's")
            edit.setMaximumWidth(90)
            edit.setMinimumWidth(wide)
            edit.editingFinished.connect(self.refresh)
            span.addWidget(QLabel(label))
            span.addWidget(edit)
        span.addStretch(1)

    def _drift_choices(self) -> tuple[dict[str, float], float | None, float | None]:
        """Typed coefficients (1/K; a bare number is ppm/K) and range ends (°C, None = design's),
        each checked by its field's range."""
        from rungwise.core.mismatch import NUMERIC_SETTINGS
        from rungwise.core.parts.board import BOARD_KEYS

        tcs = {}
        for role, edit in self.tempco_edits.items():
            text = edit.text().strip()
            if text:
                plain = re.fullmatch(r"[+-]?(\d+\.?\d*|\.\d+)", text)  # a bare number: ppm/K
                tcs[role] = NUMERIC_SETTINGS["tempco"].check(f"tempco of {role}",
                                                             f"{text} ppm/K" if plain else text)
        ends = [BOARD_KEYS[name].check(name, e.text()) if e.text().strip() else None
                for e, name in ((self.edit_temp_low, "temp_low_c"), (self.edit_temp_high, "temp_high_c"))]
        return tcs, ends[0], ends[1]

    def _build_suggest(self) -> None:
        self.box_suggest = QGroupBox("Unit values that meet limits")
        form = QFormLayout()
        self.limit_edits: dict[str, QLineEdit] = {}
        for key, label, hint in LIMIT_FIELDS:
            edit = QLineEdit(objectName=f"edit_{key}")
            edit.setPlaceholderText(hint)
            self.limit_edits[key] = edit
            form.addRow(label, edit)
        self.button_suggest = QPushButton("Suggest values", objectName="button_suggest")
        self.button_use_value = QPushButton("Add the selected value as candidate",
                                            objectName="button_use_value")
        self.table_suggest = QTableWidget(0, len(SUGGEST_COLUMNS), objectName="table_suggest")
        self.table_suggest.setHorizontalHeaderLabels(SUGGEST_COLUMNS)
        self.table_suggest.horizontalHeader().setStretchLastSection(True)
        self.table_suggest.setSelectionBehavior(QTableWidget.SelectionBehavior.SelectRows)
        buttons = QHBoxLayout()
        buttons.addWidget(self.button_suggest)
        buttons.addWidget(self.button_use_value)
        buttons.addStretch(1)
        lay = QVBoxLayout(self.box_suggest)
        lay.addLayout(form)
        lay.addLayout(buttons)
        lay.addWidget(self.table_suggest)
        self.button_suggest.clicked.connect(self.run_suggest)
        self.button_use_value.clicked.connect(self._request_value)

    # --- contract --------------------------------------------------------------------------------
    def set_candidates(self, designs: list[Design]) -> None:
        """Show the compared candidates (keeps the selected one when it is still there)."""
        self._designs = list(designs)
        current = self.combo_candidate.currentIndex()
        self.combo_candidate.blockSignals(True)
        self.combo_candidate.clear()
        self.combo_candidate.addItems([d.label for d in self._designs])
        if 0 <= current < len(self._designs):
            self.combo_candidate.setCurrentIndex(current)
        self.combo_candidate.blockSignals(False)
        self.refresh()

    def shutdown(self) -> None:
        """Cancel the running jobs and wait for the worker threads."""
        self.runner.shutdown()

    # --- actions ---------------------------------------------------------------------------------
    def design(self) -> Design | None:
        """The selected candidate with the chosen series (``None`` when there is none)."""
        i = self.combo_candidate.currentIndex()
        if not 0 <= i < len(self._designs):
            return None
        d = self._designs[i]
        series = self.combo_series.currentText()
        if series not in (AS_DESIGNED, d.series):
            d = d.replace(series=series)
        tcs, low, high = self._drift_choices()
        return with_drift_choices(d, tcs, low, high) if tcs or low is not None or high is not None else d

    def refresh(self) -> None:
        """Recompute the selected candidate in the background."""
        try:
            d = self.design()
        except RungwiseError as exc:
            self.runner.cancel("parts")  # a result of the earlier choices must not replace this
            self.label_status.setText(str(exc))
            return
        if d is None:
            return
        self.label_status.setText("Working…")
        self.runner.submit("parts", parts_job(d))

    def run_suggest(self) -> None:
        """Rank unit values for the typed limits in the background."""
        try:
            d = self.design()
            if d is None:
                return
            limits = limits_from_text({k: e.text() for k, e in self.limit_edits.items()})
        except RungwiseError as exc:
            self.runner.cancel("suggest")  # earlier limits' ranking must not replace this
            self.label_status.setText(str(exc))
            return
        self.label_status.setText("Trying every value of the series…")
        self.runner.submit("suggest", suggest_job(d, limits, None))

    def export_csv(self, path: str | Path) -> None:
        """Write the shown bill of materials to ``path`` as CSV."""
        if self._outcome is None:
            raise RungwiseError("nothing to export yet")
        Path(path).write_text(to_csv([(self._outcome.design.label, self._outcome.bom)]),
                              encoding="utf-8")

    def _export_dialog(self) -> None:
        path, _ = QFileDialog.getSaveFileName(self, "Export parts list", "parts.csv", "CSV (*.csv)")
        if path:
            try:
                self.export_csv(path)
                self.label_status.setText(f"Parts list written to {path}")
            except (OSError, RungwiseError) as exc:
                self.label_status.setText(f"Could not write {path}: {exc}")

    def _request_series(self) -> None:
        try:
            d = self.design()
        except RungwiseError as exc:
            self.label_status.setText(str(exc))
            return
        if d is not None:
            self._offer(d.replace(name=f"{d.label} ({d.series})"))

    def _request_value(self) -> None:
        try:
            d = self.design()
        except RungwiseError as exc:
            self.label_status.setText(str(exc))
            return
        row = self.table_suggest.currentRow()
        if d is None or not 0 <= row < len(self._suggestions):
            return
        r = self._suggestions[row].unit_r
        series = d.series if d.series != "exact" else "E96"
        self._offer(d.replace(unit_r=r, series=series, name=f"{d.label} ({r:g} Ω, {series})"))

    def _offer(self, design: Design) -> None:
        """Emit ``candidate_requested`` with ``design`` unless its parts cannot be built (a value
        the series does not offer, say): then say why here and add nothing."""
        try:
            build(design)  # snapping and part values are checked when the network is built
        except RungwiseError as exc:
            self.label_status.setText(f"Not added: {exc}")
            return
        self.candidate_requested.emit(design)

    # --- results ---------------------------------------------------------------------------------
    def _on_finished(self, channel: str, result) -> None:
        if result is None:
            return
        if channel == "suggest":
            self._show_suggestions(result)
        else:
            self._show(result)

    def _on_failed(self, channel: str, message: str) -> None:
        self.label_status.setText(message)

    def _show(self, out: PartsOutcome) -> None:
        self._outcome = out
        rows = summary_lines(out)
        self.table_figures.setRowCount(len(rows))
        for i, (label, text) in enumerate(rows):
            self.table_figures.setItem(i, 0, QTableWidgetItem(label))
            self.table_figures.setItem(i, 1, QTableWidgetItem(text))
        self.table_figures.resizeColumnToContents(0)
        self.table_bom.setRowCount(len(out.bom))
        for i, line in enumerate(out.bom):
            for j, text in enumerate(bom_cells(line)):
                item = QTableWidgetItem(text)
                item.setToolTip(text)  # a long list of part ids is cut short in its column
                if line.flagged:
                    item.setBackground(FLAG_COLOUR)
                    item.setToolTip(f"{line.note}\n{CAUTION}")
                self.table_bom.setItem(i, j, item)
        self.table_bom.resizeColumnsToContents()
        self.table_bom.resizeRowsToContents()
        flagged = out.flagged
        self.label_caution.setVisible(bool(flagged))
        self.label_status.setText(f"{len(flagged)} item(s) over a rating or limit" if flagged
                                  else "No part over its rating or limit")
        self.result_changed.emit(out)

    def _show_suggestions(self, found: list) -> None:
        self._suggestions = found
        self.table_suggest.setRowCount(len(found))
        for i, s in enumerate(found):
            for j, text in enumerate(suggestion_cells(s)):
                self.table_suggest.setItem(i, j, QTableWidgetItem(text))
        self.label_status.setText(f"{len(found)} values ranked" if found else
                                  "No value of the series fits this network")
        self.suggestions_changed.emit(found)
