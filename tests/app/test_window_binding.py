"""Design pane ↔ model: values shown, entries applied, refused entries marked and never applied."""

from __future__ import annotations

import math

import pytest
from PySide6.QtCore import Qt
from PySide6.QtWidgets import QComboBox, QLineEdit, QSpinBox

from rungwise.app.window.binding import bound_inputs
from rungwise.core.build_style import BUILD_OPTIONS
from rungwise.core.design import FIELDS
from rungwise.core.topologies import build


def type_into(qtbot, edit: QLineEdit, text: str) -> None:
    """Replace the text of ``edit`` by typing and press Enter."""
    edit.selectAll()
    qtbot.keyClick(edit, Qt.Key.Key_Backspace)
    qtbot.keyClicks(edit, text)
    qtbot.keyClick(edit, Qt.Key.Key_Return)


def test_every_field_has_a_widget_found_by_name(window):
    inputs = bound_inputs(window.pane)
    assert set(FIELDS) | {"topology", "output"} | {f"build.{k}" for k in BUILD_OPTIONS} == set(inputs)
    assert isinstance(inputs["bits"], QSpinBox)
    assert isinstance(inputs["unit_r"], QLineEdit)
    assert isinstance(inputs["topology"], QComboBox)


def test_model_to_widgets(window, qtbot):
    state = window.model.state
    new = state.current.design.replace(unit_r=4700.0, bits=10, load_r=math.inf)
    state.set_design(state.selected, new, "test")
    pane = window.pane
    assert pane.findChild(QLineEdit, "edit_unit_r").text() == "4.7 kΩ"
    assert pane.findChild(QSpinBox, "spin_bits").value() == 10
    assert pane.findChild(QLineEdit, "edit_load_r").text() == "open"
    # selecting the other candidate shows its values
    state.select(2)
    assert pane.findChild(QComboBox, "combo_topology").currentData() == "segmented"
    assert pane.findChild(QLineEdit, "edit_unit_r").text() == "10 kΩ"


def test_fields_the_design_does_not_use_are_greyed_with_the_reason(window):
    state = window.model.state
    inputs = bound_inputs(window.pane)
    state.set_design(state.selected, state.current.design.replace(topology="string"), "test")
    assert not inputs["thermometer_bits"].isEnabled()
    assert not inputs["ron_low"].isEnabled()
    assert "tap switch" in inputs["ron_low"].toolTip()
    assert inputs["ron_high"].isEnabled()
    state.set_design(state.selected, state.current.design.replace(topology="segmented",
                                                                    output="buffer"), "test")
    assert inputs["thermometer_bits"].isEnabled()
    assert inputs["gain"].isEnabled()
    assert inputs["ron_low"].isEnabled()
    assert not inputs["feedback_r"].isEnabled()


def test_widgets_to_model(window, qtbot):
    pane, state = window.pane, window.model.state
    with qtbot.waitSignal(window.model.candidates_changed):
        type_into(qtbot, pane.findChild(QLineEdit, "edit_unit_r"), "4k7")
    assert state.current.design.unit_r == 4700.0
    assert pane.findChild(QLineEdit, "edit_unit_r").text() == "4.7 kΩ"
    type_into(qtbot, pane.findChild(QLineEdit, "edit_vref"), "2.5 V")
    assert state.current.design.vref == 2.5
    type_into(qtbot, pane.findChild(QLineEdit, "edit_load_r"), "open")
    assert math.isinf(state.current.design.load_r)
    spin = pane.findChild(QSpinBox, "spin_bits")
    spin.setValue(12)
    assert state.current.design.bits == 8  # still moving: only previewed
    pane.commit_pending()
    assert state.current.design.bits == 12
    combo = pane.findChild(QComboBox, "combo_output")
    combo.setCurrentIndex(combo.findData("buffer"))
    combo.activated.emit(combo.currentIndex())
    assert state.current.design.output == "buffer"
    # the new results arrive and reach the table
    qtbot.waitUntil(lambda: window.table.item(window.table.keys.index("n_amplifiers"), 0).text()
                    .startswith("1"), timeout=10000)


@pytest.mark.parametrize(("key", "text", "words"), [
    ("unit_r", "-5k", "≥ 0.001 Ω"),
    ("unit_r", "abc", "cannot read"),
    ("ron_high", "2G", "≤ 1e+09 Ω"),
    ("vref", "0", "must not be zero"),
])
def test_refused_entry_is_marked_and_not_applied(window, qtbot, key, text, words):
    pane, state = window.pane, window.model.state
    before = state.current.design.to_dict()
    edit = pane.findChild(QLineEdit, f"edit_{key}")
    type_into(qtbot, edit, text)
    assert state.current.design.to_dict() == before
    message = pane.binder.error_label(key)
    assert message.isVisibleTo(pane)
    assert words in message.text()
    assert FIELDS[key].label in message.text()
    assert edit.property("refused") is True
    assert edit.text() == text  # the person's text stays for correction
    # a valid entry clears the mark
    type_into(qtbot, edit, "3k3" if key != "vref" else "1.8")
    assert not message.isVisibleTo(pane)
    assert edit.property("refused") is False


def test_lsb_section_choice_only_for_segmented_designs(window, qtbot):
    pane, state = window.pane, window.model.state
    combo = pane.findChild(QComboBox, "combo_build.lsb_section")
    assert state.current.design.topology != "segmented"
    assert not combo.isEnabled()
    assert combo.currentData() == "r2r"
    state.set_design(state.selected, state.current.design.replace(
        topology="segmented", bits=6, thermometer_bits=2, parts={}), "test")
    assert combo.isEnabled()
    assert not pane.findChild(QComboBox, "combo_build.binary").isEnabled()
    combo.setCurrentIndex(combo.findData("unit-array"))
    combo.activated.emit(combo.currentIndex())
    design = state.current.design
    assert design.build["lsb_section"] == "unit-array"
    assert [p.part_id for p in build(design).parts][-2:] == ["bit3", "term"]
    # the model shown back: another candidate, then this one again
    state.select(1)
    assert combo.currentData() == "r2r"
    state.select(0)
    assert combo.currentData() == "unit-array"
