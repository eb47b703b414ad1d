"""Candidates added and removed reach the curves and the table; stale results are dropped."""

from __future__ import annotations

import threading

from rungwise.app.jobs.live_results import CHANNEL, LiveResults, ResultSet, nominal_job
from rungwise.app.jobs.workers import run_sync
from rungwise.app.window.comparison_state import MAX_CANDIDATES
from rungwise.core.demo import demo_candidates


def _curve_count(window) -> int:
    counts = {len(c) for c in window.plots.curves.values()}
    assert len(counts) == 1  # every plot draws every candidate
    return counts.pop()


def _header(window, column: int) -> str:
    """A figures-table column header as one line (long names wrap in the header)."""
    return " ".join(window.table.horizontalHeaderItem(column).text().split())


def test_add_and_remove_update_curves_and_table(window, qtbot):
    state = window.model.state
    n = len(demo_candidates())
    assert _curve_count(window) == n
    assert window.table.columnCount() == n
    with qtbot.waitSignal(window.plots.drawn, timeout=60000):
        window.candidates_pane.button_add.click()
    assert len(state.candidates) == n + 1
    assert state.selected == n
    assert _curve_count(window) == n + 1
    assert window.table.columnCount() == n + 1
    added = state.candidates[n]
    assert _header(window, n).endswith(added.name)
    # the new curve is drawn in the new candidate's colour with its data
    curve = window.plots.curves["output"][n]
    assert curve.opts["pen"].color().name() == added.colour
    x, _y = curve.getOriginalDataset()
    assert len(x) == 2 ** added.design.bits
    with qtbot.waitSignal(window.plots.drawn, timeout=60000):
        window.candidates_pane.button_remove.click()
    assert _curve_count(window) == n
    assert window.table.columnCount() == n
    assert [_header(window, i)[2:] for i in range(n)] == [
        c.name for c in state.candidates]
    # the analysis views draw each candidate in its comparison colour too
    colours = [c.colour for c in state.candidates]
    assert window.views["explorer_pane"]._colours == colours
    assert window.views["stats_pane"]._colours == colours


def test_at_most_four_candidates(window, qtbot):
    state = window.model.state
    while state.can_add():
        window.candidates_pane.button_duplicate.click()
    assert len(state.candidates) == MAX_CANDIDATES
    assert not window.candidates_pane.button_add.isEnabled()
    assert len({c.name for c in state.candidates}) == MAX_CANDIDATES
    assert len({c.colour for c in state.candidates}) == MAX_CANDIDATES
    qtbot.waitUntil(lambda: window.table.columnCount() == MAX_CANDIDATES, timeout=60000)


def test_superseded_results_are_dropped(qtbot):
    live = LiveResults()
    got: list[ResultSet] = []
    live.results_changed.connect(got.append)
    old = [d.replace(bits=14) for d in demo_candidates()]
    new = [d.replace(bits=5) for d in demo_candidates()]
    live.request(old, now=True)
    live.request(new, now=True)
    qtbot.waitUntil(lambda: not live.runner.is_busy(CHANNEL), timeout=60000)
    assert live.shutdown()
    assert len(got) == 1
    assert [r.design.bits for r in got[0].results] == [5] * len(new)


def test_nominal_job_reuses_cache_and_stops_when_cancelled():
    designs = demo_candidates()
    first = run_sync(nominal_job(designs, {}))
    assert first.computed == len(designs)
    cache = dict(zip(first.keys, first.results, strict=True))
    again = run_sync(nominal_job([designs[0], designs[1].replace(bits=6)], cache))  # one changed
    assert again.computed == 1
    assert again.results[0] is first.results[0]
    cancel = threading.Event()
    cancel.set()
    assert run_sync(nominal_job(designs, {}), cancel) is None


def test_error_curve_is_output_minus_ideal_line():
    res = run_sync(nominal_job(demo_candidates()[:1], {})).results[0]
    ev = res.evaluation
    k = 200
    assert res.error_v[k] == ev.vout[k] - ev.summary["ideal_lsb"] * k
