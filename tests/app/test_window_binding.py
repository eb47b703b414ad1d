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
                    .startswith("1"), timeout=60000)


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


@pytest.mark.parametrize(("typed", "words"), [("99", "99 bits is out of range"),
                                              ("-5", "-5 bits is out of range")])
def test_a_number_box_refuses_out_of_range_typing_visibly(window, qtbot, typed, words):
    pane, state = window.pane, window.model.state
    before = state.current.design.bits
    spin = pane.findChild(QSpinBox, "spin_bits")
    spin.setFocus()
    spin.selectAll()
    qtbot.keyClicks(spin, typed)
    assert spin.lineEdit().text() == typed  # typed as it is, not clamped to 9 or 5
    qtbot.keyClick(spin, Qt.Key.Key_Return)
    assert state.current.design.bits == before  # the last good value stays
    assert spin.value() == before
    message = pane.binder.error_label("bits")
    assert message.isVisibleTo(pane)
    assert f"Resolution: {words}; allowed: a whole number from 1 to 24 bits" == message.text()
    assert spin.property("refused") is True
    spin.selectAll()
    qtbot.keyClicks(spin, "10")
    qtbot.keyClick(spin, Qt.Key.Key_Return)
    pane.commit_pending()
    assert state.current.design.bits == 10
    assert not message.isVisibleTo(pane)
    assert spin.property("refused") is False


def test_every_number_box_of_the_views_refuses_instead_of_clamping(window, qtbot):
    from PySide6.QtWidgets import QAbstractSpinBox

    from rungwise.app.window.number_box import DecimalBox, NumberBox

    boxes = window.findChildren(QAbstractSpinBox)
    assert len(boxes) >= 8
    assert all(isinstance(b, NumberBox | DecimalBox) for b in boxes), [
        b.objectName() for b in boxes if not isinstance(b, NumberBox | DecimalBox)]
    trials = window.findChild(QAbstractSpinBox, "spin_stats_trials")
    heard = []
    trials.refused.connect(lambda typed, why: heard.append((typed, why)))
    before = trials.value()
    trials.lineEdit().setText("5")
    qtbot.keyClick(trials, Qt.Key.Key_Return)
    assert trials.value() == before
    assert heard == [("5", "Boards: 5 is out of range; allowed: a whole number from 10 to 1000000")]
    assert trials.toolTip() == heard[0][1]
    assert trials.property("refused") is True
