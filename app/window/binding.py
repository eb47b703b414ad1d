"""Widgets bound to design fields by object name, never wired one by one.

Naming convention (the part after the prefix is the design key):

- ``spin_<key>`` — a ``QSpinBox`` for a whole-number field (``spin_bits``);
- ``edit_<key>`` — a ``QLineEdit`` taking engineering notation (``edit_unit_r`` accepts ``4k7``);
- ``combo_<key>`` — a ``QComboBox`` whose item data are the allowed words (``combo_topology``,
  ``combo_build.lsb_section`` for a build-style choice);
- ``error_<key>`` — a ``QLabel`` that shows why the last entry in that field was refused.

:class:`FieldBinder` finds these under a root widget, shows a design in them and reports finished
entries as ``(key, text)``; it never changes a design itself.
"""

from __future__ import annotations

import functools
import math

from PySide6.QtCore import QObject, Signal
from PySide6.QtWidgets import QComboBox, QLabel, QLineEdit, QSpinBox, QWidget

from rungwise.core.build_style import build_choice
from rungwise.core.design import FIELDS, Design
from rungwise.core.errors import DesignError
from rungwise.core.formatting import EDIT_DIGITS, format_quantity, format_si
from rungwise.core.units import parse_quantity

INPUT_PREFIXES = ("spin_", "edit_", "combo_")
"""Object-name prefixes of bound input widgets."""


@functools.cache
def unit_in_text(unit: str) -> bool:
    """Whether values of ``unit`` are written with it (``10 kΩ``) and read back by the parser;
    otherwise the field holds a plain number and the unit stands beside it (``V/V``)."""
    if unit in {"", "bits"}:
        return False
    try:
        return parse_quantity(format_si(4700.0, unit, digits=EDIT_DIGITS), unit) == 4700.0
    except DesignError:
        return False


def design_value(design: Design, key: str):
    """The design's value for a bound key; ``build.<key>`` is a build-style choice (its default
    when unset)."""
    if key.startswith("build."):
        return build_choice(design, key.removeprefix("build."))
    return getattr(design, key)


def display_text(design: Design, key: str) -> str:
    """How a design value is written into its field (``10 kΩ``, ``open``, empty for default)."""
    value = design_value(design, key)
    if value is None:
        return ""
    if isinstance(value, str):
        return value
    unit = FIELDS[key].unit if key in FIELDS else ""
    if isinstance(value, float) and math.isinf(value):
        return "open"
    if not unit_in_text(unit):
        return format_quantity(value, digits=EDIT_DIGITS)
    return format_si(value, unit, digits=EDIT_DIGITS)


def bound_inputs(root: QWidget) -> dict[str, QWidget]:
    """Design key → input widget, for every child named by the convention."""
    found: dict[str, QWidget] = {}
    for w in root.findChildren(QWidget):
        name = w.objectName()
        for prefix in INPUT_PREFIXES:
            if name.startswith(prefix):
                found[name[len(prefix):]] = w
    return found


class FieldBinder(QObject):
    """Shows a design in the bound widgets and reports each finished entry.

    Signals
    -------
    entry_finished(key, text) — the person finished an entry (Enter, focus out, a combo choice);
    entry_changing(key, text) — a value is moving (spin box arrows or wheel), for live curves.
    """

    entry_finished = Signal(str, str)
    entry_changing = Signal(str, str)

    def __init__(self, root: QWidget) -> None:
        super().__init__(root)
        self.root = root
        self.inputs = bound_inputs(root)
        self._shown: dict[str, str] = {}
        self._quiet = False
        for key, w in self.inputs.items():
            if isinstance(w, QSpinBox):
                w.valueChanged.connect(lambda v, k=key: self._changing(k, str(v)))
                refused = getattr(w, "refused", None)  # a NumberBox: out-of-range typing goes
                if refused is not None:                # to the design, which says why
                    refused.connect(lambda typed, _why, k=key: self._refused_number(k, typed))
                w.editingFinished.connect(lambda k=key, s=w: None if getattr(s, "refusing", False)
                                          else self._finished(k, str(s.value())))
            elif isinstance(w, QLineEdit):
                w.editingFinished.connect(lambda k=key, e=w: self._finished(k, e.text()))
            elif isinstance(w, QComboBox):
                w.activated.connect(lambda _i, k=key, c=w: self._finished(k, str(c.currentData())))

    def error_label(self, key: str) -> QLabel | None:
        """The ``error_<key>`` label, if the pane has one."""
        return self.root.findChild(QLabel, f"error_{key}")

    # --- showing --------------------------------------------------------------------------------
    def show(self, design: Design, keep_refused: bool = False) -> None:
        """Write every bound value of ``design`` into its widget.

        With ``keep_refused`` a field that holds a refused entry keeps the person's text.
        """
        self._quiet = True
        try:
            for key, w in self.inputs.items():
                if keep_refused and self.is_refused(key):
                    continue
                self.clear_error(key)
                text = display_text(design, key)
                self._shown[key] = text
                if isinstance(w, QSpinBox):
                    w.setValue(int(getattr(design, key)))
                elif isinstance(w, QLineEdit):
                    w.setText(text)
                    w.setCursorPosition(0)
                elif isinstance(w, QComboBox):
                    i = w.findData(text)
                    w.setCurrentIndex(i)
        finally:
            self._quiet = False

    def set_choices(self, key: str, items: list[tuple[str, str]]) -> None:
        """Fill ``combo_<key>`` with ``(shown text, value)`` pairs."""
        combo = self.inputs[key]
        assert isinstance(combo, QComboBox)
        self._quiet = True
        try:
            combo.clear()
            for text, value in items:
                combo.addItem(text, value)
        finally:
            self._quiet = False

    # --- refused entries ----------------------------------------------------------------------
    def mark_error(self, key: str, message: str) -> None:
        """Mark ``key``'s widget as refused and show ``message`` beside it."""
        w = self.inputs.get(key)
        if w is not None:
            w.setProperty("refused", True)
            w.setToolTip(message)
            w.style().unpolish(w)
            w.style().polish(w)
        label = self.error_label(key)
        if label is not None:
            label.setText(message)
            label.setVisible(True)

    def clear_error(self, key: str) -> None:
        """Remove a refusal mark."""
        w = self.inputs.get(key)
        if w is not None and w.property("refused"):
            w.setProperty("refused", False)
            w.setToolTip("")
            w.style().unpolish(w)
            w.style().polish(w)
        label = self.error_label(key)
        if label is not None and label.isVisibleTo(self.root):
            label.setVisible(False)
            label.setText("")

    def is_refused(self, key: str) -> bool:
        """Whether ``key`` holds an entry that was refused."""
        w = self.inputs.get(key)
        return bool(w is not None and w.property("refused"))

    # --- reporting ----------------------------------------------------------------------------
    def _changing(self, key: str, text: str) -> None:
        if not self._quiet:
            self.entry_changing.emit(key, text)

    def _refused_number(self, key: str, typed: str) -> None:
        if not self._quiet:
            self.entry_finished.emit(key, typed)

    def _finished(self, key: str, text: str) -> None:
        if self._quiet:
            return
        if text == self._shown.get(key) and not self.is_refused(key):
            return
        self.entry_finished.emit(key, text)
