"""A thin Qt wrapper of :class:`ComparisonState`: the same state, announced with Qt signals."""

from __future__ import annotations

from pathlib import Path

from PySide6.QtCore import QObject, Signal

from .comparison_state import Candidate, ComparisonState


class ComparisonModel(QObject):
    """The window's model: the comparison state plus the file it came from.

    Signals
    -------
    candidates_changed() — after every finished edit (``state.apply_edit``);
    selection_changed(int) — the edited candidate moved;
    file_changed() — the file path or the modified flag changed.
    """

    candidates_changed = Signal()
    selection_changed = Signal(int)
    file_changed = Signal()

    def __init__(self, candidates: list[Candidate], parent: QObject | None = None) -> None:
        super().__init__(parent)
        self.state = ComparisonState(candidates)
        self.state.subscribe(self._on_change)
        self.path: Path | None = None
        self.modified = False

    def _on_change(self, change: str) -> None:
        if change == "candidates":
            if not self.modified:
                self.modified = True
                self.file_changed.emit()
            self.candidates_changed.emit()
        else:
            self.selection_changed.emit(self.state.selected)

    def replace_all(self, candidates: list[Candidate], path: Path | None, description: str) -> None:
        """Load a whole comparison (a file, the demo): one edit, one recompute."""
        self.state.apply_edit(candidates, description, selected=0)
        self.set_file(path, modified=False)

    def set_file(self, path: Path | None, modified: bool) -> None:
        """Record the file the comparison is saved in and whether it has unsaved edits."""
        self.path, self.modified = path, modified
        self.file_changed.emit()
