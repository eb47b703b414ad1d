"""The switching view (pytest-qt): glitch against code, one transition's waveform, the spectrum,
and the reasons shown where the figures mean nothing."""

from __future__ import annotations

import importlib

import numpy as np
import pytest

from rungwise.app.jobs.workers import run_sync
from rungwise.app.views.dynamics_job import dynamics_job
from rungwise.app.window.view_registry import VIEWS
from rungwise.core import Design, evaluate

TIMED = Design(topology="r2r-voltage", bits=8, ron_high=40, ron_low=70, load_c=10e-12,
               timing={"rise": 4e-9, "fall": 1e-9, "skew": [0, 1e-9], "node_c": 1e-12},
               name="Timed ladder")
SEGMENTED = TIMED.replace(topology="segmented", thermometer_bits=4, name="Segmented")
PLAIN = Design(topology="binary-weighted", output="divider", bits=6, name="No timing")


@pytest.fixture
def pane(qtbot):
    from rungwise.app.views.dynamics import DynamicsPane

    view = DynamicsPane()
    qtbot.addWidget(view)
    yield view
    view.shutdown()
    assert view.runner.active_count() == 0


def _solve(qtbot, pane, designs):
    with qtbot.waitSignal(pane.runner.finished, timeout=60000):
        pane.set_candidates(designs)


def test_registered_with_the_window_contract():
    entry = next(v for v in VIEWS if v.key == "dynamics_pane")
    cls = getattr(importlib.import_module(entry.module), entry.cls)
    assert callable(cls.set_candidates)
    assert callable(cls.shutdown)


def test_job_matches_evaluate():
    out = run_sync(dynamics_job((TIMED, PLAIN)))
    ev = evaluate(TIMED)
    np.testing.assert_array_equal(out[0].dynamics.glitch, ev.dynamics.glitch)
    assert out[0].summary["sinad_db"] == ev.summary["sinad_db"]
    assert out[1].dynamics.note is not None


def test_glitch_wave_and_spectrum_are_drawn(qtbot, pane):
    _solve(qtbot, pane, [TIMED, SEGMENTED])
    curves = pane.plot_glitch.getPlotItem().listDataItems()
    assert [c.name() for c in curves] == ["Timed ladder", "Segmented"]
    x, y = curves[0].getData()
    g = np.abs(evaluate(TIMED).dynamics.glitch)
    np.testing.assert_allclose(10.0 ** np.asarray(y), g[x.astype(int)], rtol=1e-9)  # log axis
    # the segmented design's major-carry glitch is smaller than the ladder's
    assert abs(pane.results[1].summary["glitch_major"]) < abs(pane.results[0].summary["glitch_major"])
    assert pane.spin_code.value() == 128  # the major carry by default
    wave = pane.plot_wave.getPlotItem().listDataItems()
    assert [w.name() for w in wave] == ["127 → 128", "every switch at once"]
    t, y = wave[0].getData()
    _, ys = wave[1].getData()
    area = np.trapezoid(y - ys, t)
    assert area == pytest.approx(pane.results[0].dynamics.glitch[128], rel=0.02)
    assert "nV·s" in pane.plot_wave.getPlotItem().titleLabel.text
    spec = pane.plot_spectrum.getPlotItem().listDataItems()
    assert len(spec) == 1
    assert np.max(spec[0].getData()[1]) == pytest.approx(0.0)
    pane.spin_code.setValue(5)
    assert pane.plot_wave.getPlotItem().listDataItems()[0].name() == "4 → 5"
    assert "SFDR" in pane.status.text()


def test_figures_without_meaning_say_why(qtbot, pane):
    _solve(qtbot, pane, [PLAIN, TIMED.replace(timing={}, name="Load only")])
    text = pane.status.text()
    assert "No timing: glitch and settling: no capacitance" in text
    assert "Load only: glitch: no switch edge timing" in text
    names = [c.name() for c in pane.plot_glitch.getPlotItem().listDataItems()]
    assert names == []  # nothing drawn as if it were 0
    pane.combo.setCurrentIndex(1)
    assert [w.name() for w in pane.plot_wave.getPlotItem().listDataItems()] == [
        "127 → 128", "every switch at once"]  # settling still shown


def test_settings_are_applied_as_an_edit_or_refused_by_name(qtbot, pane):
    _solve(qtbot, pane, [PLAIN, TIMED])
    pane.combo.setCurrentIndex(1)
    assert pane.edits["timing.skew"].text() == "0, 1n"
    assert pane.edits["sine.cycles"].text() == ""
    pane.edits["timing.rise"].setText("7n")
    pane.edits["sine.cycles"].setText("101")
    with qtbot.waitSignal(pane.edit_requested) as blocker:
        pane.button_apply.click()
    index, design, _ = blocker.args
    assert index == 1
    assert design.timing["rise"] == pytest.approx(7e-9)
    assert design.sine == {"cycles": 101}
    pane.edits["sine.cycles"].setText("64")  # not coprime with 4096
    with qtbot.assertNotEmitted(pane.edit_requested):
        pane.button_apply.click()
    assert "sine.cycles" in pane.message.text()
    assert "coprime" in pane.message.text()


def test_the_window_applies_the_view_edit(window):
    view = window.views["dynamics_pane"]
    before = window.model.state.designs[0]
    view.edit_requested.emit(0, before.replace(timing={"rise": 2e-9}), "switch timing")
    assert window.model.state.designs[0].timing == {"rise": 2e-9}
    window.files.history.undo()  # an undoable edit like any other
    assert window.model.state.designs[0].timing == before.timing


def test_the_model_is_stated(pane):
    assert "Amplifiers are taken as ideal" in pane.model_note.text()
