""""Make it monotonic by design" under the values pane: find the series ratio closest to 1 that keeps
every board within the tolerance monotonic (``core.skew.ratio_for_monotonic``, on a worker
thread), show what it costs in INL and gain error, and apply it as an ordinary (undoable) edit.
"""

from __future__ import annotations

import dataclasses
import threading

from PySide6.QtCore import Signal
from PySide6.QtWidgets import QHBoxLayout, QLabel, QPushButton, QVBoxLayout, QWidget

from rungwise.core.design import Design
from rungwise.core.errors import RungwiseError
from rungwise.core.formatting import format_percent, format_quantity
from rungwise.core.skew import SkewAnswer, ratio_for_monotonic

from ..jobs.workers import JobRunner

CHANNEL = "skew"
"""JobRunner channel of the ratio search."""


def answer_text(design: Design, a: SkewAnswer) -> str:
    """The search's answer and its cost in words (Qt-free, for the panel and tests)."""
    if a.ratio is None:
        return f"No series ratio found — {a.reason}."
    if a.ratio == 1.0:
        return (f"Already monotonic on every board within ±{format_percent(a.tolerance)}: no "
                "skew needed.")
    what = ("bit resistors stepping by 2 × ratio" if design.topology == "binary-weighted"
            else "series resistors = ratio × R")
    lsb = "LSB"
    a = dataclasses.replace(a, **{k: _tidy(getattr(a, k)) for k in (
        "max_abs_inl", "base_max_abs_inl", "gain_error", "base_gain_error")})
    return (f"Series ratio {format_quantity(a.ratio, '×', digits=5)} ({what}) keeps every board "
            f"within ±{format_percent(a.tolerance)} monotonic (smallest worst-case step "
            f"{format_quantity(a.min_step, lsb)}). Cost: max |INL| "
            f"{format_quantity(a.base_max_abs_inl, lsb)} → {format_quantity(a.max_abs_inl, lsb)}, "
            f"gain error {format_percent(a.base_gain_error, signed=True)} → "
            f"{format_percent(a.gain_error, signed=True)}.")


def _tidy(x: float) -> float:
    """Round-off of an exact design (1e-14 LSB) reads as 0."""
    return 0.0 if abs(x) < 1e-9 else x


def _job(design: Design):
    def run(cancel: threading.Event):
        try:
            return design, ratio_for_monotonic(design)
        except RungwiseError as exc:
            return design, str(exc)

    return run


class SkewPanel(QWidget):
    """Button, answer and Apply; emits ``apply_requested(Design, str)`` with the skewed design.

    Signals
    -------
    apply_requested(Design, str) — the design with the found ratio and an edit description
    """

    apply_requested = Signal(object, str)

    def __init__(self, parent: QWidget | None = None) -> None:
        super().__init__(parent)
        self.setObjectName("skew_panel")
        self._design: Design | None = None
        self._answer: SkewAnswer | None = None
        self.runner = JobRunner(self)
        self.runner.finished.connect(self._on_finished)
        self.runner.failed.connect(self._on_failed)
        self.button_find = QPushButton("Make it monotonic by design", self,
                                       objectName="button_skew_find")
        self.button_find.setToolTip("Find the series ratio closest to 1 that keeps every board "
                                    "within the tolerance monotonic (worst case, not sampling)")
        self.button_find.clicked.connect(self.find)
        self.button_apply = QPushButton("Apply", self, objectName="button_skew_apply")
        self.button_apply.setToolTip("Set the series ratio found (undo takes it back)")
        self.button_apply.clicked.connect(self.apply)
        self.label = QLabel("", self, objectName="label_skew")
        self.label.setWordWrap(True)
        row = QHBoxLayout()
        row.setContentsMargins(0, 0, 0, 0)
        row.addWidget(self.button_find, 1)
        row.addWidget(self.button_apply)
        col = QVBoxLayout(self)
        col.setContentsMargins(0, 0, 0, 0)
        col.addLayout(row)
        col.addWidget(self.label)
        self.button_apply.setEnabled(False)

    def set_design(self, design: Design) -> None:
        """The candidate shown changed: forget an answer found for another design."""
        if design == self._design:
            return
        self._design = design
        self._answer = None
        if self.runner.is_busy(CHANNEL):
            self.runner.cancel(CHANNEL)
        self.label.setText("")
        self.button_apply.setEnabled(False)
        self.button_find.setEnabled(True)

    def find(self) -> None:
        """Start the search for the shown design."""
        if self._design is None:
            return
        self.label.setText("Searching the worst case…")
        self.button_apply.setEnabled(False)
        self.runner.submit(CHANNEL, _job(self._design))

    def apply(self) -> None:
        """Emit the shown design with the found ratio."""
        a = self._answer
        if self._design is None or a is None or a.ratio is None or a.ratio == 1.0:
            return
        new = self._design.replace(series_ratio=a.ratio)
        self.button_apply.setEnabled(False)
        self.apply_requested.emit(new, f"Monotonic by design: series ratio of {new.label} = "
                                       f"{format_quantity(a.ratio, '×')}")

    def shutdown(self) -> None:
        """Cancel the search and wait for its thread."""
        self.runner.shutdown()

    def _on_finished(self, channel: str, result: object) -> None:
        if channel != CHANNEL or not isinstance(result, tuple):
            return
        design, answer = result
        if design != self._design:
            return  # found for a design no longer shown
        if isinstance(answer, str):
            self.label.setText(f"Cannot search: {answer}")
            return
        self._answer = answer
        self.label.setText(answer_text(design, answer))
        self.button_apply.setEnabled(answer.ratio is not None and answer.ratio != 1.0)

    def _on_failed(self, channel: str, message: str) -> None:
        if channel == CHANNEL:
            self.label.setText(f"Internal error: {message}")
