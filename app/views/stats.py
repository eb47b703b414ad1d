"""The statistics view: yields, histograms, INL envelope and yield-against-grade curves per candidate.

Follows the view contract of ``view_registry.py``. Work runs on a ``workers.JobRunner`` channel,
only when asked (Run) or after a finished edit (``set_candidates`` with "Rerun after each edit"
ticked) — never while a value is being dragged. The seed used is always shown.
"""

from __future__ import annotations

import numpy as np
import pyqtgraph as pg
from PySide6.QtCore import Qt, Signal
from PySide6.QtGui import QBrush, QColor
from PySide6.QtWidgets import (
    QCheckBox,
    QComboBox,
    QFormLayout,
    QGridLayout,
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
from rungwise.core.formatting import format_percent
from rungwise.core.grades import STANDARD_GRADES
from rungwise.core.targets import MAX_SEED

from ..jobs.workers import Progress, runner_for
from ..plots.theme import candidate_colour, follow_palette
from ..window.number_box import DecimalBox, NumberBox
from .stats_job import StatsOutcome, StatsRequest, statistics_job

CHANNEL = "statistics"
"""JobRunner channel of this view."""

CRITERIA = {"monotonic": "Monotonic", "dnl": "|DNL| within target", "inl": "|INL| within target",
            "all": "Every target"}
"""Decision rules offered, by ``grades.Criterion`` value."""

PLOT_MIN_HEIGHT = 210
"""Smallest height of a plot of this view, px."""

COLUMNS = ("Candidate", "Engine", "Monotonic", "|DNL| ok", "|INL| ok", "All\ntargets",
           "Loosest\npassing grade")
"""Columns of the results table."""



def grade_text(grade: float | None) -> str:
    """``0.01`` → ``"±1 %"``; ``None`` → ``"tighter than ±0.01 %"``."""
    if grade is None:
        return f"tighter than ±{format_percent(STANDARD_GRADES[0])}"
    return f"±{format_percent(grade)}"


class StatisticsPane(QWidget):
    """Monte Carlo statistics of the compared candidates, with Run, Cancel, progress and seed.

    Signals
    -------
    candidate_requested(object)
        Not emitted by this view (part of the contract, kept for symmetry).
    result_changed(object)
        A finished ``StatsOutcome`` is shown.
    """

    candidate_requested = Signal(object)
    result_changed = Signal(object)

    def __init__(self, parent: QWidget | None = None) -> None:
        super().__init__(parent)
        self.setObjectName("stats_pane")
        self._designs: list[Design] = []
        self._colours: list[str] = []
        self._outcome: StatsOutcome | None = None
        self._stale = False
        self.runner = runner_for(self)
        self._build()

    # --- layout --------------------------------------------------------------------------------
    def _build(self) -> None:
        form = QFormLayout()
        self.combo_grade = QComboBox(objectName="combo_stats_grade")
        self.combo_grade.addItem("As each design says", None)
        for g in STANDARD_GRADES:
            self.combo_grade.addItem(grade_text(g), g)
        self.combo_criterion = QComboBox(objectName="combo_stats_criterion")
        for key, label in CRITERIA.items():
            self.combo_criterion.addItem(label, key)
        self.spin_target = DecimalBox(objectName="spin_stats_target", decimals=2, minimum=1.0,
                                      maximum=99.99, value=99.0, suffix=" %",
                                      label="Target yield", unit="%")
        self.spin_trials = NumberBox(objectName="spin_stats_trials", minimum=10, maximum=1_000_000,
                                     value=2000, singleStep=1000, label="Boards")
        self.edit_seed = QLineEdit("1", objectName="edit_stats_seed")
        self.button_new_seed = QPushButton("New seed", objectName="button_stats_new_seed")
        self.button_new_seed.clicked.connect(self._new_seed)
        seed_row = QHBoxLayout()
        seed_row.addWidget(self.edit_seed)
        seed_row.addWidget(self.button_new_seed)
        form.addRow("Part grade", self.combo_grade)
        form.addRow("Pass when", self.combo_criterion)
        form.addRow("Target yield", self.spin_target)
        form.addRow("Boards (trials)", self.spin_trials)
        form.addRow("Seed", seed_row)
        self.check_auto = QCheckBox("Rerun after each finished edit", objectName="check_stats_auto")
        self.check_auto.setChecked(True)
        self.button_run = QPushButton("Run", objectName="button_stats_run")
        self.button_cancel = QPushButton("Cancel", objectName="button_stats_cancel", enabled=False)
        self.button_run.clicked.connect(self.run)
        self.button_cancel.clicked.connect(self.cancel)
        self.progress = QProgressBar(objectName="progress_stats", minimum=0, maximum=1000, value=0)
        self.label_seed = QLabel("No run yet", objectName="label_stats_seed")
        self.label_status = QLabel("", objectName="label_stats_status")  # lines end in "\n"
        self.label_status.setWordWrap(True)  # long verdicts wrap instead of running off the side
        self.label_status.setAlignment(Qt.AlignmentFlag.AlignTop | Qt.AlignmentFlag.AlignLeft)
        self.label_status.setMinimumHeight(4 * self.label_status.fontMetrics().lineSpacing())
        buttons = QHBoxLayout()
        for w in (self.button_run, self.button_cancel, self.progress):
            buttons.addWidget(w)
        self.table = QTableWidget(0, len(COLUMNS), objectName="table_stats")
        self.table.setHorizontalHeaderLabels(list(COLUMNS))
        self.table.setEditTriggers(QTableWidget.EditTrigger.NoEditTriggers)
        # columns share the width and long texts wrap: no sideways scrolling on a laptop screen
        self.table.horizontalHeader().setSectionResizeMode(QHeaderView.ResizeMode.Stretch)
        self.table.verticalHeader().setSectionResizeMode(QHeaderView.ResizeMode.ResizeToContents)
        self.table.setWordWrap(True)
        self.table.setHorizontalScrollBarPolicy(Qt.ScrollBarPolicy.ScrollBarAlwaysOff)
        self.table.setVerticalScrollBarPolicy(Qt.ScrollBarPolicy.ScrollBarAlwaysOff)
        self.combo_candidate = QComboBox(objectName="combo_stats_candidate")
        self.combo_candidate.currentIndexChanged.connect(self._show_candidate)
        self.plot_hist = follow_palette(pg.PlotWidget(title="Boards by worst error"))
        self.plot_hist.setObjectName("plot_stats_hist")
        self.plot_hist.setLabel("bottom", "max |error| (LSB)")
        self.plot_hist.setLabel("left", "boards")
        self.plot_hist.addLegend()
        self.plot_envelope = follow_palette(pg.PlotWidget(title="INL spread against code"))
        self.plot_envelope.setObjectName("plot_stats_envelope")
        self.plot_envelope.setLabel("bottom", "code")
        self.plot_envelope.setLabel("left", "INL (LSB)")
        self.plot_envelope.getAxis("left").enableAutoSIPrefix(False)
        self.plot_yield = follow_palette(pg.PlotWidget(title="Yield against part grade"))
        self.plot_yield.setObjectName("plot_stats_yield")
        self.plot_yield.setLogMode(x=True, y=False)
        self.plot_yield.setLabel("bottom", "part tolerance ± (%)")
        self.plot_yield.setLabel("left", "yield (%)")
        self.plot_yield.addLegend()
        for plot in (self.plot_yield, self.plot_hist, self.plot_envelope):
            plot.setMinimumHeight(PLOT_MIN_HEIGHT)  # the view scrolls rather than squash a plot
        plots = QGridLayout()
        plots.addWidget(self.plot_yield, 0, 0, 1, 2)
        plots.addWidget(self.plot_hist, 1, 0)
        plots.addWidget(self.plot_envelope, 1, 1)
        top = QVBoxLayout(self)
        top.addLayout(form)
        top.addWidget(self.check_auto)
        top.addLayout(buttons)
        top.addWidget(self.label_seed)
        top.addWidget(self.label_status)
        top.addWidget(self.table)
        pick = QHBoxLayout()
        pick.addWidget(QLabel("Histogram and INL spread of"))
        pick.addWidget(self.combo_candidate, 1)
        top.addLayout(pick)
        top.addLayout(plots, 1)

    # --- the view contract ---------------------------------------------------------------------
    def set_colours(self, colours: list[str]) -> None:
        """Draw candidate i's yield curve in ``colours[i]`` (the comparison's colours)."""
        if list(colours) != self._colours:
            self._colours = list(colours)
            if self._outcome is not None:
                self._plot_yield(self._outcome)
                self._fill_table(self._outcome)
                self._show_candidate(self.combo_candidate.currentIndex())

    def set_candidates(self, designs: list[Design]) -> None:
        """New candidates after a finished edit; reruns when "Rerun" is ticked — at once if the
        view is on screen, else as soon as it is shown (no work for a hidden tab)."""
        designs = list(designs)
        if designs == self._designs:
            return
        self._designs = designs
        self._stale = bool(designs) and self.check_auto.isChecked()
        if self._stale and self.isVisible():
            self.run()

    def showEvent(self, event) -> None:
        """Run the rerun a finished edit asked for while the view was hidden."""
        super().showEvent(event)
        if self._stale and self.check_auto.isChecked():
            self.run()

    def shutdown(self) -> None:
        """Cancel the running job and wait for the worker thread."""
        self.runner.shutdown()

    # --- actions -------------------------------------------------------------------------------
    def request(self) -> StatsRequest | None:
        """The request the controls describe (``None`` with a message when the seed is unreadable)."""
        text = self.edit_seed.text().strip()
        if not text.isdigit() or int(text) > MAX_SEED:
            self.label_status.setText(f"Seed: a whole number from 0 to {MAX_SEED}")
            return None
        return StatsRequest(tuple(self._designs), self.spin_trials.value(), int(text),
                            self.combo_grade.currentData(), self.combo_criterion.currentData(),
                            self.spin_target.value() / 100.0)

    def run(self) -> None:
        """Start a run with the current controls (cancels a running one)."""
        req = self.request()
        if req is None or not req.designs:
            return
        self._stale = False
        self.label_seed.setText(f"Seed {req.seed} · {req.trials} boards per candidate and grade")
        self.label_status.setText("Running…")
        self.progress.setValue(0)
        self.runner.submit(CHANNEL, statistics_job(req))

    def cancel(self) -> None:
        """Stop the running job between chunks."""
        if self.runner.is_busy(CHANNEL):
            self.runner.cancel(CHANNEL)
            self.label_status.setText("Cancelled")

    def _new_seed(self) -> None:
        self.edit_seed.setText(str(int(np.random.SeedSequence().entropy % 2**32)))

    # --- results -------------------------------------------------------------------------------
    def _on_busy(self, channel: str, busy: bool) -> None:
        if channel == CHANNEL:
            self.button_cancel.setEnabled(busy)

    def _on_progress(self, channel: str, p: Progress) -> None:
        if channel != CHANNEL:
            return
        self.progress.setValue(int(1000 * p.done / max(p.total, 1)))
        if isinstance(p.partial, StatsOutcome):  # partial results while it runs
            self._fill_table(p.partial)
            self._plot_yield(p.partial)
            self.label_status.setText(self._verdict(p.partial))

    def _on_failed(self, channel: str, message: str) -> None:
        if channel == CHANNEL:
            self.label_status.setText(f"Could not run: {message}")

    def _on_finished(self, channel: str, outcome: object) -> None:
        if channel != CHANNEL or not isinstance(outcome, StatsOutcome):
            return
        self._outcome = outcome
        self.progress.setValue(1000)
        self.label_status.setText(self._verdict(outcome))
        self._fill_table(outcome)
        self._plot_yield(outcome)
        self.combo_candidate.blockSignals(True)
        self.combo_candidate.clear()
        self.combo_candidate.addItems([d.label for d in outcome.request.designs])
        self.combo_candidate.blockSignals(False)
        self._show_candidate(0)
        self.result_changed.emit(outcome)

    def _verdict(self, outcome: StatsOutcome) -> str:
        req = outcome.request
        rule = CRITERIA[req.criterion].lower()
        lines = []
        for i, d in enumerate(req.designs):
            decision = outcome.decisions[i] if i < len(outcome.decisions) else None
            if decision is not None:  # the shared decision rule, stated with its confidence
                said = decision.text()
            elif outcome.results[i] is None:
                said = "waiting"
            else:
                said = f"running ({outcome.results[i].done:,} boards so far)"
            curve = outcome.curves[i]
            full = curve is not None and len(curve.yields) == len(curve.steps)
            need = grade_text(outcome.loosest(i)) if full else ("…" if curve is not None else "—")
            if full and outcome.loosest(i) is None and i < len(outcome.reasons) and outcome.reasons[i]:
                need = outcome.reasons[i]
            lines.append(f"{d.label}: {said} ({rule}); loosest grade that meets it: {need}"
                         + (f" ({outcome.notes[i]})" if outcome.notes[i] else ""))
        return "\n".join(lines)

    def _fill_table(self, outcome: StatsOutcome) -> None:
        designs = outcome.request.designs
        self.table.setRowCount(len(designs))
        for i, d in enumerate(designs):
            r = outcome.results[i]
            cells = [d.label, r.engine if r else "…"]
            for key in ("yield_monotonic", "yield_dnl", "yield_inl", "yield_all"):
                cells.append(getattr(r, key).text() if r is not None and r.done else "…")
            curve = outcome.curves[i]
            full = curve is not None and len(curve.yields) == len(curve.steps)
            cell = grade_text(outcome.loosest(i)) if full else (outcome.notes[i] or "…")
            if full and i < len(outcome.reasons) and outcome.reasons[i].startswith("none"):
                cell = "none: the nominal design already fails"
            cells.append(cell)
            for j, text in enumerate(cells):
                item = QTableWidgetItem(text)
                item.setTextAlignment(Qt.AlignmentFlag.AlignLeft | Qt.AlignmentFlag.AlignVCenter)
                if j == 0:
                    item.setForeground(QBrush(QColor(candidate_colour(self._colours, i))))
                self.table.setItem(i, j, item)
        self._fit_table_height()

    def _fit_table_height(self) -> None:
        """Show every row: the view scrolls as a whole, the table never on its own."""
        t = self.table
        t.resizeRowsToContents()
        rows = sum(t.rowHeight(r) for r in range(t.rowCount()))
        t.setFixedHeight(t.horizontalHeader().sizeHint().height() + rows + 2 * t.frameWidth() + 2)

    def _plot_yield(self, outcome: StatsOutcome) -> None:
        self.plot_yield.clear()
        for i, curve in enumerate(outcome.curves):
            if curve is None or not curve.yields:
                continue
            done = list(curve.yields)  # a running job may append while this reads
            steps = curve.steps[:len(done)]
            values = np.array([y.value for y in done])
            colour = candidate_colour(self._colours, i)
            self.plot_yield.plot(steps * 100, values * 100, pen=pg.mkPen(colour, width=2),
                                 symbol="o", symbolBrush=colour, symbolPen=colour,
                                 name=outcome.request.designs[i].label)
        target = outcome.request.target_yield * 100
        dashed = pg.mkPen("#888", style=Qt.PenStyle.DashLine)
        self.plot_yield.addItem(pg.InfiniteLine(target, angle=0, pen=dashed))

    def _show_candidate(self, index: int) -> None:
        outcome = self._outcome
        if outcome is None or not (0 <= index < len(outcome.results)):
            return
        r = outcome.results[index]
        self.plot_hist.clear()
        self.plot_envelope.clear()
        if r is None or r.done == 0:
            return
        colour = candidate_colour(self._colours, index)
        label = outcome.request.designs[index].label
        # the candidate's colour; DNL filled and solid, INL unfilled and dashed
        for values, name, fill, style in (
                (r.max_abs_dnl, "max |DNL|", colour + "70", Qt.PenStyle.SolidLine),
                (r.max_abs_inl, f"max |INL| ({r.targets.inl_line})", None, Qt.PenStyle.DashLine)):
            counts, edges = np.histogram(values, bins=40)
            self.plot_hist.plot(edges, counts, stepMode="center", fillLevel=0 if fill else None,
                                brush=pg.mkBrush(fill) if fill else None,
                                pen=pg.mkPen(colour, width=2, style=style), name=f"{label}: {name}")
        env = r.inl_envelope
        codes = r.envelope_codes.astype(float)
        for row, style in zip(env, (Qt.PenStyle.DashLine, Qt.PenStyle.SolidLine, Qt.PenStyle.DashLine),
                              strict=True):
            self.plot_envelope.plot(codes, row, pen=pg.mkPen(colour, width=1.5, style=style))
        self.plot_envelope.setTitle(f"INL spread, 1/50/99 % of {r.envelope_trials} boards")
