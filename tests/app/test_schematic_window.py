"""The schematic in the window (its view and the candidates' hover card) and the netlist export."""

from __future__ import annotations

import re
import subprocess
from pathlib import Path

import pytest
from PySide6.QtCore import QEvent
from PySide6.QtGui import QColor, QHelpEvent, QImage
from PySide6.QtWidgets import QApplication
from references import spice

from rungwise.app.plots.schematic_paint import schematic_image
from rungwise.app.window.comparison_state import with_colours
from rungwise.core import Design, evaluate
from rungwise.core.schematic import schematic


def _designs() -> list[Design]:
    return [Design(name="ladder six", bits=6, unit_r=10e3, ref_r=5.0, load_c=1e-9),
            Design(topology="string", output="buffer", name="string ten", bits=10)]


@pytest.fixture
def compared(window, qtbot):
    """The window on two candidates of its own, their results in (so no late result rewrites the
    status line a test reads)."""
    window.model.replace_all(with_colours(_designs(), ["#aa3311", "#1177aa"]), None, "test")
    window.model.state.select(0)
    qtbot.waitUntil(lambda: window.live.latest is not None and not window.live.is_busy()
                    and [r.design for r in window.live.latest.results] == list(window.model.state.designs)
                    and not window.plots.is_drawing(), timeout=60000)
    return window


def _count(img: QImage, colour: str) -> int:
    """Pixels within a small distance of ``colour`` (antialiased edges differ a little)."""
    want = QColor(colour)
    n = 0
    for y in range(img.height()):
        for x in range(img.width()):
            c = QColor(img.pixel(x, y))
            if (abs(c.red() - want.red()) + abs(c.green() - want.green())
                    + abs(c.blue() - want.blue())) < 40:
                n += 1
    return n


def test_schematic_view_follows_the_candidates_and_the_code(compared, qtbot):
    pane = compared.views["schematic_pane"]
    assert [pane.combo.itemText(i) for i in range(pane.combo.count())] == ["ladder six",
                                                                             "string ten"]
    assert pane.spin_code.maximum() == 63
    assert pane.spin_code.value() == 33  # mid-scale and the LSB until a code is picked
    pane.spin_code.setValue(5)
    assert pane.code_label.text() == "(0b000101)"
    sheet = pane.canvas.sheet
    assert sheet is not None
    assert [s.closed for s in sheet.items if type(s).__name__ == "Switch"][:3] == [0, 1, 0]
    assert pane.canvas.accent == "#aa3311"
    img = schematic_image(sheet, 1000, 450, pane.canvas.accent)
    assert _count(img, "#aa3311") > 20  # closed switches in the candidate's colour
    pane.combo.setCurrentIndex(1)
    assert pane.spin_code.maximum() == 1023
    names = pane.canvas.sheet.names()
    assert "U1" in names
    assert "S1024" in names


def test_hover_card_shows_the_schematic_of_the_row(compared, qtbot):
    from rungwise.app.window.candidate_list import CandidateListPane

    pane = compared.findChild(CandidateListPane, "candidate_pane")
    lst = pane.list
    rect = lst.visualRect(lst.model().index(1, 0))
    event = QHelpEvent(QEvent.Type.ToolTip, rect.center(), lst.viewport().mapToGlobal(rect.center()))
    QApplication.sendEvent(lst.viewport(), event)
    card = pane.card.card
    qtbot.waitUntil(card.isVisible, timeout=60000)
    assert "string ten" in card.title.text()
    pix = card.picture.pixmap()
    assert not pix.isNull()
    assert _count(pix.toImage(), "#1177aa") > 5  # the closed tap switch in the row's colour
    move = QEvent(QEvent.Type.Leave)
    QApplication.sendEvent(lst.viewport(), move)
    assert not card.isVisible()


@pytest.mark.ngspice
def test_file_export_netlist_writes_the_edited_candidate(compared, tmp_path: Path):
    exe = spice.require_ngspice()
    path = tmp_path / "ladder.cir"
    assert compared.files.export_netlist(path, 37)
    text = path.read_text()
    assert "candidate 'ladder six'" in text
    out = subprocess.run([exe, "-b", str(path)], capture_output=True, text=True, check=True)
    value = float(re.search(r"^v\(out\) = (\S+)$", out.stdout, re.M).group(1))
    # source: ngspice — the exported netlist prints the engine's output at code 37
    assert value == pytest.approx(evaluate(_designs()[0]).vout[37], rel=1e-9)
    from PySide6.QtGui import QAction

    action = compared.findChild(QAction, "action_export_netlist")
    assert action is not None
    assert action.isEnabled()


def test_schematic_of_every_candidate_matches_its_layout(compared):
    pane = compared.views["schematic_pane"]
    for i, d in enumerate(_designs()):
        pane.combo.setCurrentIndex(i)
        pane.spin_code.setValue(3)
        assert pane.canvas.sheet.names() == schematic(d, 3).names()


def test_netlist_made_on_the_worker_is_written_when_it_arrives(compared, qtbot, tmp_path: Path):
    path = tmp_path / "every.cir"
    with qtbot.waitSignal(compared.files.netlist_written, timeout=30000) as sig:
        compared.files.write_netlist_in_background(path, None)
    assert sig.args == [path]
    text = path.read_text()
    assert "dc VCODE 0 63 1" in text
    assert "candidate 'ladder six'" in text
    assert "Wrote the netlist every.cir" in compared.status_text.text()
