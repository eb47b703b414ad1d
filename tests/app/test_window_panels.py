"""The values and figures panels are docks (hidden, floated, put back, remembered); the table
says when a figure has no meaning, compares LSB figures only where comparable, and names
networks in words."""

from __future__ import annotations

from PySide6.QtCore import Qt
from PySide6.QtWidgets import QComboBox

from rungwise.app.window.compare_table import best_columns, comparable, wrapped
from rungwise.app.window.main_window import MainWindow
from rungwise.core.display_names import topology_name


def test_panels_hide_float_and_come_back(window, qtbot):
    values, figures = window.dock_values, window.dock_figures
    window.findChild(type(window.action_add), "action_show_dock_figures").trigger()
    assert not figures.isVisible()
    figures.setFloating(True)
    values.hide()
    window.findChild(type(window.action_add), "action_panels_back").trigger()
    assert values.isVisible()
    assert figures.isVisible()
    assert not figures.isFloating()
    # on a laptop-sized window the two panels share the left side, values above figures
    assert window.width() < 1700
    assert window.dockWidgetArea(figures) == Qt.DockWidgetArea.LeftDockWidgetArea
    assert not window.tabifiedDockWidgets(values)
    assert values.geometry().bottom() < figures.geometry().top()


def test_panel_places_are_remembered(qtbot, private_config):
    first = MainWindow()
    first.ask_before_closing = False
    qtbot.addWidget(first)
    first.resize(1366, 768)
    first.show()
    first.dock_figures.hide()
    first.close()
    again = MainWindow()
    again.ask_before_closing = False
    qtbot.addWidget(again)
    again.show()
    assert not again.dock_figures.isVisible()
    assert again.dock_values.isVisible()
    again.close()


def test_no_meaning_is_said_in_the_table(window, qtbot):
    state = window.model.state
    with qtbot.waitSignal(window.live.results_changed, timeout=60000):
        state.set_design(0, state.designs[0].replace(load_c=0.0), "no capacitance")
    row = window.table.keys.index("settling_time")
    item = window.table.item(row, 0)
    assert item.text() == "no meaning"
    assert "no load capacitance given" in item.toolTip()
    assert window.table.item(row, 1).text() != "no meaning"
    assert "no load capacitance given" in window.meaning_note.text()
    line = next(ln for ln in window.table.as_tsv().splitlines() if ln.startswith("Settling"))
    assert "no meaning: no load capacitance given" in line


def test_best_marks_compare_lsb_figures_per_full_scale_when_bits_differ():
    # 0.3 LSB of 8 bits is 0.3/255 of full scale; 1 LSB of 12 bits is 1/4095: the 12-bit one wins
    assert best_columns("max_abs_inl_endpoint", [0.3, 1.0], [8, 12]) == {1}
    assert best_columns("max_abs_inl_endpoint", [0.3, 1.0], [8, 8]) == {0}
    assert comparable("max_abs_dnl", [0.3, 1.0], [8, 12])[1] == (
        ", compared per full scale as the bits differ")
    assert comparable("max_abs_dnl", [0.3, 1.0], [8, 8])[1] == ", all 8 bits"
    assert best_columns("n_resistors", [16, 23], [8, 12]) == {0}  # counts compare as they are


def test_networks_are_named_in_words(window):
    combo = window.pane.findChild(QComboBox, "combo_topology")
    assert [combo.itemText(i) for i in range(combo.count())] == [
        topology_name(combo.itemData(i)) for i in range(combo.count())]
    assert combo.currentText() == "R-2R ladder, voltage out"
    out = window.pane.findChild(QComboBox, "combo_output")
    assert out.currentText() == "unbuffered"
    head = window.table.horizontalHeaderItem(2)
    assert "Segmented ladder (unbuffered), 8 bits" in head.toolTip()
    assert wrapped("Segmented 4 + 4, 1 % parts") == "Segmented 4 +\n4, 1 % parts"
