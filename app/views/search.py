"""The design-search view: the cheapest design meeting the targets over networks, unit values,
series and grades; cost against yield with the Pareto front; the cheapest designs with their cost
breakdown and yields; any of them added as a candidate.

Follows the view contract of ``view_registry.py``. The search runs on a ``workers.JobRunner``
channel (points in a process pool by default), with progress and Cancel; only when asked (Run).
"""

from __future__ import annotations

import math
from collections.abc import Callable
from concurrent.futures import Executor
from dataclasses import replace

import pyqtgraph as pg
from PySide6.QtCore import Signal
from PySide6.QtWidgets import (
    QComboBox,
    QFormLayout,
    QHBoxLayout,
    QHeaderView,
    QLabel,
    QLineEdit,
    QProgressBar,
    QPushButton,
    QTableWidget,
    QTableWidgetItem,
    QVBoxLayout,
    QWidget,
)

from rungwise.core import Design
from rungwise.core.cost import CostTable
from rungwise.core.designfile import DesignFile
from rungwise.core.errors import RungwiseError
from rungwise.core.formatting import format_quantity
from rungwise.core.grades import CRITERIA
from rungwise.core.search_question import DEFAULT_GRADES, DEFAULT_SERIES
from rungwise.core.search_report import TABLE_HEAD, point_row, search_summary
from rungwise.core.space_search import SearchPoint, SearchResult, default_executor
from rungwise.core.targets import MAX_SEED, Targets

from ..jobs.workers import Progress, runner_for
from ..plots.theme import follow_palette
from ..window.number_box import DecimalBox, NumberBox
from .search_job import question_from_fields, search_job

CHANNEL = "search"
"""JobRunner channel of this view."""

VERDICT_PENS = {"meets": "#1b9e5a", "fails": "#c8463d", "undecided": "#8a8a8a"}
"""Point colours on the cost-against-yield plot."""

FIELDS = {
    "networks": ("Networks", "", "empty: every network with the base output's kind; or e.g. "
                 "r2r-voltage, segmented:buffer"),
    "thermometer_bits": ("Thermometer bits M", "1-4", "segmented networks: a range or list"),
    "unit_r": ("Unit R", "", "empty: the base design's R; or a range of E6 values (4k7-47k) or a "
               "list (4k7, 10k)"),
    "series": ("Series", ", ".join(DEFAULT_SERIES), "part series to try: exact, E24 … E192"),
    "grades": ("Tolerance grades", ", ".join(f"{g * 100:g}%" for g in DEFAULT_GRADES),
               "grades to try"),
    "builds": ("Build styles", "as-designed", "as-designed, binary=unit-array, two_r=two-units, "
               "lsb_section=unit-array"),
    "max_iref": ("Largest reference current", "", "optional, e.g. 1m (A)"),
    "max_rout": ("Largest output resistance", "", "optional, e.g. 20k (Ω)"),
    "max_glitch": ("Largest glitch impulse", "", "optional, e.g. 1p (V·s); needs switching figures"),
    "max_settling": ("Longest settling to ½ LSB", "", "optional, e.g. 2u (s); needs a load "
                     "capacitance"),
}
"""Text fields: key → (label, default text, tooltip)."""


class SearchPane(QWidget):
    """The design search of one compared candidate (the base).

    Signals
    -------
    candidate_requested(object)
        A ``Design`` from the results to add to the comparison.
    result_changed(object)
        A finished (or cancelled) ``SearchResult`` is shown.
    """

    candidate_requested = Signal(object)
    result_changed = Signal(object)

    def __init__(self, parent: QWidget | None = None) -> None:
        super().__init__(parent)
        self.setObjectName("search_pane")
        self._designs: list[Design] = []
        self.cost = CostTable()
        self.file_targets = Targets()
        """The opened file's ``[targets]``: the fields start from them; line and monotonic kept."""
        self.result: SearchResult | None = None
        self.make_executor: Callable[[], Executor] | None = None
        """Makes the executor of a run's points (``None``: a process pool on this machine)."""
        self.runner = runner_for(self)
        self._build()

    # --- layout --------------------------------------------------------------------------------
    def _build(self) -> None:
        form = QFormLayout()
        self.combo_base = QComboBox(objectName="combo_base")
        form.addRow("Base candidate", self.combo_base)
        self.edits: dict[str, QLineEdit] = {}
        for key, (label, default, tip) in FIELDS.items():
            edit = QLineEdit(default, objectName=f"edit_{key}", placeholderText=tip)
            edit.setToolTip(tip)
            self.edits[key] = edit
            form.addRow(label, edit)
        self.combo_criterion = QComboBox(objectName="combo_criterion")
        for c in CRITERIA:
            self.combo_criterion.addItem(c, c)
        self.spin_target = DecimalBox(objectName="spin_target", minimum=50.0, maximum=99.99,
                                      decimals=2, value=99.0, suffix=" %", singleStep=0.5,
                                      label="Target yield", unit="%")
        self.spin_inl = DecimalBox(objectName="spin_inl", minimum=0.01, maximum=100.0,
                                   decimals=2, value=0.5, suffix=" LSB", label="|INL|", unit="LSB")
        self.spin_dnl = DecimalBox(objectName="spin_dnl", minimum=0.01, maximum=100.0,
                                   decimals=2, value=0.5, suffix=" LSB", label="|DNL|", unit="LSB")
        goal = QHBoxLayout()
        for w in (self.combo_criterion, QLabel("on"), self.spin_target, QLabel("|INL| ≤"),
                  self.spin_inl, QLabel("|DNL| ≤"), self.spin_dnl):
            goal.addWidget(w)
        form.addRow("Boards must meet", goal)
        self.spin_trials = NumberBox(objectName="spin_trials", minimum=100, maximum=1_000_000,
                                     value=4000, singleStep=500, label="Boards")
        self.spin_seed = NumberBox(objectName="spin_seed", minimum=0, maximum=min(MAX_SEED, 2**31 - 1),
                                   value=1, label="Seed")
        boards = QHBoxLayout()
        boards.addWidget(self.spin_trials, 1)
        boards.addWidget(QLabel("Seed"))
        boards.addWidget(self.spin_seed, 1)
        form.addRow("Most boards per point", boards)
        self.button_prices = QPushButton("Prices…", objectName="button_prices")
        self.button_prices.clicked.connect(self.edit_prices)
        self.button_run = QPushButton("Run", objectName="button_run")
        self.button_cancel = QPushButton("Cancel", objectName="button_cancel", enabled=False)
        self.button_run.clicked.connect(self.run)
        self.button_cancel.clicked.connect(self.cancel)
        self.progress = QProgressBar(objectName="progress", minimum=0, maximum=1, value=0)
        buttons = QHBoxLayout()
        for w in (self.button_prices, self.button_run, self.button_cancel, self.progress):
            buttons.addWidget(w)
        self.label_prices = QLabel("", objectName="label_prices", wordWrap=True)
        self.label_status = QLabel("Choose the space and Run", objectName="label_status",
                                   wordWrap=True)
        self.label_answer = QLabel("", objectName="label_answer", wordWrap=True)
        self.plot = follow_palette(pg.PlotWidget(objectName="plot_front"))
        self.plot.showGrid(x=True, y=True, alpha=0.3)
        self.plot.setLogMode(x=True, y=False)
        self.plot.setLabel("bottom", "Cost (price units)")
        self.plot.setLabel("left", "Yield, lower confidence bound (%)")
        self.plot.addLegend()
        self.table = QTableWidget(0, len(TABLE_HEAD), objectName="table_designs")
        self.table.setHorizontalHeaderLabels(list(TABLE_HEAD))
        self.table.setSelectionBehavior(QTableWidget.SelectionBehavior.SelectRows)
        self.table.setEditTriggers(QTableWidget.EditTrigger.NoEditTriggers)
        self.table.setWordWrap(False)
        header = self.table.horizontalHeader()
        header.setSectionResizeMode(QHeaderView.ResizeMode.ResizeToContents)
        header.setSectionResizeMode(0, QHeaderView.ResizeMode.Stretch)
        self.table.itemSelectionChanged.connect(self._show_breakdown)
        self.label_breakdown = QLabel("", objectName="label_breakdown", wordWrap=True)
        self.button_add = QPushButton("Add as candidate", objectName="button_add")
        self.button_add.clicked.connect(self.add_selected)
        self.label_why = QLabel("", objectName="label_why", wordWrap=True)
        self.label_method = QLabel("", objectName="label_method", wordWrap=True)
        top = QVBoxLayout(self)
        top.addLayout(form)
        top.addLayout(buttons)
        for w in (self.label_prices, self.label_status, self.label_answer):
            top.addWidget(w)
        top.addWidget(self.plot, 1)
        top.addWidget(self.table, 1)
        top.addWidget(self.label_breakdown)
        top.addWidget(self.button_add)
        top.addWidget(self.label_why)
        top.addWidget(self.label_method)
        self._show_prices()

    # --- the view contract ---------------------------------------------------------------------
    def set_candidates(self, designs: list[Design]) -> None:
        """New candidates after a finished edit (the search runs only when asked)."""
        designs = list(designs)
        if designs == self._designs:
            return
        self._designs = designs
        row = self.combo_base.currentIndex()
        self.combo_base.clear()
        self.combo_base.addItems([d.label for d in designs])
        self.combo_base.setCurrentIndex(min(max(row, 0), len(designs) - 1))
        if self.result is not None:
            self.label_status.setText("Candidates changed: Run to search again")

    def load_file_tables(self, doc: DesignFile | None) -> None:
        """Take an opened file's prices and search question into the fields (the demo: examples)."""
        self.cost = doc.cost if doc is not None and doc.cost is not None else CostTable()
        self._show_prices()
        self.file_targets = doc.targets if doc is not None else Targets()
        self.spin_inl.setValue(self.file_targets.max_inl_lsb)
        self.spin_dnl.setValue(self.file_targets.max_dnl_lsb)
        self.spin_target.setValue(self.file_targets.min_yield * 100)
        q = doc.search if doc is not None else None
        if q is None:
            return
        texts = {"networks": ", ".join(f"{t}:{o}" if o else t for t, o in q.networks),
                 "thermometer_bits": ", ".join(map(str, q.thermometer_bits)) or FIELDS[
                     "thermometer_bits"][1],
                 "unit_r": ", ".join(f"{r:g}" for r in q.unit_r),
                 "series": ", ".join(q.series), "grades": ", ".join(f"{g * 100:g}%" for g in q.grades),
                 "builds": ", ".join(q.builds) or FIELDS["builds"][1],
                 **{k: (f"{getattr(q, k):g}" if math.isfinite(getattr(q, k)) else "")
                    for k in ("max_iref", "max_rout", "max_settling", "max_glitch")}}
        for key, text in texts.items():
            self.edits[key].setText(text)
        self.combo_criterion.setCurrentIndex(self.combo_criterion.findData(q.criterion))
        if q.target_yield is not None:
            self.spin_target.setValue(q.target_yield * 100)
        self.spin_trials.setValue(min(int(q.trials), self.spin_trials.maximum()))
        self.spin_seed.setValue(min(int(q.seed), self.spin_seed.maximum()))

    def shutdown(self) -> None:
        """Cancel the running search and wait for the worker thread."""
        self.runner.shutdown()

    # --- actions -------------------------------------------------------------------------------
    def targets(self) -> Targets:
        """The per-board targets the fields describe (the file's INL line and monotonic rule kept)."""
        return replace(self.file_targets, max_inl_lsb=self.spin_inl.value(),
                       max_dnl_lsb=self.spin_dnl.value(), min_yield=self.spin_target.value() / 100)

    def run(self) -> None:
        """Start the search the fields describe (a bad entry is named in the status line)."""
        if not self._designs:
            self.label_status.setText("No candidate to start from")
            return
        base = self._designs[max(0, self.combo_base.currentIndex())]
        try:
            question = question_from_fields(
                {k: e.text() for k, e in self.edits.items()}, self.combo_criterion.currentData(),
                self.spin_target.value() / 100, self.spin_trials.value(), self.spin_seed.value())
            size = question.size(base)
        except RungwiseError as exc:
            self.label_status.setText(str(exc))
            return
        self.progress.setMaximum(max(1, size))
        self.progress.setValue(0)
        self.label_status.setText(f"Searching {size} points…")
        factory = self.make_executor or default_executor
        self.runner.submit(CHANNEL, search_job(base, question, self.targets(), self.cost, factory))

    def cancel(self) -> None:
        """Stop the search (points finished so far stay shown)."""
        if self.runner.is_busy(CHANNEL):
            self.runner.cancel(CHANNEL)
            self.label_status.setText("Cancelled; the points finished so far are shown")

    def edit_prices(self) -> None:
        """Open the price table dialog; OK keeps the edited table."""
        from .cost_dialog import CostDialog

        dialog = CostDialog(self.cost, self)
        if dialog.exec():
            self.cost = dialog.table
            self._show_prices()

    def _show_prices(self) -> None:
        self.label_prices.setText(f"Costs: {self.cost.source}.")

    def selected_point(self) -> SearchPoint | None:
        """The point of the selected table row (the answer when nothing is selected)."""
        if self.result is None:
            return None
        rows = self.table.selectionModel().selectedRows()
        decided = self.result.decided
        if rows and rows[0].row() < len(decided):
            return decided[rows[0].row()]
        return self.result.answer

    def _show_breakdown(self) -> None:
        """The selected design's cost by line and its yield decision, under the table."""
        p = self.selected_point()
        if p is None or self.result is None:
            self.label_breakdown.setText("")
            return
        lines = "; ".join(f"{k}: {format_quantity(v)}" for k, v in p.breakdown.get("lines", {}).items())
        self.label_breakdown.setText(f"{p.describe()} — cost {format_quantity(p.cost)} ({lines}; "
                                     f"{self.result.prices}). {p.reason}")

    def add_selected(self) -> None:
        """Emit ``candidate_requested`` with the selected design (named after its settings)."""
        p = self.selected_point()
        if p is None:
            self.label_status.setText("Nothing to add yet: Run the search")
            return
        d = p.design
        m = f" M={d.thermometer_bits}" if d.topology == "segmented" else ""
        self.candidate_requested.emit(d.replace(name=f"{d.topology}{m} {d.series} "
                                                     f"±{p.grade * 100:g} % (searched)"))

    # --- results -------------------------------------------------------------------------------
    def _show(self, result: SearchResult, final: bool) -> None:
        self.result = result
        decided = result.decided
        self.table.setRowCount(len(decided))
        for i, p in enumerate(decided):
            row = point_row(p)
            tip = "; ".join(f"{k}: {format_quantity(v)}" for k, v in p.breakdown.get("lines", {}).items())
            for j, text in enumerate(row):
                item = QTableWidgetItem(text)
                item.setToolTip(f"{tip} ({result.prices})" if j == 1 else p.reason)
                self.table.setItem(i, j, item)
        if final:
            s = search_summary(result)
            self.label_answer.setText(s.answer + ("\nCost: " + "; ".join(s.cost_lines)
                                                  if s.cost_lines else ""))
            self.label_why.setText("Why the other networks lost:\n" + "\n".join(s.why_lost)
                                   if s.why_lost else "")
            self.label_method.setText(f"Method: {s.method}.")
            best = result.answer
            if best is not None:
                self.table.selectRow(decided.index(best))
        self.replot()

    def replot(self) -> None:
        """Cost against the yield bound of every judged point; the front as a line."""
        self.plot.clear()
        if self.result is None:
            return
        for verdict, pen in VERDICT_PENS.items():
            pts = [p for p in self.result.decided if p.verdict == verdict
                   and math.isfinite(p.yield_lower) and p.cost > 0]
            if pts:
                self.plot.plot([p.cost for p in pts], [p.yield_lower * 100 for p in pts], pen=None,
                               symbol="o", symbolSize=7, symbolBrush=pen, name=verdict)
        front = [p for p in self.result.front() if p.cost > 0]
        if front:
            self.plot.plot([p.cost for p in front], [p.yield_lower * 100 for p in front],
                           pen=pg.mkPen(VERDICT_PENS["meets"], width=2), name="front")
        best = self.result.answer
        if best is not None and best.cost > 0:
            self.plot.plot([best.cost], [best.yield_lower * 100], pen=None, symbol="star",
                           symbolSize=16, symbolBrush=VERDICT_PENS["meets"], name="answer")
        self.plot.addItem(pg.InfiniteLine(self.result.target_yield * 100, angle=0,
                                          pen=pg.mkPen("#777777", style=pg.QtCore.Qt.PenStyle.DashLine)))

    def _on_progress(self, channel: str, p: Progress) -> None:
        if channel == CHANNEL and p.partial is not None:
            self.progress.setMaximum(p.total)
            self.progress.setValue(p.done)
            self._show(p.partial, final=False)

    def _on_finished(self, channel: str, result: SearchResult | None) -> None:
        if channel != CHANNEL or result is None:
            return
        self.progress.setMaximum(max(1, result.total))
        self.progress.setValue(result.done)
        self._show(result, final=True)
        self.label_status.setText(f"{len(result.decided)} designs judged by Monte Carlo, "
                                  f"{len(result.pruned)} ruled out by their nominal figures"
                                  + (" (cancelled)" if result.cancelled else ""))
        self.result_changed.emit(result)

    def _on_failed(self, channel: str, message: str) -> None:
        if channel == CHANNEL:
            self.label_status.setText(message)

    def _on_busy(self, channel: str, busy: bool) -> None:
        if channel == CHANNEL:
            self.button_cancel.setEnabled(busy)
            self.button_run.setEnabled(True)
