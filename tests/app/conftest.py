"""Fixtures for window tests: a private configuration folder, no worker left running, a window."""

from __future__ import annotations

import weakref

import pytest

from rungwise.app.jobs import workers


@pytest.fixture(autouse=True)
def private_config(tmp_path, monkeypatch):
    """Point the window's remembered settings at a temporary folder."""
    folder = tmp_path / "config"
    monkeypatch.setenv("RUNGWISE_CONFIG_DIR", str(folder))
    return folder


@pytest.fixture(autouse=True)
def no_worker_left(monkeypatch):
    """Fail a test that leaves a JobRunner thread running."""
    runners: list[weakref.ref] = []
    original = workers.JobRunner.__init__

    def tracking_init(self, *args, **kwargs):
        original(self, *args, **kwargs)
        runners.append(weakref.ref(self))

    monkeypatch.setattr(workers.JobRunner, "__init__", tracking_init)
    yield runners
    left = []
    for ref in runners:
        runner = ref()
        try:
            busy = runner is not None and runner.active_count() > 0
        except RuntimeError:  # the Qt object is already gone: nothing can run
            busy = False
        if busy:
            runner.shutdown()
            left.append(runner)
    assert not left, f"{len(left)} JobRunner(s) still had a worker running at the end of the test"


@pytest.fixture
def window(qtbot):
    """The real window on the demo comparison, its first results drawn; shut down afterwards."""
    from rungwise.app.window.main_window import MainWindow

    win = MainWindow(remember=False)
    win.ask_before_closing = False
    qtbot.addWidget(win)
    win.resize(1366, 768)
    win.show()
    qtbot.waitUntil(lambda: win.live.latest is not None and not win.live.is_busy()
                    and not win.plots.is_drawing(), timeout=60000)
    yield win
    win.close()
    assert win.live.runner.active_count() == 0
