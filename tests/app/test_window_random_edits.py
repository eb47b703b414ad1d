"""The soak run: hundreds of random user actions on the real window — entries valid and invalid,
candidates added, duplicated, removed and renamed, undo and redo, statistics runs and trade-off
sweeps started and cancelled — end with no exception, no Qt warning, no worker left running, and
figures that match the core's evaluation of the designs shown.

CI runs a short run; ``RUNGWISE_SOAK_ACTIONS=2000`` (or more) runs the long one on demand and
``RUNGWISE_SOAK_SEED`` replays a reported failure; ``RUNGWISE_SOAK_LOG=file`` writes the whole
action log there.
"""

from __future__ import annotations

import os
import threading
import time
from pathlib import Path

import numpy as np
from PySide6.QtCore import QThreadPool
from PySide6.QtGui import QAction
from window_soak import Guard, Soak

from rungwise.app.jobs.workers import JobRunner
from rungwise.app.window.compare_table import BEST_MARK, cell_text
from rungwise.app.window.main_window import STOPPED_TEXT
from rungwise.core import evaluate
from rungwise.core.design import Design
from rungwise.core.errors import RungwiseError

ACTIONS = int(os.environ.get("RUNGWISE_SOAK_ACTIONS", "220"))
"""Random actions per run; set RUNGWISE_SOAK_ACTIONS=2000 (or more) for the long run on demand."""

SEED = int(os.environ.get("RUNGWISE_SOAK_SEED", "20261201"))
"""Seed of the run (a failure prints it)."""

CHECKED_FIGURES = ("lsb", "max_abs_inl_endpoint", "max_abs_dnl", "rout_max", "n_resistors")
"""Table rows compared with a fresh evaluation at the end."""


def _settled(window) -> bool:
    latest = window.live.latest
    return (not window.live.is_busy() and not window.plots.is_drawing() and latest is not None
            and [r.design for r in latest.results] == window.model.state.designs)


def test_random_user_actions_leave_a_correct_window(window, qtbot, tmp_path):
    threads_before = {t.ident for t in threading.enumerate()}
    soak = Soak(window, qtbot, SEED, tmp_path)
    start_wall, start_cpu = time.perf_counter(), time.process_time()
    with Guard() as guard:
        try:
            soak.run(ACTIONS, guard)
        finally:
            if os.environ.get("RUNGWISE_SOAK_LOG"):  # the whole action log, for a long run
                Path(os.environ["RUNGWISE_SOAK_LOG"]).write_text("\n".join(soak.log) + "\n")
        if window.status_text.text() == STOPPED_TEXT:  # the last Stop left earlier values
            window.findChild(QAction, "action_compute").trigger()
        qtbot.waitUntil(lambda: _settled(window), timeout=30000)
        assert not guard.problems, soak.report("\n".join(guard.problems))
    wall, cpu = time.perf_counter() - start_wall, time.process_time() - start_cpu
    print(f"soak: {ACTIONS} actions, seed {SEED}, {wall:.1f} s wall, {cpu:.1f} s CPU; "
          f"messages {dict(soak.messages)}")
    for name, count in sorted(soak.counts.items()):
        print(f"  {name:<11} {count:5d} × {1e3 * soak.seconds[name] / count:7.1f} ms")
    assert set(soak.counts) == {a[0] for a in soak.actions}  # every kind happened
    # the window's figures and curves are the core's evaluation of the designs it shows
    state = window.model.state
    for col, design in enumerate(state.designs):
        assert Design.from_dict(design.to_dict()) == design
        try:
            ev = evaluate(design)
        except RungwiseError as exc:  # refused by the core (a series choice added from Parts)
            refusal = str(exc)
        else:
            refusal = ""
        if refusal:  # shown in words in its column and the status line
            assert window.table.item(0, col).text() == "not solved"
            assert window.table.item(0, col).toolTip() == refusal
            assert window.status_text.text().startswith("Not solved — ")
            continue
        for key in CHECKED_FIGURES:
            row = window.table.keys.index(key)
            shown = window.table.item(row, col).text().removesuffix(BEST_MARK).strip()
            assert shown == cell_text(key, ev.summary[key]), (design.label, key)
        x, y = window.plots.curves["output"][col].getOriginalDataset()  # drawn codes only
        np.testing.assert_allclose(y, ev.vout[x.astype(int)], rtol=1e-12, atol=1e-15)
    assert window.table.columnCount() == len(state.candidates)
    # closing while a statistics run and a sweep are busy stops every worker: no job thread and
    # no stray Python thread remains
    stats, explorer = window.views["stats_pane"], window.views["explorer_pane"]
    stats.spin_trials.setValue(200_000)
    stats.edit_seed.setText("1")  # the run may have left a refused seed
    stats.button_run.click()
    explorer.spin_from.setValue(2)
    explorer.spin_to.setValue(16)
    explorer.button_run.click()
    assert stats.runner.is_busy("statistics")
    assert explorer.runner.is_busy("explorer")
    runners = window.findChildren(JobRunner)
    assert len(runners) >= 5
    window.close()
    assert all(r.active_count() == 0 for r in runners)
    assert QThreadPool.globalInstance().activeThreadCount() == 0
    assert {t.ident for t in threading.enumerate()} <= threads_before
