"""The trade-off explorer: a chosen figure against bit count N or segmented bits M, one line per
candidate; hover reads the values; a chosen point becomes a new candidate in the comparison.

Follows the view contract of ``view_registry.py``. Sweeps run on a ``workers.JobRunner`` channel
with progress and cancel; points are cached in ``core.sweep`` so re-plotting another figure, or
running the same sweep again, is instant. Runs only when asked (Run).
"""

from __future__ import annotations

import numpy as np
import pyqtgraph as pg
from PySide6.QtCore import Signal
from PySide6.QtWidgets import (
    QCheckBox,
    QComboBox,
    QFormLayout,
    QHBoxLayout,
    QLabel,
    QProgressBar,
    QPushButton,
    QVBoxLayout,
    QWidget,
)

from rungwise.core import Design
from rungwise.core.formatting import format_percent, format_quantity
from rungwise.core.grades import STANDARD_GRADES
from rungwise.core.sweep import (
    BITS_RANGE,
    SWEEP_KEYS,
    SweepResult,
    SweepStatistics,
    iter_sweep,
    sweep_values,
)
from rungwise.core.sweep_answer import answer_lines
from rungwise.core.topologies.segmented import SIZING_RULE
from rungwise.core.topologies.segmented_units import SIZING_RULE as UNIT_SIZING_RULE
from rungwise.core.types import MAX_ARRAY_BITS

from ..jobs.workers import Progress, runner_for
from ..plots.theme import candidate_colour, follow_palette
from ..window.number_box import DecimalBox, NumberBox

CHANNEL = "explorer"
"""JobRunner channel of this view."""

OVER = {"bits": "Resolution N (bits)", "thermometer_bits": "Segmented bits M (segmented designs)"}
"""Swept variables and their axis labels."""


DEFAULT_METRIC = "max_abs_dnl"
YIELD_METRIC = "yield_monotonic"
"""Shown after a run with yields while the default figure is showing."""


def metric_labels() -> dict[str, str]:
    """Figure key → its name in the figure list and on the axis.

    A sub-row of the figures table (indented, such as "at code") is named with its parent row, so
    it reads "Output resistance, max: at code" on its own.
    """
    out: dict[str, str] = {}
    parent = ""
    for key, (label, unit) in SWEEP_KEYS.items():
        name = label.strip()
        if label.startswith(" ") and parent:
            name = f"{parent}: {name}"
        else:
            parent = name
        out[key] = f"{name} ({unit})" if unit else name
    return out


def sweep_job(designs: list[Design], over: str, values: list[int],
              stats: SweepStatistics | None):
    """A JobRunner job: the sweep, reporting progress (with the partial result) after each point."""

    def job(cancel):
        last = None
        for last in iter_sweep(designs, over, values, stats, cancel):
            yield Progress(last.done, last.total, last)
        if last is not None and stats is not None and not cancel.is_set():
            answer_lines(last, 0.99)  # the nominal reasons are solved here, not on the GUI thread
        yield last

    return job


def value_text(key: str, value: float) -> str:
    """A figure for the hover line, with its unit (fractions as %)."""
    unit = SWEEP_KEYS.get(key, ("", ""))[1]
    return format_quantity(value, unit)


class ExplorerPane(QWidget):
    """Sweeps of the compared candidates over N or M, plotted figure by figure.

    Signals
    -------
    candidate_requested(object)
        A ``Design`` (the chosen point) to add to the comparison.
    result_changed(object)
        A finished (or cancelled) ``SweepResult`` is shown.
    """

    candidate_requested = Signal(object)
    result_changed = Signal(object)

    def __init__(self, parent: QWidget | None = None) -> None:
        super().__init__(parent)
        self.setObjectName("explorer_pane")
        self._designs: list[Design] = []
        self._colours: list[str] = []
        self._show_yield_when_done = False
        self.result: SweepResult | None = None
        self.runner = runner_for(self)
        self._build()

    # --- layout --------------------------------------------------------------------------------
    def _build(self) -> None:
        self.combo_over = QComboBox(objectName="combo_over")
        for key, label in OVER.items():
            self.combo_over.addItem(label, key)
        self.combo_over.currentIndexChanged.connect(self._over_changed)
        self.spin_from = NumberBox(objectName="spin_from", minimum=0, maximum=MAX_ARRAY_BITS, value=4,
                                   label="From")
        self.spin_to = NumberBox(objectName="spin_to", minimum=0, maximum=MAX_ARRAY_BITS, value=12,
                                 label="To")
        span = QHBoxLayout()
        span.addWidget(self.spin_from)
        span.addWidget(QLabel("to"))
        span.addWidget(self.spin_to)
        self.check_stats = QCheckBox("Add yields from random boards", objectName="check_stats")
        self.combo_grade = QComboBox(objectName="combo_grade")
        self.combo_grade.addItem("As each design says", None)
        for g in STANDARD_GRADES:
            self.combo_grade.addItem(f"±{format_percent(g)}", g)
        self.combo_grade.setCurrentIndex(self.combo_grade.findData(0.001))
        self.spin_trials = NumberBox(objectName="spin_trials", minimum=10, maximum=100_000, value=500,
                                     singleStep=100, label="Boards per point")
        self.spin_seed = NumberBox(objectName="spin_seed", minimum=0, maximum=2**31 - 1, value=1,
                                   label="Seed")
        self.spin_target = DecimalBox(objectName="spin_target", minimum=50.0, maximum=99.99,
                                      decimals=2, value=99.0, suffix=" %", singleStep=0.5,
                                      label="Target yield", unit="%")
        self.spin_target.setToolTip("Monotonic-board yield each candidate should reach; the line "
                                    "under Run says where it first does and at what part count.")
        self.spin_target.valueChanged.connect(self._update_answer)
        form = QFormLayout()
        form.addRow("Sweep", self.combo_over)
        form.addRow("From", span)
        form.addRow(self.check_stats, self.combo_grade)
        boards = QHBoxLayout()
        boards.addWidget(self.spin_trials, 1)
        boards.addWidget(QLabel("Seed"))
        boards.addWidget(self.spin_seed, 1)
        form.addRow("Boards per point", boards)
        form.addRow("Target yield", self.spin_target)
        self.button_run = QPushButton("Run", objectName="button_run")
        self.button_cancel = QPushButton("Cancel", objectName="button_cancel", enabled=False)
        self.button_run.clicked.connect(self.run)
        self.button_cancel.clicked.connect(self.cancel)
        self.progress = QProgressBar(objectName="progress", minimum=0, maximum=1, value=0)
        buttons = QHBoxLayout()
        for w in (self.button_run, self.button_cancel, self.progress):
            buttons.addWidget(w)
        self.combo_metric = QComboBox(objectName="combo_metric")
        for key, text in metric_labels().items():
            self.combo_metric.addItem(text, key)
        self.combo_metric.setCurrentIndex(self.combo_metric.findData(DEFAULT_METRIC))
        self.combo_metric.currentIndexChanged.connect(self.replot)
        self.plot = follow_palette(pg.PlotWidget(objectName="plot_sweep"))
        self.plot.addLegend()
        self.plot.showGrid(x=True, y=True, alpha=0.3)
        self.plot.getAxis("left").enableAutoSIPrefix(False)
        self.plot.scene().sigMouseMoved.connect(self._mouse_moved)
        self.label_hover = QLabel("", objectName="label_hover", wordWrap=True)
        self.label_status = QLabel("", objectName="label_status", wordWrap=True)
        self.label_plan = QLabel("", objectName="label_plan", wordWrap=True)
        self.button_run.setDefault(True)
        self.plot.setMinimumHeight(220)
        self.label_answer = QLabel("", objectName="label_answer", wordWrap=True)
        self.label_rule = QLabel(f"Segmented sizing: {SIZING_RULE}; with a {UNIT_SIZING_RULE}.",
                                 objectName="label_rule", wordWrap=True)
        self.combo_candidate = QComboBox(objectName="combo_candidate")
        self.spin_value = NumberBox(objectName="spin_value", minimum=0, maximum=MAX_ARRAY_BITS,
                                    label="Point")
        self.button_add = QPushButton("Add as candidate", objectName="button_add")
        self.button_add.clicked.connect(self.add_point)
        pick = QHBoxLayout()
        pick.addWidget(QLabel("Point"))
        pick.addWidget(self.combo_candidate, 1)
        pick.addWidget(QLabel("at"))
        pick.addWidget(self.spin_value)
        pick.addWidget(self.button_add)
        top = QVBoxLayout(self)
        top.addLayout(form)
        top.addWidget(self.label_plan)
        top.addLayout(buttons)
        top.addWidget(self.label_status)
        top.addWidget(self.label_answer)
        figure = QHBoxLayout()
        figure.addWidget(QLabel("Figure"))
        figure.addWidget(self.combo_metric, 1)
        top.addLayout(figure)
        top.addWidget(self.plot, 1)
        top.addWidget(self.label_hover)
        top.addLayout(pick)
        top.addWidget(self.label_rule)
        self._over_changed()
        for signal in (self.combo_over.currentIndexChanged, self.spin_from.valueChanged,
                       self.spin_to.valueChanged, self.check_stats.toggled,
                       self.combo_grade.currentIndexChanged, self.spin_trials.valueChanged):
            signal.connect(self._update_plan)
        self._update_plan()

    def plan_text(self) -> str:
        """What Run will do with the controls as they are, in words (shown before the run)."""
        over = self.combo_over.currentData()
        try:
            values = sweep_values(over, self.spin_from.value(), self.spin_to.value())
        except Exception as exc:  # a range error, shown in words
            return f"Run cannot start: {exc}"
        n = len(self._designs)
        if not n:
            return "No candidates to sweep."
        what = {"bits": "the resolution N", "thermometer_bits": "the segmented bits M"}[over]
        text = (f"Run sweeps {what} from {values[0]} to {values[-1]} ({len(values)} values) for "
                f"each of the {n} candidate{'s' if n != 1 else ''}: {len(values) * n} designs "
                "solved at every code")
        stats = self.statistics()
        if stats is not None:
            grade = "each design's own tolerance" if stats.tolerance is None else (
                f"±{format_percent(stats.tolerance)} parts")
            text += (f", each with {stats.trials:,} random boards of {grade} "
                     f"({stats.trials * len(values) * n:,} boards)")
        return text + "."

    def _update_plan(self) -> None:
        self.label_plan.setText(self.plan_text())

    def _over_changed(self) -> None:
        if self.combo_over.currentData() == "bits":
            self.spin_from.setMinimum(BITS_RANGE[0])
        else:
            self.spin_from.setMinimum(0)
        self.plot.setLabel("bottom", OVER[self.combo_over.currentData()])

    # --- the view contract ---------------------------------------------------------------------
    def set_candidates(self, designs: list[Design]) -> None:
        """New candidates after a finished edit (a sweep runs only when asked)."""
        designs = list(designs)
        if designs != self._designs:
            self._designs = designs
            self._update_plan()
            if self.result is not None:
                self.label_status.setText("Candidates changed: Run to update (computed points are "
                                          "reused)")

    def set_colours(self, colours: list[str]) -> None:
        """Draw candidate i in ``colours[i]`` (the comparison's colours), then redraw."""
        if list(colours) != self._colours:
            self._colours = list(colours)
            self.replot()

    def shutdown(self) -> None:
        """Cancel the running sweep and wait for the worker thread."""
        self.runner.shutdown()

    # --- actions -------------------------------------------------------------------------------
    def statistics(self) -> SweepStatistics | None:
        """The Monte Carlo settings the controls describe (``None`` when yields are off)."""
        if not self.check_stats.isChecked():
            return None
        return SweepStatistics(self.combo_grade.currentData(), self.spin_trials.value(),
                               self.spin_seed.value())

    def run(self) -> None:
        """Start the sweep the controls describe (cancels a running one)."""
        if not self._designs:
            self.label_status.setText("No candidates to sweep")
            return
        over = self.combo_over.currentData()
        try:
            values = sweep_values(over, self.spin_from.value(), self.spin_to.value())
        except Exception as exc:  # a range error, shown in words
            self.label_status.setText(str(exc))
            return
        self.progress.setMaximum(len(values) * len(self._designs))
        self.progress.setValue(0)
        self.label_status.setText("Sweeping…")
        self._show_yield_when_done = (self.check_stats.isChecked()
                                      and self.combo_metric.currentData() == DEFAULT_METRIC)
        self.runner.submit(CHANNEL, sweep_job(self._designs, over, values, self.statistics()))

    def cancel(self) -> None:
        """Stop the sweep between points (what is done stays plotted)."""
        if self.runner.is_busy(CHANNEL):
            self.runner.cancel(CHANNEL)
            self.label_status.setText("Cancelled")

    def add_point(self) -> None:
        """Emit ``candidate_requested`` with the design of the chosen point."""
        if self.result is None:
            return
        point = self.result.point(self.combo_candidate.currentIndex(), self.spin_value.value())
        if point is None or point.design is None:
            self.label_status.setText("That point is not in the sweep" if point is None
                                      else point.note)
            return
        d = point.design
        tag = f"N={d.bits}" + (f", M={d.thermometer_bits}" if d.topology == "segmented" else "")
        self.candidate_requested.emit(d.replace(name=f"{self.result.candidates[point.candidate].label}"
                                                f" ({tag})"))

    # --- results -------------------------------------------------------------------------------
    def _show(self, result: SweepResult) -> None:
        """Keep ``result`` and offer its points: the point list names the swept candidates (they
        may differ from the compared ones after an edit)."""
        self.result = result
        labels = [d.label for d in result.candidates]
        shown = [self.combo_candidate.itemText(i) for i in range(self.combo_candidate.count())]
        if labels != shown:
            row = self.combo_candidate.currentIndex()
            self.combo_candidate.clear()
            self.combo_candidate.addItems(labels)
            self.combo_candidate.setCurrentIndex(min(max(row, 0), len(labels) - 1))
        self._update_answer()
        self.replot()

    def _update_answer(self) -> None:
        """Where each candidate first reaches the target monotonic yield (yield sweeps only)."""
        lines = [] if self.result is None else answer_lines(
            self.result, self.spin_target.value() / 100, solve_reasons=False)
        self.label_answer.setText("\n".join(lines))

    def _on_progress(self, channel: str, p: Progress) -> None:
        if channel == CHANNEL:
            self.progress.setValue(p.done)
            if p.partial is not None:
                self._show(p.partial)

    def _on_finished(self, channel: str, result: SweepResult) -> None:
        if channel != CHANNEL:
            return
        self._show(result)
        skipped = sum(1 for p in result.points if p.design is None)
        self.label_status.setText(f"{result.done} points" + (f" ({skipped} not applicable)"
                                                            if skipped else ""))
        if self._show_yield_when_done and YIELD_METRIC in result.metrics():
            self.combo_metric.setCurrentIndex(self.combo_metric.findData(YIELD_METRIC))
        self._show_yield_when_done = False
        self.replot()
        self.result_changed.emit(result)

    def _on_failed(self, channel: str, message: str) -> None:
        if channel == CHANNEL:
            self.label_status.setText(message)

    def _on_busy(self, channel: str, busy: bool) -> None:
        if channel == CHANNEL:
            self.button_cancel.setEnabled(busy)

    def replot(self) -> None:
        """Draw the chosen figure of every candidate from the stored result (no computing)."""
        self.plot.clear()
        result, key = self.result, self.combo_metric.currentData()
        if result is None or key is None:
            return
        self.plot.setLabel("left", metric_labels()[key])
        self.plot.setLabel("bottom", OVER[result.over])
        for ci, design in enumerate(result.candidates):
            x, y = result.series(ci, key)
            if x.size == 0 or np.all(np.isnan(y)):
                continue
            pen = candidate_colour(self._colours, ci)
            self.plot.plot(x, y, pen=pg.mkPen(pen, width=2), symbol="o", symbolSize=6,
                           symbolBrush=pen, name=design.label, connect="finite")

    def hover_text(self, x: float) -> str:
        """Every candidate's value of the shown figure at the swept value nearest ``x``."""
        result, key = self.result, self.combo_metric.currentData()
        if result is None or not result.values:
            return ""
        value = min(result.values, key=lambda v: abs(v - x))
        parts = []
        for ci, design in enumerate(result.candidates):
            p = result.point(ci, value)
            if p is not None and p.design is not None:
                extra = ""
                if "n_resistors" in p.figures and key != "n_resistors":
                    extra = f", {p.figures['n_resistors']} resistors"
                parts.append(f"{design.label}: {value_text(key, p.figures.get(key))}{extra}")
        return f"{result.over} = {value} — " + "; ".join(parts)

    def _mouse_moved(self, pos) -> None:
        if not self.plot.sceneBoundingRect().contains(pos):
            return
        x = self.plot.getPlotItem().vb.mapSceneToView(pos).x()
        self.label_hover.setText(self.hover_text(x))
