"""The design-search view on its own (pytest-qt): run, results, prices, add a candidate, cancel."""

from __future__ import annotations

import importlib

import pytest

from rungwise.app.window.view_registry import VIEWS
from rungwise.core import Design
from rungwise.core.space_search import InlineExecutor

BASE = Design(topology="r2r-voltage", bits=6, name="Ladder")


@pytest.fixture
def pane(qtbot):
    from rungwise.app.views.search import SearchPane

    view = SearchPane()
    qtbot.addWidget(view)
    view.make_executor = InlineExecutor
    view.set_candidates([BASE])
    view.edits["networks"].setText("r2r-voltage, binary-weighted:divider")
    view.edits["series"].setText("exact")
    view.edits["grades"].setText("1%, 0.2%")
    view.spin_trials.setValue(800)
    view.combo_criterion.setCurrentIndex(view.combo_criterion.findData("monotonic"))
    yield view
    view.shutdown()
    assert view.runner.active_count() == 0


def _run(qtbot, pane):
    with qtbot.waitSignal(pane.result_changed, timeout=120000) as blocker:
        pane.button_run.click()
    return blocker.args[0]


def test_registered_with_the_window_contract():
    entry = next(v for v in VIEWS if v.key == "search_pane")
    cls = getattr(importlib.import_module(entry.module), entry.cls)
    assert callable(cls.set_candidates)
    assert callable(cls.shutdown)
    assert hasattr(cls, "candidate_requested")


def test_run_shows_answer_table_front_and_prices(qtbot, pane):
    result = _run(qtbot, pane)
    assert pane.table.rowCount() == len(result.decided) == 4
    assert pane.table.item(0, 1).text() == f"{result.decided[0].cost:.4g}"
    assert "invented example prices" in pane.label_prices.text()
    assert "invented example prices" in pane.table.item(0, 1).toolTip()
    best = result.answer
    assert best is not None
    assert pane.label_answer.text().startswith("Cheapest design that meets every target")
    assert "Clopper–Pearson" in pane.label_method.text()
    assert pane.label_why.text().startswith("Why the other networks lost")
    assert len(pane.plot.getPlotItem().listDataItems()) >= 2
    assert pane.progress.value() == result.done == result.total
    pane.table.selectRow(1)
    second = result.decided[1]
    assert pane.label_breakdown.text().startswith(f"{second.describe()} — cost ")
    assert "switches: " in pane.label_breakdown.text()
    assert "invented example prices" in pane.label_breakdown.text()


def test_answer_added_as_candidate(qtbot, pane):
    result = _run(qtbot, pane)
    with qtbot.waitSignal(pane.candidate_requested) as got:
        pane.button_add.click()
    design = got.args[0]
    assert design.mismatch["tolerance"] == result.answer.grade
    assert design.topology == result.answer.design.topology
    assert "searched" in design.name


def test_bad_entry_named_in_the_status_line(qtbot, pane):
    pane.edits["grades"].setText("1%, lots")
    pane.button_run.click()
    assert "grades" in pane.label_status.text()
    assert not pane.runner.is_busy("search")


def test_prices_dialog_keeps_examples_marked_and_takes_edits(qtbot, pane):
    from rungwise.app.views.cost_dialog import CostDialog, table_from_rows

    dialog = CostDialog(pane.cost, pane)
    qtbot.addWidget(dialog)
    assert table_from_rows(dialog.rows()).source == pane.cost.source  # unchanged: still examples
    row = next(i for i in range(dialog.grid.rowCount()) if dialog.grid.item(i, 0).data(256) == "switch")
    dialog.grid.item(row, 2).setText("0.5")
    dialog.accept()
    assert dialog.table.switch == 0.5
    assert dialog.table.source.startswith("your prices; invented example prices for")
    dialog.grid.item(row, 2).setText("-1")
    dialog.accept()
    assert "cost.switch" in dialog.label_error.text()


def test_cancel_leaves_nothing_running(qtbot, pane):
    pane.edits["grades"].setText("1%, 0.5%, 0.25%, 0.1%, 0.05%")
    pane.edits["series"].setText("exact, E24, E96")
    pane.spin_trials.setValue(4000)
    pane.button_run.click()
    pane.button_cancel.click()
    qtbot.waitUntil(lambda: not pane.runner.is_busy("search"), timeout=60000)
    assert "Cancelled" in pane.label_status.text()


def test_file_tables_fill_the_fields(qtbot, pane):
    from rungwise.core.cost import CostTable
    from rungwise.core.designfile import DesignFile
    from rungwise.core.search_question import SearchQuestion

    q = SearchQuestion.from_dict({"topologies": ["segmented:buffer"], "thermometer_bits": "2-3",
                                  "grades": ["0.5%"], "max_iref": "1m", "criterion": "dnl",
                                  "trials": 900, "seed": 12})
    pane.load_file_tables(DesignFile([BASE], search=q, cost=CostTable.from_dict({"switch": 2})))
    assert pane.edits["networks"].text() == "segmented:buffer"
    assert pane.edits["thermometer_bits"].text() == "2, 3"
    assert pane.edits["grades"].text() == "0.5%"
    assert pane.edits["max_iref"].text() == "0.001"
    assert pane.combo_criterion.currentData() == "dnl"
    assert (pane.spin_trials.value(), pane.spin_seed.value()) == (900, 12)
    assert pane.cost.switch == 2
    assert "your prices" in pane.label_prices.text()
    pane.load_file_tables(None)
    assert "invented example prices" in pane.label_prices.text()


def test_window_saves_the_files_search_and_the_edited_prices(window, tmp_path):
    from PySide6.QtWidgets import QWidget

    from rungwise.core import designfile
    from rungwise.core.cost import CostTable
    from rungwise.core.designfile import DesignFile
    from rungwise.core.search_question import SearchQuestion

    path = tmp_path / "asked.rwd.toml"
    q = SearchQuestion.from_dict({"grades": ["0.5%", "0.1%"], "max_rout": "20k"})
    designfile.save(path, DesignFile([BASE], search=q, cost=CostTable.from_dict({"switch": 0.2})))
    assert window.open_file(path)
    pane = window.findChild(QWidget, "search_pane")
    assert pane.cost.switch == 0.2
    assert pane.edits["grades"].text() == "0.5%, 0.1%"
    pane.cost = CostTable.from_dict({"switch": 0.7})  # as the Prices dialog leaves it
    assert window.save_to(path)
    back = designfile.load(path)
    assert back.search == q
    assert back.cost.switch == 0.7


def test_default_process_pool_from_the_worker_thread(qtbot, pane):
    """The window's default: points in a process pool started from the job's worker thread; the
    result equals the inline one (seeds travel as arguments)."""
    from rungwise.app.views.search_job import question_from_fields
    from rungwise.core.space_search import search

    pane.make_executor = None
    pooled = _run(qtbot, pane)
    q = question_from_fields({k: e.text() for k, e in pane.edits.items()}, "monotonic", 0.99, 800, 1)
    inline = search(BASE, q, pane.targets(), pane.cost, InlineExecutor())
    assert [p.to_dict() for p in pooled.decided] == [p.to_dict() for p in inline.decided]


def test_the_files_targets_are_the_searchs_targets(qtbot, pane):
    """A file's [targets] (limits, line, monotonic rule, yield) are what the view searches for."""
    from rungwise.core.designfile import DesignFile
    from rungwise.core.targets import Targets

    wanted = Targets(max_inl_lsb=0.25, max_dnl_lsb=0.75, monotonic=False, inl_line="bestfit",
                     min_yield=0.95)
    pane.load_file_tables(DesignFile([BASE], targets=wanted))
    assert (pane.spin_inl.value(), pane.spin_dnl.value(), pane.spin_target.value()) == (0.25, 0.75, 95.0)
    assert pane.targets() == wanted
    pane.spin_inl.setValue(0.4)  # a field edited after opening wins over the file
    assert pane.targets().max_inl_lsb == 0.4
    assert pane.targets().inl_line == "bestfit"
    pane.load_file_tables(None)
    assert pane.targets() == Targets()
