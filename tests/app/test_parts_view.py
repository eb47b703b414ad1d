"""The parts view on its own (pytest-qt): figures, bill of materials, flags, export, suggestions."""

from __future__ import annotations

import csv
import importlib

import pytest
from PySide6.QtCore import QCoreApplication

from rungwise.app.window.view_registry import VIEWS
from rungwise.core import Design, evaluate
from rungwise.core.formatting import format_quantity
from rungwise.core.parts.bom import CAUTION

LADDER = Design(bits=8, unit_r=33e3, load_c=10e-12, name="Ladder")
HOT = Design(topology="binary-weighted", output="terminated-divider", bits=6, vref=24.0, unit_r=100.0,
             series="E24", name="Hot divider")


@pytest.fixture
def pane(qtbot):
    from rungwise.app.views.parts import PartsPane

    view = PartsPane()
    qtbot.addWidget(view)
    yield view
    view.shutdown()
    assert view.runner.active_count() == 0


def _shown(qtbot, pane, action, timeout=30000):
    with qtbot.waitSignal(pane.result_changed, timeout=timeout) as blocker:
        action()
    return blocker.args[0]


def _figure(pane, label):
    for row in range(pane.table_figures.rowCount()):
        if pane.table_figures.item(row, 0).text() == label:
            return pane.table_figures.item(row, 1).text()
    raise KeyError(label)


def test_registered_with_the_window_contract():
    entry = next(v for v in VIEWS if v.key == "parts_pane")
    cls = getattr(importlib.import_module(entry.module), entry.cls)
    assert callable(cls.set_candidates)
    assert callable(cls.shutdown)


def test_snapping_to_e12_shows_a_non_monotonic_ladder_and_e96_fixes_it(qtbot, pane):
    _shown(qtbot, pane, lambda: pane.set_candidates([LADDER]))
    assert _figure(pane, "Values") == "exact (no snapping)"
    out = _shown(qtbot, pane, lambda: pane.combo_series.setCurrentText("E12"))
    assert _figure(pane, "Monotonic as built") == "no"
    assert {ln.ohms for ln in out.bom if ln.kind == "resistor"} == {68e3, 33e3}
    _shown(qtbot, pane, lambda: pane.combo_series.setCurrentText("E96"))
    assert _figure(pane, "Monotonic as built") == "yes"
    ev = evaluate(LADDER.replace(series="E96"))
    assert pane.table_bom.item(0, 2).text() == "66.5 kΩ"
    assert "ln(2·(2^N − 1))" in _figure(pane, "Settling to ½ LSB")
    assert format_quantity(ev.summary["noise_rms_lsb"], "LSB") in _figure(pane, "Thermal noise")
    assert not pane.label_caution.isVisibleTo(pane)


def test_overloads_are_flagged_with_the_caution_and_export(qtbot, pane, tmp_path):
    out = _shown(qtbot, pane, lambda: pane.set_candidates([HOT]))
    assert out.flagged
    assert pane.label_caution.isVisibleTo(pane)
    assert pane.label_caution.text() == CAUTION
    row = next(i for i, ln in enumerate(out.bom) if ln.flagged)
    assert "datasheet" in pane.table_bom.item(row, 0).toolTip()
    path = tmp_path / "parts.csv"
    pane.export_csv(path)
    rows = list(csv.reader(path.read_text(encoding="utf-8").splitlines()))
    assert rows[0][:3] == ["candidate", "designators", "kind"]
    assert rows[-1] == ["caution", CAUTION]


def test_suggestions_and_adding_a_candidate(qtbot, pane):
    _shown(qtbot, pane, lambda: pane.set_candidates([LADDER.replace(series="E24", ron_high=40.0,
                                                                    ron_low=25.0, load_c=20e-12)]))
    pane.limit_edits["iref_max"].setText("1m")
    pane.limit_edits["settling_max"].setText("1u")
    with qtbot.waitSignal(pane.suggestions_changed, timeout=30000) as blocker:
        pane.button_suggest.click()
    found = blocker.args[0]
    assert pane.table_suggest.rowCount() == len(found)
    assert pane.table_suggest.item(0, 0).text() == "7.5 kΩ"
    pane.table_suggest.selectRow(0)
    with qtbot.waitSignal(pane.candidate_requested) as req:
        pane.button_use_value.click()
    assert req.args[0].unit_r == 7.5e3
    assert req.args[0].series == "E24"


def test_bad_limit_is_explained(qtbot, pane):
    _shown(qtbot, pane, lambda: pane.set_candidates([LADDER]))
    pane.limit_edits["rout_max"].setText("lots")
    pane.button_suggest.click()
    assert "rout_max" in pane.label_status.text()


def test_role_coefficients_and_range_drive_the_drift_figures(qtbot, pane):
    # legs and series from different batches: 100 vs 25 ppm/K over −40 … 125 °C
    _shown(qtbot, pane, lambda: pane.set_candidates([LADDER]))
    pane.tempco_edits["leg"].setText("100")
    pane.tempco_edits["termination"].setText("100 ppm")
    pane.tempco_edits["series"].setText("25e-6")
    pane.edit_temp_low.setText("-40")
    pane.edit_temp_high.setText("125")
    out = _shown(qtbot, pane, pane.refresh)
    d = out.design
    assert d.mismatch["tempco_parts"]["leg3"] == pytest.approx(100e-6)
    assert d.mismatch["tempco_parts"]["term"] == pytest.approx(100e-6)
    assert d.mismatch["tempco_parts"]["series2"] == pytest.approx(25e-6)
    assert (d.board["temp_low_c"], d.board["temp_high_c"]) == (-40.0, 125.0)
    assert out.built.summary["drift_inl_high"] > 0.05
    assert "Drift at 125 °C" in [pane.table_figures.item(r, 0).text()
                                 for r in range(pane.table_figures.rowCount())]
    with qtbot.waitSignal(pane.candidate_requested) as req:
        pane.button_use_series.click()
    assert req.args[0].mismatch["tempco_parts"]["leg0"] == pytest.approx(100e-6)
    pane.tempco_edits["leg"].setText("warm")
    pane.refresh()
    assert "tempco of leg" in pane.label_status.text()


def test_a_refused_entry_is_not_replaced_by_the_earlier_result(qtbot, pane):
    # found by the soak run: a job started before the bad entry finished after it and replaced the
    # refusal with "No part over its rating or limit", as if the entry had been taken
    pane.set_candidates([LADDER.replace(bits=12)])  # starts a job
    assert pane.runner.is_busy("parts")
    pane.edit_temp_high.setText("abc")
    pane.edit_temp_high.editingFinished.emit()
    refusal = pane.label_status.text()
    assert refusal.startswith("temp_high_c: cannot read 'abc'")
    qtbot.waitUntil(lambda: pane.runner.active_count() == 0, timeout=30000)
    QCoreApplication.processEvents()  # anything the finished job queued is delivered now
    assert pane.label_status.text() == refusal


def test_choices_the_core_refuses_are_not_added(qtbot, pane):
    # a 16-bit binary-weighted LSB resistor of 10 kΩ·2^15 ≈ 328 MΩ lies beyond the E96 values
    # (1 Ω … 10 MΩ): nothing is added and the reason is shown where the button is
    wide = Design(topology="binary-weighted", bits=16, unit_r=10e3, name="Wide")
    pane.set_candidates([wide])
    qtbot.waitUntil(lambda: pane.runner.active_count() == 0, timeout=60000)
    pane.combo_series.setCurrentText("E96")
    qtbot.waitUntil(lambda: pane.runner.active_count() == 0, timeout=60000)
    requested: list = []
    pane.candidate_requested.connect(requested.append)
    pane.button_use_series.click()
    assert requested == []
    assert pane.label_status.text().startswith("Not added: ")
    assert "E96" in pane.label_status.text()
    pane.combo_series.setCurrentText("exact")  # no snapping: it can be built, so it is added
    pane.button_use_series.click()
    assert len(requested) == 1
    assert requested[0].bits == 16
