"""The candidate chooser that several views share: refilled quietly when the comparison changes."""

from __future__ import annotations

from collections.abc import Sequence

from PySide6.QtCore import QSignalBlocker
from PySide6.QtWidgets import QComboBox

from rungwise.core import Design


def refill_candidates(combo: QComboBox, designs: Sequence[Design]) -> int:
    """Replace ``combo``'s rows by the candidates' labels without emitting index changes.

    The chosen row stays chosen while it exists (a removed last candidate moves the choice to the
    new last one). Returns the chosen index (−1 with no candidates).
    """
    keep = combo.currentIndex()
    with QSignalBlocker(combo):
        combo.clear()
        combo.addItems([d.label for d in designs])
        combo.setCurrentIndex(min(max(keep, 0), len(designs) - 1))
    return combo.currentIndex()
