"""The built-board view's lower panel: the sets of parts that explain the curve (and what it cannot
tell apart), the checks between measurement and design, and the repair plan with its settings and
"save as-built with the plan". The words come from the command line's Qt-free text functions, so
the window and ``rungwise diagnose`` say the same.
"""

from __future__ import annotations

from pathlib import Path

from PySide6.QtCore import Signal
from PySide6.QtWidgets import (
    QCheckBox,
    QComboBox,
    QFileDialog,
    QGridLayout,
    QLabel,
    QLineEdit,
    QPlainTextEdit,
    QPushButton,
    QWidget,
)

from rungwise.core import designfile
from rungwise.core.diagnose import Diagnosis, Measurement, read_measurement
from rungwise.core.diagnose.diagnosis import RepairRequest
from rungwise.core.diagnose.joint import Extras, read_rout
from rungwise.core.diagnose.repair import DEFAULT_SERIES, DEFAULT_TARGET_INL
from rungwise.core.diagnose.saving import as_built_file
from rungwise.core.errors import DesignError, RungwiseError
from rungwise.core.parts.eseries import TOLERANCE
from rungwise.core.units import parse_quantity

from ..cli.diagnose import explanation_lines, repair_lines
from ..window.number_box import DecimalBox


def panel_text(d: Diagnosis) -> str:
    """Explanations, checks and the repair plan as plain text (Qt-free)."""
    out = d.to_dict()
    lines = [line.strip() if i == 0 else line for i, line in
             enumerate(explanation_lines(out)[1:])]
    lines += [f"Check: {text}" for text in out["checks"]]
    lines += [line for line in repair_lines(out.get("repair"))]
    return "\n".join(lines).strip()


class RepairPanel(QWidget):
    """Repair settings, the explanation text and the save button.

    Signals
    -------
    settings_changed() — the repair request changed (the view analyses again)
    """

    settings_changed = Signal()

    def __init__(self, parent: QWidget | None = None) -> None:
        super().__init__(parent)
        self.setObjectName("repair_panel")
        self._diagnosis: Diagnosis | None = None
        self.check_repair = QCheckBox("Plan a repair", self, objectName="check_repair")
        self.check_repair.setToolTip("The fewest part changes (replace, or a trim in parallel or "
                                     "in series) that meet the target whichever explanation "
                                     "is true")
        self.combo_series = QComboBox(self, objectName="combo_repair_series")
        self.combo_series.addItems(list(TOLERANCE))
        self.combo_series.setCurrentText(DEFAULT_SERIES)
        self.combo_series.setToolTip("Preferred-value series of the new parts")
        self.spin_target = DecimalBox(self, objectName="spin_repair_target", label="|INL| target",
                                      unit="LSB")
        self.spin_target.setRange(0.01, 100.0)
        self.spin_target.setDecimals(3)
        self.spin_target.setSingleStep(0.05)
        self.spin_target.setValue(DEFAULT_TARGET_INL)
        self.spin_target.setSuffix(" LSB")
        self.spin_target.setKeyboardTracking(False)
        self.spin_target.setToolTip("Target max |INL| and |DNL| after the repair")
        self.text = QPlainTextEdit(self, objectName="text_explanations")
        self.text.setReadOnly(True)
        self.button_save = QPushButton("Save as-built with the plan…", self,
                                       objectName="button_save_as_built")
        self.button_save.setToolTip("A design file with the design, the as-built board and, with "
                                    "a plan, the repaired board and the plan")
        self.button_save.clicked.connect(self._ask_save)
        self.label_saved = QLabel("", self, objectName="label_saved")
        self.label_saved.setWordWrap(True)
        self._loaded: Measurement | None = None
        self.edit_rout = QLineEdit(self, objectName="edit_extra_rout")
        self.edit_rout.setPlaceholderText("output resistance at codes, e.g. 128=10.02k, 255=9.98k")
        self.edit_rout.setToolTip("Measured with the reference shorted; helps tell apart parts "
                                  "the curve cannot")
        self.edit_rout.editingFinished.connect(self._changed)
        self.button_loaded = QPushButton("Loaded curve…", self, objectName="button_loaded_curve")
        self.button_loaded.setToolTip("The same board's curve measured again with a known load "
                                      "across the output")
        self.button_loaded.clicked.connect(self._ask_loaded)
        self.edit_load = QLineEdit(self, objectName="edit_extra_load")
        self.edit_load.setPlaceholderText("its load, e.g. 10k")
        self.edit_load.editingFinished.connect(self._changed)
        grid = QGridLayout(self)
        grid.setContentsMargins(0, 0, 0, 0)
        grid.addWidget(self.check_repair, 0, 0)
        grid.addWidget(self.combo_series, 0, 1)
        grid.addWidget(self.spin_target, 0, 2)
        grid.addWidget(self.edit_rout, 1, 0, 1, 3)
        grid.addWidget(self.button_loaded, 2, 0)
        grid.addWidget(self.edit_load, 2, 1, 1, 2)
        grid.addWidget(self.text, 3, 0, 1, 3)
        grid.addWidget(self.button_save, 4, 0, 1, 3)
        grid.addWidget(self.label_saved, 5, 0, 1, 3)
        self.check_repair.toggled.connect(self._changed)
        self.combo_series.currentIndexChanged.connect(self._changed)
        self.spin_target.valueChanged.connect(self._changed)
        self._changed_enable()
        self.show_diagnosis(None)

    def request(self) -> RepairRequest | None:
        """The repair asked for, or ``None``."""
        if not self.check_repair.isChecked():
            return None
        return RepairRequest(self.combo_series.currentText(), float(self.spin_target.value()))

    def extras(self) -> Extras:
        """The extra measurements entered.

        Raises
        ------
        RungwiseError
            An entry cannot be read (the message names it).
        """
        items = [t for t in self.edit_rout.text().replace(";", ",").split(",") if t.strip()]
        rout = read_rout(items)
        load_text = self.edit_load.text().strip()
        if self._loaded is None:
            return Extras(rout=rout)
        if not load_text:
            raise DesignError("load", "give the load of the loaded curve, e.g. 10k")
        load = parse_quantity(load_text, "Ω", "load")
        if not (load > 0 and load < float("inf")):
            raise DesignError("load", "must be a resistance above 0 Ω, e.g. 10k")
        return Extras(rout=rout, loaded=self._loaded, load_ohms=load)

    def set_loaded(self, path: str | Path) -> bool:
        """Read the loaded curve's file; False (with the reason shown) when unreadable."""
        try:
            self._loaded = read_measurement(path)
        except RungwiseError as exc:
            self.label_saved.setText(f"Cannot use this file: {exc}")
            return False
        self.button_loaded.setText(f"Loaded: {Path(path).name}")
        self._changed()
        return True

    def _ask_loaded(self) -> None:
        path, _ = QFileDialog.getOpenFileName(self, "The curve measured with a known load", "",
                                              "Readings (*.csv *.txt *.tsv *.dat);;All files (*)")
        if path:
            self.set_loaded(path)

    def show_diagnosis(self, d: Diagnosis | None) -> None:
        """Show the explanations and plan of ``d`` (``None``: clear)."""
        self._diagnosis = d
        self.text.setPlainText("" if d is None else panel_text(d))
        self.button_save.setEnabled(d is not None and d.as_built is not None)
        self.label_saved.setText("")

    def save(self, path: str | Path) -> None:
        """Write the as-built design file (with the plan when there is one)."""
        if self._diagnosis is None:
            return
        try:
            designfile.save(Path(path), as_built_file(self._diagnosis))
        except (RungwiseError, OSError) as exc:
            self.label_saved.setText(f"Cannot save: {exc}")
            return
        self.label_saved.setText(f"Saved {Path(path).name}")

    def _changed(self, *_: object) -> None:
        self._changed_enable()
        self.settings_changed.emit()

    def _changed_enable(self) -> None:
        on = self.check_repair.isChecked()
        self.combo_series.setEnabled(on)
        self.spin_target.setEnabled(on)

    def _ask_save(self) -> None:
        path, _ = QFileDialog.getSaveFileName(self, "Save the as-built design", "as-built.toml",
                                              "Design files (*.toml)")
        if path:
            self.save(path)
