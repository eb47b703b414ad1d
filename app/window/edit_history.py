"""Undo and redo of finished edits: one step per edit, over any state that can be snapshot and
restored (the window's comparison: its candidates and which one is selected).

The window calls :meth:`EditHistory.record` after every finished edit (its one ``apply_edit``
path); undo and redo put a snapshot back through the same path, without recording it again.
``QUndoStack``'s clean state marks the last save, so undoing back to it clears "modified".
"""

from __future__ import annotations

from collections.abc import Callable
from typing import Any

from PySide6.QtCore import QObject, Signal, Slot
from PySide6.QtGui import QUndoCommand, QUndoStack

UNDO_LIMIT = 200
"""Most steps kept."""


class _EditStep(QUndoCommand):
    """One finished edit: the snapshots before and after it."""

    def __init__(self, history: EditHistory, before: Any, after: Any, text: str) -> None:
        super().__init__(text)
        self._history, self._before, self._after = history, before, after
        self._first = True

    def redo(self) -> None:
        if self._first:  # pushed after the edit happened: nothing to do the first time
            self._first = False
            return
        self._history._put_back(self._after, f"redo {self.text()}")

    def undo(self) -> None:
        self._history._put_back(self._before, f"undo {self.text()}")


class EditHistory(QObject):
    """Undo/redo over ``snapshot()`` / ``restore(snapshot, description)``.

    Signals
    -------
    changed() — the undo or redo text or availability changed.
    clean_changed(bool) — True when the state matches the last :meth:`mark_saved`.
    """

    changed = Signal()
    clean_changed = Signal(bool)

    def __init__(self, snapshot: Callable[[], Any], restore: Callable[[Any, str], None],
                 parent: QObject | None = None) -> None:
        super().__init__(parent)
        self._snapshot, self._restore = snapshot, restore
        self.stack = QUndoStack(self)
        self.stack.setUndoLimit(UNDO_LIMIT)
        self._current = snapshot()
        self._restoring = False
        self.stack.indexChanged.connect(self._on_index)
        self.stack.cleanChanged.connect(self._on_clean)

    @Slot(int)
    def _on_index(self, _index: int) -> None:
        self.changed.emit()

    @Slot(bool)
    def _on_clean(self, clean: bool) -> None:
        self.clean_changed.emit(clean)

    def record(self, description: str) -> None:
        """Note a finished edit (call after it is applied); ignored while undoing or redoing."""
        if self._restoring:
            return
        after = self._snapshot()
        if after == self._current:
            return
        self.stack.push(_EditStep(self, self._current, after, description or "edit"))
        self._current = after

    def _put_back(self, snap: Any, description: str) -> None:
        self._restoring = True
        try:
            self._restore(snap, description)
        finally:
            self._restoring = False
        self._current = snap

    def undo(self) -> None:
        """Undo the last edit (nothing when there is none)."""
        self.stack.undo()

    def redo(self) -> None:
        """Redo the last undone edit."""
        self.stack.redo()

    def can_undo(self) -> bool:
        """Whether there is an edit to undo."""
        return self.stack.canUndo()

    def can_redo(self) -> bool:
        """Whether there is an undone edit to redo."""
        return self.stack.canRedo()

    def undo_text(self) -> str:
        """What undo would undo ("" when nothing)."""
        return self.stack.undoText()

    def reset(self) -> None:
        """Forget every step and take the present state as the start (after opening a file)."""
        self.stack.clear()
        self._current = self._snapshot()
        self.stack.setClean()

    def mark_saved(self) -> None:
        """The present state is what the file holds."""
        self.stack.setClean()

    def mark_unsaved(self) -> None:
        """No state in the history matches a file (for example restored from a crash copy)."""
        self.stack.resetClean()

    def is_clean(self) -> bool:
        """Whether the state matches the last save (or the start)."""
        return self.stack.isClean()
