"""Number boxes that refuse out-of-range typing visibly instead of clamping it.

A plain ``QSpinBox`` drops a keystroke that would leave its range (``99`` in a 1 … 24 box becomes
``9``, ``-5`` becomes ``5``) without a word. :class:`NumberBox` and :class:`DecimalBox` let any
typed number stand; when the entry is finished (Enter, focus out) a number outside the range is
refused with the one range wording (``core/ranges.py``): the box turns red, says why in its
tooltip and emits ``refused(typed text, message)``, and keeps its last good value. The next good
entry clears it.
"""

from __future__ import annotations

import re

from PySide6.QtCore import Qt, Signal
from PySide6.QtGui import QValidator
from PySide6.QtWidgets import QDoubleSpinBox, QSpinBox

from rungwise.core.errors import DesignError
from rungwise.core.ranges import FieldSpec

REFUSED_STYLE = "*[refused=\"true\"] { border: 2px solid #c23b3b; border-radius: 3px; }"
"""How a field holding a refused entry is marked."""

_NUMBERISH = re.compile(r"[+-]?\d*(?:[.,]\d*)?(?:[eE][+-]?\d*)?")
"""Text on its way to being a number (kept while typing, judged when the entry is finished)."""


def mark_refused(widget, message: str) -> None:
    """Show ``widget`` as holding a refused entry, ``message`` saying why (empty: clear it)."""
    if bool(widget.property("refused")) == bool(message) and widget.toolTip() == message:
        return
    widget.setProperty("refused", bool(message))
    widget.setToolTip(message or getattr(widget, "hint", ""))
    widget.style().unpolish(widget)
    widget.style().polish(widget)


class _Refusing:
    """What both boxes share: the spec of their range and the check of a finished entry."""

    refused: Signal

    def _setup(self, label: str, unit: str) -> None:
        self.label, self.unit, self.hint = label, unit, ""
        self.refusing = False
        self.setStyleSheet(REFUSED_STYLE)

    def spec(self) -> FieldSpec:
        """The box's range as a :class:`FieldSpec` (for its one wording)."""
        whole = isinstance(self, QSpinBox)
        return FieldSpec(self.label or self.objectName(), self.unit, self.minimum(), self.maximum(),
                         integer=whole)

    def _bare(self, text: str) -> str:
        return text.removeprefix(self.prefix()).removesuffix(self.suffix()).strip()

    def _typed_is_number(self, text: str) -> bool:
        return _NUMBERISH.fullmatch(self._bare(text)) is not None

    def _judge(self) -> bool:
        """Refuse the entry in the box when it is a number outside the range (True); a good one
        clears an earlier refusal."""
        bare = self._bare(self.lineEdit().text())
        if not bare or bare == self.specialValueText():
            return False
        try:
            self.spec().check(self.label or self.objectName(), bare.replace(",", "."))
        except DesignError as exc:
            mark_refused(self, str(exc))
            self.refused.emit(bare, str(exc))
            return True
        mark_refused(self, "")
        return False

    def _finish(self, event, handler, judge: bool) -> None:
        """Let the spin box finish the entry; while it puts the last good value back after a
        refusal, :attr:`refusing` is True (its ``editingFinished`` is not a new entry)."""
        self.refusing = judge and self._judge()
        try:
            handler(event)
        finally:
            self.refusing = False

    # --- overrides of the spin box (this class comes first in the boxes' bases) ----------------
    def validate(self, text: str, pos: int):
        result = super().validate(text, pos)
        state = result[0] if isinstance(result, tuple) else result
        if state == QValidator.State.Invalid and self._typed_is_number(text):
            return QValidator.State.Intermediate, text, pos
        return result

    def stepBy(self, steps: int) -> None:  # arrows and wheel only reach values in range
        mark_refused(self, "")
        super().stepBy(steps)

    def keyPressEvent(self, event) -> None:
        self._finish(event, super().keyPressEvent,
                     event.key() in (Qt.Key.Key_Return, Qt.Key.Key_Enter))

    def focusOutEvent(self, event) -> None:
        self._finish(event, super().focusOutEvent, True)


class NumberBox(_Refusing, QSpinBox):
    """A whole-number box (see the module docstring)."""

    refused = Signal(str, str)

    def __init__(self, *args, label: str = "", unit: str = "", **kwargs) -> None:
        QSpinBox.__init__(self, *args, **kwargs)
        self._setup(label, unit)


class DecimalBox(_Refusing, QDoubleSpinBox):
    """A decimal box (see the module docstring)."""

    refused = Signal(str, str)

    def __init__(self, *args, label: str = "", unit: str = "", **kwargs) -> None:
        QDoubleSpinBox.__init__(self, *args, **kwargs)
        self._setup(label, unit)
