"""The built-board view: load a measured curve, compare it with the design, name the part that is off.

Follows the view contract of ``view_registry.py``. The analysis (``core.diagnose.diagnose``) runs
on a ``workers.JobRunner`` channel after a measurement is loaded or the compared candidates change;
the newest request wins. "Use as candidate" emits ``candidate_requested(Design)`` with the as-built
design (the best suspect at its fitted value).
"""

from __future__ import annotations

import threading
from dataclasses import dataclass
from pathlib import Path

import pyqtgraph as pg
from PySide6.QtCore import Qt, Signal
from PySide6.QtWidgets import (
    QCheckBox,
    QComboBox,
    QFileDialog,
    QGridLayout,
    QHBoxLayout,
    QHeaderView,
    QLabel,
    QPushButton,
    QSizePolicy,
    QSplitter,
    QTableWidget,
    QTableWidgetItem,
    QVBoxLayout,
    QWidget,
)

from rungwise.core import Design
from rungwise.core.demo import DEMO_BASE, demo_candidates
from rungwise.core.diagnose import (
    Diagnosis,
    DiagnosisCancelled,
    Measurement,
    curve_linearity,
    diagnose,
    read_measurement,
    to_c_header,
    to_csv,
)
from rungwise.core.diagnose.synthetic import EXAMPLE_BOARD_NOTE, example_measurement
from rungwise.core.errors import RungwiseError
from rungwise.core.formatting import format_percent, format_quantity, yes_no

from ..jobs.workers import JobRunner
from ..plots.theme import follow_palette
from ..window.number_box import NumberBox
from .diagnose_repair import RepairPanel

CHANNEL = "diagnose"
"""JobRunner channel of this view."""

SUSPECT_COLUMNS = ("Part", "Deviation", "±", "Left\nunexplained", "Explained")
"""Columns of the suspects table."""

MEASURED_BRUSH = "#b03a2e"
DESIGN_PEN = "#2b6cb0"
AS_BUILT_PEN = "#2e7d4f"
"""Our own colours: measured points, design prediction, as-built prediction."""


@dataclass(frozen=True)
class _Failure:
    """A refused analysis, with the message for the status line."""

    message: str


def _job(measurement: Measurement, design: Design, absolute: bool, levels: int | None,
         repair=None, extras=None):
    def run(cancel: threading.Event):
        try:
            return diagnose(measurement, design, absolute=absolute, correction_levels=levels,
                            cancel=cancel, repair=repair, extras=extras)
        except DiagnosisCancelled:
            return None  # superseded: the runner drops it
        except RungwiseError as exc:
            return _Failure(str(exc))

    return run


def findings(d: Diagnosis) -> list[tuple[str, str]]:
    """(label, value) rows shown beside the plots."""
    out = d.to_dict()
    s = out["summary"]

    def lsb(x) -> str:
        return format_quantity(x, "LSB")

    corr = out["correction"]
    meas = out["measurement"]
    return [
        ("Readings", f"{meas['n_readings']} readings of {meas['n_codes_measured']} codes "
                     f"({meas['n_codes_missing']} missing)"),
        ("Endpoint LSB", format_quantity(s["lsb"], "V")),
        ("Offset error", format_quantity(s["offset_error"], "V")),
        ("Gain error", format_percent(s['gain_error'])),
        ("Max |INL|, endpoint", f"{lsb(s['max_abs_inl_endpoint'])} (design "
                                f"{lsb(s['predicted_max_abs_inl_endpoint'])})"),
        ("Max |INL|, best fit", lsb(s["max_abs_inl_bestfit"])),
        ("Max |DNL|", lsb(s["max_abs_dnl"])),
        ("Monotonic", yes_no(out["monotonic"])),
        ("Meter noise", lsb(s["noise_rms_lsb"])),
        ("Not linear in the bits", lsb(out["superposition_residual_rms_lsb"])),
        ("Worst bit weight error", lsb(_max_abs(out["bit_weight_error_lsb"]))),
        ("Left after best suspect", lsb(out["unexplained_rms_lsb"])),
        ("INL after correction", f"{lsb(corr['max_abs_inl_after'])} (bound "
                                 f"{lsb(corr['bound_lsb'])})"),
        ("Bound", corr["bound_meaning"].removeprefix("bound: ")),
        ("Explanations", f"{sum(e['fits'] for e in out['explanations'])} fit within the noise"
                         + (" — ambiguous" if out["ambiguous"] else "")),
        *[("Check", text) for text in out["checks"]],
    ]


def _same_board(a: Design, b: Design) -> bool:
    """Whether two designs build the same network (names and statistics settings aside)."""
    keys = ("topology", "output", "bits", "vref", "unit_r", "ron_high", "ron_low", "ref_r", "load_r",
            "thermometer_bits", "parts", "series", "build")
    return all(getattr(a, k) == getattr(b, k) for k in keys)


def _max_abs(values: list) -> float | None:
    known = [abs(v) for v in values if v is not None]
    return max(known) if known else None


class DiagnosePane(QWidget):
    """Measured against predicted curves, INL/DNL, suspects and the correction table export.

    Signals
    -------
    candidate_requested(object)
        The as-built ``Design`` the user wants to compare.
    diagnosis_changed(object)
        A finished ``Diagnosis`` is shown (``None`` when the analysis was refused).
    """

    candidate_requested = Signal(object)
    diagnosis_changed = Signal(object)

    def __init__(self, parent: QWidget | None = None) -> None:
        super().__init__(parent)
        self.setObjectName("diagnose_pane")
        self._designs: list[Design] = demo_candidates()
        self._measurement: Measurement | None = None
        self._diagnosis: Diagnosis | None = None
        self._stale = False
        self.runner = JobRunner(self)
        self.runner.finished.connect(self._on_finished)
        self.runner.failed.connect(self._on_failed)
        self._build()
        self._fill_designs()

    # --- layout ------------------------------------------------------------------------------
    def _build(self) -> None:
        self.button_load = QPushButton("Load measurement…")
        self.button_load.setObjectName("button_load_measurement")
        self.button_load.clicked.connect(self._ask_file)
        self.button_example = QPushButton("Load the example board")
        self.button_example.setObjectName("button_load_example")
        self.button_example.setToolTip(f"The bundled example measurement: {EXAMPLE_BOARD_NOTE}")
        self.button_example.clicked.connect(self.load_example)
        self.label_source = QLabel("No measurement loaded")
        self.label_source.setObjectName("label_source")
        self.combo_design = QComboBox()
        self.combo_design.setObjectName("combo_design")
        self.combo_design.setToolTip("The candidate that was built")
        self.combo_design.currentIndexChanged.connect(self._recompute)
        self.check_absolute = QCheckBox("Trust measured offset and gain")
        self.check_absolute.setObjectName("check_absolute")
        self.check_absolute.setToolTip("Calibrated meter and reference: blame offset and gain "
                                       "errors on parts too")
        self.check_absolute.toggled.connect(self._recompute)
        self.spin_levels = NumberBox(label="Levels")
        self.spin_levels.setObjectName("spin_levels")
        self.spin_levels.setRange(0, 1 << 24)
        self.spin_levels.setSpecialValueText("one per code")
        self.spin_levels.setToolTip("Wanted output levels in the correction table")
        self.spin_levels.editingFinished.connect(self._recompute)
        self.label_source.setSizePolicy(QSizePolicy.Policy.Ignored, QSizePolicy.Policy.Preferred)
        self.label_source.setWordWrap(True)
        self.combo_design.setSizeAdjustPolicy(
            QComboBox.SizeAdjustPolicy.AdjustToMinimumContentsLengthWithIcon)
        self.combo_design.setMinimumContentsLength(8)
        top = QGridLayout()
        loads = QHBoxLayout()
        loads.addWidget(self.button_load)
        loads.addWidget(self.button_example)
        loads.addWidget(self.label_source, 1)
        top.addLayout(loads, 0, 0, 1, 4)
        top.addWidget(QLabel("Built:"), 1, 0, Qt.AlignmentFlag.AlignRight)
        top.addWidget(self.combo_design, 1, 1)
        top.addWidget(QLabel("Levels:"), 1, 2, Qt.AlignmentFlag.AlignRight)
        top.addWidget(self.spin_levels, 1, 3)
        top.addWidget(self.check_absolute, 2, 0, 1, 4)
        top.setColumnStretch(1, 1)

        self.label_status = QLabel(f"Load a file of 'code, output' readings to begin, or "
                                   f"{EXAMPLE_BOARD_NOTE}.")
        self.label_status.setObjectName("label_status")
        self.label_status.setWordWrap(True)

        self.plot_transfer = self._plot("plot_transfer", "Output", "V")
        self.plot_inl = self._plot("plot_inl", "INL, endpoint", "LSB")
        self.plot_dnl = self._plot("plot_dnl", "DNL", "LSB")
        plots = QWidget()
        col = QVBoxLayout(plots)
        col.setContentsMargins(0, 0, 0, 0)
        for p in (self.plot_transfer, self.plot_inl, self.plot_dnl):
            col.addWidget(p)

        self.table_findings = QTableWidget(0, 2)
        self.table_findings.setObjectName("table_findings")
        self.table_findings.setHorizontalHeaderLabels(["Finding", "Value"])
        self.table_findings.verticalHeader().setVisible(False)
        self.table_suspects = QTableWidget(0, len(SUSPECT_COLUMNS))
        self.table_suspects.setObjectName("table_suspects")
        self.table_suspects.setHorizontalHeaderLabels(list(SUSPECT_COLUMNS))
        self.table_suspects.verticalHeader().setVisible(False)
        self.label_equivalent = QLabel("")
        self.label_equivalent.setObjectName("label_equivalent")
        self.label_equivalent.setWordWrap(True)
        self.button_use = QPushButton("Use as candidate")
        self.button_use.setToolTip("Add the as-built design (the best suspect at its fitted value) "
                                   "to the compared candidates")
        self.button_use.setObjectName("button_use_candidate")
        self.button_use.clicked.connect(self.use_as_candidate)
        self.button_csv = QPushButton("Export CSV…")
        self.button_csv.setToolTip("Export the correction table as CSV")
        self.button_csv.setObjectName("button_export_csv")
        self.button_csv.clicked.connect(lambda: self._ask_export("csv"))
        self.button_header = QPushButton("Export C header…")
        self.button_header.setToolTip("Export the correction table as a C array in a header file")
        self.button_header.setObjectName("button_export_header")
        self.button_header.clicked.connect(lambda: self._ask_export("h"))
        side = QWidget()
        grid = QGridLayout(side)
        grid.setContentsMargins(0, 0, 0, 0)
        grid.addWidget(self.table_findings, 0, 0, 1, 2)
        title = QLabel("Which part explains the curve (best first)")
        title.setWordWrap(True)
        grid.addWidget(title, 1, 0, 1, 2)
        grid.addWidget(self.table_suspects, 2, 0, 1, 2)
        grid.addWidget(self.label_equivalent, 3, 0, 1, 2)
        grid.addWidget(self.button_use, 4, 0, 1, 2)
        grid.addWidget(self.button_csv, 5, 0)
        grid.addWidget(self.button_header, 5, 1)
        self.repair = RepairPanel(side)
        self.repair.settings_changed.connect(self._recompute)
        grid.addWidget(self.repair, 6, 0, 1, 2)

        for table in (self.table_findings, self.table_suspects):
            table.setMinimumWidth(120)
            # columns share the width and long texts wrap: no sideways scrolling on a laptop
            table.horizontalHeader().setSectionResizeMode(QHeaderView.ResizeMode.Stretch)
            table.verticalHeader().setSectionResizeMode(QHeaderView.ResizeMode.ResizeToContents)
            table.setWordWrap(True)
            table.setHorizontalScrollBarPolicy(Qt.ScrollBarPolicy.ScrollBarAlwaysOff)
        split = QSplitter(Qt.Orientation.Horizontal)
        split.addWidget(plots)
        split.addWidget(side)
        split.setStretchFactor(0, 1)
        split.setStretchFactor(1, 1)
        side.setMinimumWidth(4 * side.fontMetrics().horizontalAdvance("+1.86 % LSB"))
        self.table_suspects.horizontalHeader().setSectionResizeMode(
            0, QHeaderView.ResizeMode.ResizeToContents)
        outer = QVBoxLayout(self)
        outer.addLayout(top)
        outer.addWidget(self.label_status)
        outer.addWidget(split, 1)
        self._set_ready(False)

    def _plot(self, name: str, label: str, unit: str) -> pg.PlotWidget:
        w = pg.PlotWidget()
        w.setObjectName(name)
        follow_palette(w)
        w.setLabel("left", f"{label} ({unit})")
        w.getAxis("left").enableAutoSIPrefix(False)
        w.setLabel("bottom", "Code")
        w.addLegend(offset=(8, 8))
        return w

    def _set_ready(self, ready: bool) -> None:
        built = ready and self._diagnosis is not None and self._diagnosis.as_built is not None
        self.button_use.setEnabled(built)
        self.button_csv.setEnabled(ready)
        self.button_header.setEnabled(ready)

    # --- the view contract --------------------------------------------------------------------
    def set_candidates(self, designs: list[Design]) -> None:
        """The compared candidates changed: offer them as the built design and re-analyse — at
        once when the view is on screen, else when it is next shown."""
        designs = list(designs) or demo_candidates()
        if designs == self._designs:
            return
        self._designs = designs
        self._fill_designs()
        self._stale = True
        if self.isVisible():
            self._recompute()

    def showEvent(self, event) -> None:
        """Run the analysis a candidate change asked for while the view was hidden."""
        super().showEvent(event)
        if self._stale:
            self._recompute()

    def shutdown(self) -> None:
        """Cancel the running analysis and wait for its thread."""
        self.runner.shutdown()

    # --- public actions -----------------------------------------------------------------------
    @property
    def diagnosis(self) -> Diagnosis | None:
        """The diagnosis shown, or ``None``."""
        return self._diagnosis

    def load_measurement(self, path: str | Path) -> bool:
        """Read a measurement file and analyse it; False (with the reason shown) if unreadable."""
        try:
            m = read_measurement(path)
        except RungwiseError as exc:
            if self.runner.is_busy(CHANNEL):  # its result must not replace this message
                self.runner.cancel(CHANNEL)
                self._stale = True
            self.label_status.setText(f"Cannot use this file: {exc}")
            return False
        self.set_measurement(m)
        return True

    def load_example(self) -> None:
        """Load the bundled example measurement; the built candidate becomes the compared one
        that is electrically the example's board, when there is one."""
        same = [i for i, d in enumerate(self._designs) if _same_board(d, DEMO_BASE)]
        if same:
            self.combo_design.blockSignals(True)
            self.combo_design.setCurrentIndex(same[0])
            self.combo_design.blockSignals(False)
        self.set_measurement(example_measurement())

    def set_measurement(self, measurement: Measurement) -> None:
        """Show and analyse an already-read measurement."""
        self._measurement = measurement
        self.label_source.setText(f"{measurement.source}: {measurement.n_readings} readings")
        self._recompute()

    def use_as_candidate(self) -> None:
        """Emit ``candidate_requested`` with the as-built design."""
        if self._diagnosis is not None and self._diagnosis.as_built is not None:
            self.candidate_requested.emit(self._diagnosis.as_built)

    def export_correction_csv(self, path: str | Path) -> None:
        """Write the correction table as CSV."""
        if self._diagnosis is not None:
            Path(path).write_text(to_csv(self._diagnosis.correction), encoding="utf-8")

    def export_correction_header(self, path: str | Path) -> None:
        """Write the correction table as a C array in a header file."""
        if self._diagnosis is not None:
            d = self._diagnosis
            Path(path).write_text(to_c_header(d.correction, Path(path).stem,
                                              note=f"measured: {d.measurement.source}"),
                                  encoding="utf-8")

    # --- internals ----------------------------------------------------------------------------
    def _fill_designs(self) -> None:
        current = self.combo_design.currentText()
        self.combo_design.blockSignals(True)
        self.combo_design.clear()
        self.combo_design.addItems([d.label for d in self._designs])
        index = self.combo_design.findText(current)
        self.combo_design.setCurrentIndex(max(index, 0))
        self.combo_design.blockSignals(False)

    def _recompute(self, *_: object) -> None:
        self._stale = False
        if self._measurement is None:
            return
        design = self._designs[max(self.combo_design.currentIndex(), 0)]
        levels = self.spin_levels.value() or None
        try:
            extras = self.repair.extras()
        except RungwiseError as exc:
            if self.runner.is_busy(CHANNEL):  # its result must not replace this message
                self.runner.cancel(CHANNEL)
            self.label_status.setText(f"Cannot use the extra measurements: {exc}")
            return
        self.label_status.setText("Analysing…")
        self.runner.submit(CHANNEL, _job(self._measurement, design, self.check_absolute.isChecked(),
                                         levels, self.repair.request(), extras))

    def _on_failed(self, channel: str, message: str) -> None:
        if channel == CHANNEL:
            self._show_refusal(f"Internal error: {message}")

    def _on_finished(self, channel: str, result: object) -> None:
        if channel != CHANNEL:
            return
        if isinstance(result, _Failure):
            self._show_refusal(result.message)
            return
        if not isinstance(result, Diagnosis):
            return
        self._diagnosis = result
        self._show(result)
        self._set_ready(True)
        self.diagnosis_changed.emit(result)

    def _show_refusal(self, message: str) -> None:
        self._diagnosis = None
        self.label_status.setText(f"Cannot analyse: {message}")
        for p in (self.plot_transfer, self.plot_inl, self.plot_dnl):
            p.clear()
        self.table_findings.setRowCount(0)
        self.table_suspects.setRowCount(0)
        self.repair.show_diagnosis(None)
        self._set_ready(False)
        self.diagnosis_changed.emit(None)

    def _show(self, d: Diagnosis) -> None:
        best = d.suspects.suspects[0] if d.suspects.suspects else None
        if best is None:
            self.label_status.setText(d.suspects.note)
        elif best.identifiable:
            self.label_status.setText(f"Best explanation: {best.id} "
                                      f"{format_percent(best.deviation, signed=True)} "
                                      f"({format_percent(best.explained)} of the deviation from the "
                                      "design explained)")
        else:
            self.label_status.setText("No single part explains the curve.")
        self._plot_curves(d)
        rows = findings(d)
        self.table_findings.setRowCount(len(rows))
        for r, (label, value) in enumerate(rows):
            self.table_findings.setItem(r, 0, QTableWidgetItem(label))
            self.table_findings.setItem(r, 1, QTableWidgetItem(value))
        self.table_findings.resizeColumnsToContents()
        self.repair.show_diagnosis(d)
        suspects = d.suspects.suspects
        self.table_suspects.setRowCount(len(suspects))
        for r, s in enumerate(suspects):
            if s.identifiable:
                cells = (s.id, format_percent(s.deviation, signed=True),
                         format_percent(s.deviation_stderr), format_quantity(s.residual_rms_lsb, "LSB"),
                         format_percent(s.explained))
            else:
                cells = (s.id, "gain only", "—", "—", "—")
            for c, text in enumerate(cells):
                item = QTableWidgetItem(text)
                if c:
                    item.setTextAlignment(Qt.AlignmentFlag.AlignRight | Qt.AlignmentFlag.AlignVCenter)
                self.table_suspects.setItem(r, c, item)
        self.table_suspects.resizeColumnsToContents()
        eq = d.suspects.equivalent
        self.label_equivalent.setText(
            f"The curve cannot tell {best.id} from {', '.join(eq)}: they fit equally well."
            if eq and best is not None else "")

    def _plot_curves(self, d: Diagnosis) -> None:
        codes = d.measurement.codes.astype(float)
        dot = {"pen": None, "symbol": "o", "symbolSize": 4, "symbolBrush": MEASURED_BRUSH,
               "symbolPen": None}
        design_pen = pg.mkPen(DESIGN_PEN, width=1.5)
        built_pen = pg.mkPen(AS_BUILT_PEN, width=1.5, style=Qt.PenStyle.DashLine)
        self.plot_transfer.clear()
        self.plot_transfer.plot(codes, d.measurement.volts, name="Measured", **dot)
        self.plot_transfer.plot(codes, d.predicted_volts, pen=design_pen, name="Design")
        self.plot_inl.clear()
        self.plot_inl.plot(codes, d.measured.inl_endpoint, name="Measured", **dot)
        self.plot_inl.plot(codes, d.predicted.inl_endpoint, pen=design_pen, name="Design")
        self.plot_dnl.clear()
        self.plot_dnl.plot(codes[:-1], d.measured.dnl, name="Measured", **dot)
        self.plot_dnl.plot(codes[:-1], d.predicted.dnl, pen=design_pen, name="Design")
        if d.as_built is not None:
            built = curve_linearity(d.measurement.codes, d.as_built_volts, 1.0, 2**d.design.bits)
            self.plot_transfer.plot(codes, d.as_built_volts, pen=built_pen, name="As built")
            self.plot_inl.plot(codes, built.inl_endpoint, pen=built_pen, name="As built")
            self.plot_dnl.plot(codes[:-1], built.dnl, pen=built_pen, name="As built")

    def _ask_file(self) -> None:
        path, _ = QFileDialog.getOpenFileName(self, "Load a measured curve", "",
                                              "Readings (*.csv *.txt *.tsv *.dat);;All files (*)")
        if path:
            self.load_measurement(path)

    def _ask_export(self, kind: str) -> None:
        if self._diagnosis is None:
            return
        if kind == "csv":
            path, _ = QFileDialog.getSaveFileName(self, "Export the correction table",
                                                  "correction.csv", "CSV (*.csv)")
            writer = self.export_correction_csv
        else:
            path, _ = QFileDialog.getSaveFileName(self, "Export the correction table as C",
                                                  "dac_correction.h", "C header (*.h)")
            writer = self.export_correction_header
        if path:
            try:
                writer(path)
            except OSError as exc:
                self.label_status.setText(f"Cannot write {path}: {exc.strerror}")
