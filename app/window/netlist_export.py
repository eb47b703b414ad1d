"""File ▸ Export ▸ Netlist…: the edited candidate as built, as a SPICE netlist.

A small dialog asks for the code whose switch states the netlist holds (or a dc sweep over every
code), then for the file; the text comes from ``core.netlist.spice_netlist``.
"""

from __future__ import annotations

from pathlib import Path

from PySide6.QtWidgets import (
    QCheckBox,
    QDialog,
    QDialogButtonBox,
    QFormLayout,
    QLabel,
    QWidget,
)

from rungwise.core.atomic import write_atomically
from rungwise.core.design import Design
from rungwise.core.netlist import code_text, spice_netlist
from rungwise.core.version import program_version

from .number_box import NumberBox


def mid_scale(design: Design) -> int:
    """The code a netlist starts at: the MSB driven (mid-scale)."""
    return 1 << (design.bits - 1) if design.bits > 0 else 0


class NetlistDialog(QDialog):
    """Which code (0 … 2^N − 1) or every code; ``code`` is ``None`` for the sweep."""

    def __init__(self, design: Design, parent: QWidget | None = None) -> None:
        super().__init__(parent)
        self.setWindowTitle(f"Netlist of {design.label}")
        self.design = design
        top = 2**design.bits - 1
        self.spin_code = NumberBox(self, objectName="spin_netlist_code", label="Code")
        self.spin_code.setRange(0, min(top, 2**31 - 1))
        self.spin_code.setValue(mid_scale(design))
        self.check_all = QCheckBox("Every code, as a dc sweep of a code voltage", self,
                                   objectName="check_netlist_all")
        self.binary = QLabel(self)
        buttons = QDialogButtonBox(QDialogButtonBox.StandardButton.Save
                                   | QDialogButtonBox.StandardButton.Cancel, parent=self)
        form = QFormLayout(self)
        form.addRow(QLabel("Switches are written in the state of one code; ngspice -b prints "
                           "v(out) at it.", self))
        form.addRow(f"Code (0 … {top})", self.spin_code)
        form.addRow("", self.binary)
        form.addRow("", self.check_all)
        form.addRow(buttons)
        buttons.accepted.connect(self.accept)
        buttons.rejected.connect(self.reject)
        self.spin_code.valueChanged.connect(self._show_binary)
        self.check_all.toggled.connect(lambda on: self.spin_code.setEnabled(not on))
        self._show_binary()

    def _show_binary(self) -> None:
        self.binary.setText(code_text(self.spin_code.value(), self.design.bits))

    @property
    def code(self) -> int | None:
        """The chosen code, or ``None`` for every code."""
        return None if self.check_all.isChecked() else self.spin_code.value()


def netlist_text(design: Design, code: int | None, source: str = "") -> str:
    """The netlist of ``design`` at ``code`` (every code when ``None``); a worker may call it."""
    return spice_netlist(design, code=code, all_codes=code is None, version=program_version(),
                         source=source)


def save_text(path: Path, text: str) -> None:
    """Write ``text`` to ``path`` atomically."""
    write_atomically(Path(path), lambda tmp: Path(tmp).write_text(text, encoding="utf-8"))


def write_netlist(path: Path, design: Design, code: int | None, source: str = "") -> None:
    """Write the netlist of ``design`` at ``code`` (every code when ``None``) to ``path``."""
    save_text(path, netlist_text(design, code, source))
