"""The statistics view on its own (pytest-qt): run, cancel, rerun after an edit, the review question."""

from __future__ import annotations

import importlib

import pytest

from rungwise.app.jobs.workers import run_sync
from rungwise.app.views.stats_job import StatsRequest, statistics_job
from rungwise.app.window.view_registry import VIEWS
from rungwise.core import Design
from rungwise.core.grades import iter_until_decided, loosest_grade, with_tolerance

LADDER = Design(topology="r2r-voltage", bits=8, name="Ladder")
UNITS = Design(topology="binary-weighted", output="divider", bits=8, build={"binary": "unit-array"},
               name="Unit array")
PER_BIT = Design(topology="binary-weighted", output="terminated-divider", bits=8, name="One per bit")


@pytest.fixture
def pane(qtbot):
    from rungwise.app.views.stats import StatisticsPane

    view = StatisticsPane()
    qtbot.addWidget(view)
    view.check_auto.setChecked(False)
    view.spin_trials.setValue(400)
    yield view
    view.shutdown()
    assert view.runner.active_count() == 0


def _run(qtbot, pane, timeout=60000):
    with qtbot.waitSignal(pane.result_changed, timeout=timeout) as blocker:
        pane.button_run.click()
    return blocker.args[0]


def test_registered_with_the_window_contract():
    entry = next(v for v in VIEWS if v.key == "stats_pane")
    cls = getattr(importlib.import_module(entry.module), entry.cls)
    assert callable(cls.set_candidates)
    assert callable(cls.shutdown)


def test_review_question_with_one_percent_parts(qtbot, pane):
    # "with 1 % parts, which candidate is monotonic in 99 % of boards, and what grade would the
    # other need?" — pick 1 %, monotonic, 99 %, Run; read the table
    pane.set_candidates([UNITS, PER_BIT])
    pane.combo_grade.setCurrentIndex(pane.combo_grade.findData(0.01))
    pane.combo_criterion.setCurrentIndex(pane.combo_criterion.findData("monotonic"))
    pane.spin_target.setValue(99.0)
    pane.edit_seed.setText("17")
    pane.spin_trials.setValue(1000)  # enough boards to decide 99 % at 95 % confidence
    outcome = _run(qtbot, pane)
    assert pane.table.rowCount() == 2
    for row, design in enumerate((UNITS, PER_BIT)):
        # each run stops once decided against the target, by the same rule as the API's
        *_, (api, decision) = iter_until_decided(with_tolerance(design, 0.01), 1000, 17, None,
                                                 "monotonic", 0.99)
        assert pane.table.item(row, 2).text() == api.yield_monotonic.text()
        assert outcome.decisions[row] == decision
        grade, _ = loosest_grade(design, 0.99, trials=1000, seed=17, criterion="monotonic",
                                 early_stop=True)
        assert outcome.loosest(row) == grade
        assert pane.table.item(row, 6).text() == f"±{grade * 100:g} %"
    assert outcome.results[0].yield_monotonic.value >= 0.99  # the unit array passes at 1 %
    assert outcome.results[1].yield_monotonic.value < 0.99   # one part per bit does not
    assert "Unit array: meets 99 %" in pane.label_status.text()
    assert "One per bit: misses 99 %" in pane.label_status.text()
    assert "Seed 17" in pane.label_seed.text()
    assert len(pane.plot_yield.listDataItems()) == 2
    assert len(pane.plot_hist.listDataItems()) == 2
    assert len(pane.plot_envelope.listDataItems()) == 3


def test_cancel_stops_the_run_and_leaves_no_worker(qtbot, pane):
    pane.spin_trials.setValue(50_000)
    pane.set_candidates([LADDER.replace(ron_high=40.0, ron_low=25.0)])
    with qtbot.waitSignal(pane.runner.progress, timeout=30000):
        pane.button_run.click()
    assert pane.button_cancel.isEnabled()
    with qtbot.waitSignal(pane.runner.busy_changed, timeout=60000):
        pane.button_cancel.click()
    assert pane.label_status.text() == "Cancelled"
    assert not pane.button_cancel.isEnabled()
    qtbot.waitUntil(lambda: pane.runner.active_count() == 0, timeout=30000)


def test_finished_edit_reruns_only_when_asked(qtbot, pane):
    pane.show()
    pane.set_candidates([LADDER])
    assert not pane.runner.is_busy("statistics")
    pane.check_auto.setChecked(True)
    with qtbot.waitSignal(pane.result_changed, timeout=60000):
        pane.set_candidates([LADDER.replace(bits=6)])
    assert pane.table.item(0, 0).text() == "Ladder"


def test_a_hidden_view_waits_until_shown(qtbot, pane):
    pane.check_auto.setChecked(True)
    pane.set_candidates([LADDER.replace(bits=5)])
    assert not pane.runner.is_busy("statistics")
    with qtbot.waitSignal(pane.result_changed, timeout=60000):
        pane.show()
    assert pane.table.rowCount() == 1


def test_bad_seed_is_refused_in_words(qtbot, pane):
    pane.set_candidates([LADDER])
    pane.edit_seed.setText("-4")
    pane.button_run.click()
    assert not pane.runner.is_busy("statistics")
    assert "Seed: a whole number" in pane.label_status.text()


def test_job_runs_synchronously_and_reports_progress():
    seen = []
    req = StatsRequest((LADDER,), trials=200, seed=3, grade=0.02)
    outcome = run_sync(statistics_job(req), on_progress=seen.append)
    assert seen[-1].done == seen[-1].total
    assert [p.done for p in seen] == sorted(p.done for p in seen)
    assert outcome.results[0].model.tolerance == 0.02
    assert len(outcome.curves[0].yields) == 9
    on_chip = run_sync(statistics_job(StatsRequest((LADDER.replace(mismatch={"model": "on-chip"}),),
                                                   trials=50, grade=0.01)))
    assert on_chip.curves[0] is None
    assert "area law" in on_chip.notes[0]


def test_object_names_are_unique_and_prefixed(pane):
    from PySide6.QtWidgets import QWidget

    names = [w.objectName() for w in pane.findChildren(QWidget) if w.objectName().count("_stats")]
    assert len(names) == len(set(names)) == 17


def test_plots_and_table_use_the_candidates_colours(qtbot, pane):
    colours = ["#2f8f9d", "#c9733a"]
    pane.set_colours(colours)
    pane.set_candidates([LADDER, PER_BIT])
    pane.spin_trials.setValue(100)
    _run(qtbot, pane)
    pane.combo_candidate.setCurrentIndex(1)
    curves = [c for c in pane.plot_yield.listDataItems() if c.name()]
    assert [c.opts["pen"].color().name() for c in curves] == colours
    assert [c.opts["symbolBrush"] for c in curves] == colours
    hist = pane.plot_hist.listDataItems()
    assert {c.opts["pen"].color().name() for c in hist} == {colours[1]}
    assert all(c.name().startswith("One per bit: ") for c in hist)
    assert pane.table.item(1, 0).foreground().color().name() == colours[1]
    assert pane.label_status.wordWrap()
