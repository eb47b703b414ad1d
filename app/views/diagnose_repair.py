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
    QDoubleSpinBox,
    QFileDialog,
    QGridLayout,
    QLabel,
    QPlainTextEdit,
    QPushButton,
    QWidget,
)

from rungwise.core import designfile
from rungwise.core.diagnose import Diagnosis
from rungwise.core.diagnose.diagnosis import RepairRequest
from rungwise.core.diagnose.repair import DEFAULT_SERIES, DEFAULT_TARGET_INL
from rungwise.core.diagnose.saving import as_built_file
from rungwise.core.errors import RungwiseError
from rungwise.core.parts.eseries import TOLERANCE

from ..cli.diagnose import explanation_lines, repair_lines


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
        self.spin_target = QDoubleSpinBox(self, objectName="spin_repair_target")
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
        grid = QGridLayout(self)
        grid.setContentsMargins(0, 0, 0, 0)
        grid.addWidget(self.check_repair, 0, 0)
        grid.addWidget(self.combo_series, 0, 1)
        grid.addWidget(self.spin_target, 0, 2)
        grid.addWidget(self.text, 1, 0, 1, 3)
        grid.addWidget(self.button_save, 2, 0, 1, 3)
        grid.addWidget(self.label_saved, 3, 0, 1, 3)
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
