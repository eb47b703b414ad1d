"""Background jobs: a cancelled statistics run stops promptly and delivers nothing more; a job that
raises shows a message and leaves the window usable."""

from __future__ import annotations

import gc
import threading
import time

from PySide6.QtCore import QCoreApplication

from rungwise.app.jobs import live_results
from rungwise.app.jobs.workers import JobRunner
from rungwise.app.views.stats_job import StatsRequest, statistics_job
from rungwise.core import Design
from rungwise.core.errors import DesignError

CANCEL_WAIT_S = 2.0
"""Upper bound here; the 200 ms goal is measured by tests/benchmarks/bench_cancel.py."""


def _cancel_after_first_progress(qtbot, design: Design, trials: int) -> tuple[float, list]:
    runner = JobRunner()
    delivered: list = []
    with qtbot.waitSignal(runner.progress, timeout=60000):
        runner.submit("statistics", statistics_job(StatsRequest((design,), trials=trials, seed=3)))
    task = runner._tasks[-1]
    for signal in (runner.progress, runner.finished, runner.failed):
        signal.connect(lambda *args: delivered.append(args))
    start = time.perf_counter()
    runner.cancel("statistics")
    stopped = task.done.wait(CANCEL_WAIT_S)
    elapsed = time.perf_counter() - start
    assert stopped, f"the job was still running {CANCEL_WAIT_S} s after cancel"
    assert runner.shutdown(5000)
    QCoreApplication.processEvents()  # anything the task queued before stopping is handled now
    return elapsed, delivered


def test_cancelled_statistics_run_stops_and_delivers_nothing_more(qtbot):
    # exact engine (ideal switches) and general engine (switch resistance): both check cancel
    for design in (Design(topology="r2r-voltage", bits=12),
                   Design(topology="r2r-voltage", bits=10, ron_high=40.0, ron_low=25.0)):
        elapsed, delivered = _cancel_after_first_progress(qtbot, design, trials=200_000)
        assert delivered == []
        assert elapsed < CANCEL_WAIT_S


def test_a_job_that_raises_is_shown_and_the_window_stays_usable(window, qtbot, monkeypatch):
    def broken(design):
        raise RuntimeError("simulated fault in the engine")

    monkeypatch.setattr(live_results, "evaluate", broken)
    shown: list[str] = []
    window.problem_shown.connect(shown.append)
    state = window.model.state
    with qtbot.waitSignal(window.problem_shown, timeout=60000):
        state.set_design(state.selected, state.current.design.replace(bits=7), "bits")
    assert "simulated fault in the engine" in shown[0]
    assert "simulated fault" in window.status_text.text()
    assert not window.live.is_busy()
    monkeypatch.undo()
    with qtbot.waitSignal(window.live.results_changed, timeout=60000):
        state.set_design(state.selected, state.current.design.replace(bits=6), "bits")
    qtbot.waitUntil(lambda: not window.live.is_busy(), timeout=60000)
    results = window.live.latest.results
    assert [r.design.bits for r in results if r.design == state.current.design] == [6]
    assert all(r.evaluation is not None for r in results)


def _cycles(cancel) -> int:
    """A job that makes much cyclic garbage (lists holding themselves), as numpy-free code does."""
    made = 0
    for _ in range(200_000):
        if cancel.is_set():
            break
        cell: list = []
        cell.append(cell)
        made += 1
    return made


def test_garbage_is_never_collected_on_a_worker_thread(qtbot):
    # found when the full suite hung: the collector ran on a worker thread, destroyed a closed
    # window's Qt objects there and deadlocked with the GUI thread
    starts: list[bool] = []

    def note(phase: str, _info: dict) -> None:
        if phase == "start":
            starts.append(threading.current_thread() is threading.main_thread())

    runner = JobRunner()
    gc.callbacks.append(note)
    try:
        with qtbot.waitSignal(runner.finished, timeout=60000) as blocker:
            runner.submit("garbage", _cycles)
            runner.submit("more garbage", _cycles)
        assert blocker.args[1] == 200_000
        qtbot.waitUntil(lambda: runner.active_count() == 0 and gc.isenabled(), timeout=60000)
    finally:
        gc.callbacks.remove(note)
        runner.shutdown()
    assert all(starts), f"{starts.count(False)} collections started on a worker thread"
    assert gc.isenabled()
    assert gc.collect() >= 0  # collection works again, here on the GUI thread


def test_shutdown_switches_collection_back_on(qtbot):
    runner = JobRunner()
    runner.submit("garbage", _cycles)
    assert not gc.isenabled()  # off while a job runs
    assert runner.shutdown(10000)
    assert gc.isenabled()


def test_a_refusal_in_a_job_reads_as_words(qtbot):
    # a design the engine refuses inside a job: the message is the refusal, not a class name
    def refused(_cancel):
        raise DesignError("series (bit0)", "4.9e+08 Ω lies outside the E96 values offered")

    def broken(_cancel):
        raise ValueError("internal")

    runner = JobRunner()
    with qtbot.waitSignal(runner.failed, timeout=60000) as blocker:
        runner.submit("a", refused)
    assert blocker.args == ["a", "series (bit0): 4.9e+08 Ω lies outside the E96 values offered"]
    with qtbot.waitSignal(runner.failed, timeout=60000) as blocker:
        runner.submit("b", broken)
    # an internal failure says what it was
    assert blocker.args == ["b", "ValueError: internal (an internal fault; details were written to "
                                 "the error output)"]
    assert runner.shutdown()


def test_an_internal_fault_without_words_shows_no_traceback(qtbot, capsys):
    def bare(_cancel):
        raise AssertionError

    runner = JobRunner()
    with qtbot.waitSignal(runner.failed, timeout=60000) as blocker:
        runner.submit("c", bare)
    shown = blocker.args[1]
    assert shown.startswith("AssertionError (an internal fault")
    assert "Traceback" not in shown
    assert "\n" not in shown
    err = capsys.readouterr().err
    assert "Traceback (most recent call last)" in err  # kept for a bug report
    assert "in bare" in err
    assert runner.shutdown()
