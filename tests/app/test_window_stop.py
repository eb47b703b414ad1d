"""Stop (Esc) while the figures of an edit are on their way: the window says the curves and
figures are of earlier values, and Compute again (F5) brings them up to date."""

from __future__ import annotations

from PySide6.QtGui import QAction

from rungwise.app.window.main_window import STOPPED_TEXT


def _shown_designs(window):
    return [r.design for r in window.live.latest.results]


def test_stop_says_the_figures_are_of_earlier_values_and_compute_again_updates(window, qtbot):
    # found by the soak run: after a Stop the old figures stayed under the status "solved in … ms"
    before = window.model.state.designs
    field = window.pane.binder.inputs["unit_r"]
    field.setText("4k7")
    field.editingFinished.emit()
    edited = window.model.state.designs
    assert edited != before
    window.findChild(QAction, "action_stop").trigger()
    assert not window.live.is_busy()
    assert _shown_designs(window) == before
    assert window.status_text.text() == STOPPED_TEXT
    with qtbot.waitSignal(window.live.results_changed, timeout=60000):
        window.findChild(QAction, "action_compute").trigger()
    assert _shown_designs(window) == edited
    assert window.status_text.text().startswith(f"{len(edited)} candidates, 8 bits, solved in")


def test_stop_when_up_to_date_changes_nothing(window):
    text = window.status_text.text()
    window.findChild(QAction, "action_stop").trigger()
    assert window.status_text.text() == text
    assert _shown_designs(window) == window.model.state.designs
