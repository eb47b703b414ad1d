"""Background work for the window: run a pure, chunked job off the GUI thread with progress,
cancel between chunks and "newest request wins".

A *job* is a callable ``job(cancel) -> Iterator[Progress | result]`` or a plain callable
``job(cancel) -> result``. ``cancel`` is a :class:`threading.Event` the job checks between chunks
(and should pass to core functions that take one). Yield ``Progress(done, total, partial)`` while
working; the last non-progress value yielded (or the value returned) is the result.

:class:`JobRunner` owns one QThreadPool slot per *channel*; submitting a new request on a channel
cancels the previous one, and results of superseded requests are dropped, never delivered.
Tests may call :func:`run_sync` to run the same job on the calling thread.

While any job runs, Python's automatic cyclic garbage collection is switched off: a collection
triggered on a worker thread would destroy unreachable Qt objects (a closed window, cleared plot
items) on that thread and can deadlock with the GUI thread. It is switched back on (on the GUI
thread) when the last job ends, so garbage is collected there.
"""

from __future__ import annotations

import gc
import sys
import threading
import traceback
from collections.abc import Callable, Iterator
from dataclasses import dataclass
from typing import Any

from PySide6.QtCore import QObject, QRunnable, QThreadPool, Signal

from rungwise.core.errors import RungwiseError


@dataclass(frozen=True)
class Progress:
    """Progress report from a job: ``done`` of ``total`` units, optional partial result."""

    done: int
    total: int
    partial: Any = None


class Cancelled(Exception):
    """Raised inside a job when its cancel event is set (optional; returning early also works)."""


def run_sync(job: Callable[[threading.Event], Any], cancel: threading.Event | None = None,
             on_progress: Callable[[Progress], None] | None = None) -> Any:
    """Run ``job`` on this thread and return its result (progress goes to ``on_progress``)."""
    cancel = cancel or threading.Event()
    out = job(cancel)
    if isinstance(out, Iterator):
        result = None
        for item in out:
            if isinstance(item, Progress):
                if on_progress:
                    on_progress(item)
            else:
                result = item
        return result
    return out


_gc_lock = threading.Lock()
_gc_jobs = 0  # jobs submitted and not yet ended, all runners
_gc_paused = False  # whether we switched automatic collection off


def _pause_gc() -> None:
    """A job is about to start (GUI thread): no automatic collection until every job has ended."""
    global _gc_jobs, _gc_paused
    with _gc_lock:
        _gc_jobs += 1
        if not _gc_paused and gc.isenabled():
            gc.disable()
            _gc_paused = True


def _job_ended() -> bool:
    """A job ended (worker thread); True when it was the last one."""
    global _gc_jobs
    with _gc_lock:
        _gc_jobs -= 1
        return _gc_jobs == 0


def _resume_gc() -> None:
    """Switch automatic collection back on when no job runs (GUI thread)."""
    global _gc_paused
    with _gc_lock:
        if _gc_jobs == 0 and _gc_paused:
            gc.enable()
            _gc_paused = False


class _Signals(QObject):
    progress = Signal(str, int, object)   # channel, request id, Progress
    finished = Signal(str, int, object)   # channel, request id, result
    failed = Signal(str, int, str)        # channel, request id, message
    idle = Signal()                       # the last running job of any runner ended


def failure_text(exc: BaseException) -> str:
    """What the window shows for a job that raised ``exc`` — never a traceback.

    Our refusals read as their words; any other exception is an internal fault: its name and
    message, and the traceback goes to the program's error output for a bug report.
    """
    if isinstance(exc, RungwiseError) and str(exc):
        return str(exc)
    print("rungwise: internal error in a background job:\n"
          + "".join(traceback.format_exception(exc)), file=sys.stderr, flush=True)
    what = f"{type(exc).__name__}: {exc}" if str(exc) else type(exc).__name__
    return f"{what} (an internal fault; details were written to the error output)"


class _Task(QRunnable):
    def __init__(self, channel: str, rid: int, job, cancel: threading.Event, signals: _Signals):
        super().__init__()
        self.setAutoDelete(True)
        self.channel, self.rid, self.job, self.cancel, self.signals = channel, rid, job, cancel, signals
        self.done = threading.Event()

    def run(self) -> None:
        try:
            result = run_sync(self.job, self.cancel,
                              lambda p: self.signals.progress.emit(self.channel, self.rid, p))
            if not self.cancel.is_set():
                self.signals.finished.emit(self.channel, self.rid, result)
        except Cancelled:
            pass
        except Exception as exc:  # shown to the user by the window, never a crash
            if not self.cancel.is_set():
                self.signals.failed.emit(self.channel, self.rid, failure_text(exc))
        finally:
            self.done.set()
            if _job_ended():
                self.signals.idle.emit()  # collection resumes on the GUI thread


class JobRunner(QObject):
    """Runs jobs off the GUI thread, one live request per channel.

    Signals
    -------
    progress(channel, Progress), finished(channel, result), failed(channel, message) — only for
    the newest request of each channel; ``busy_changed(channel, busy)``.
    """

    progress = Signal(str, object)
    finished = Signal(str, object)
    failed = Signal(str, str)
    busy_changed = Signal(str, bool)

    def __init__(self, parent: QObject | None = None, max_threads: int = 2) -> None:
        super().__init__(parent)
        self._pool = QThreadPool(self)
        self._pool.setMaxThreadCount(max_threads)
        self._signals = _Signals()
        self._signals.progress.connect(self._on_progress)
        self._signals.finished.connect(self._on_finished)
        self._signals.failed.connect(self._on_failed)
        self._signals.idle.connect(self._on_idle)
        self._latest: dict[str, int] = {}
        self._cancels: dict[str, threading.Event] = {}
        self._tasks: list[_Task] = []
        self._next = 0

    def submit(self, channel: str, job: Callable[[threading.Event], Any]) -> int:
        """Start ``job`` on ``channel``, cancelling the channel's previous request; returns its id."""
        self.cancel(channel, notify=False)
        self._next += 1
        rid = self._next
        cancel = threading.Event()
        self._latest[channel] = rid
        self._cancels[channel] = cancel
        task = _Task(channel, rid, job, cancel, self._signals)
        self._tasks = [t for t in self._tasks if not t.done.is_set()] + [task]
        _pause_gc()
        self._pool.start(task)
        self.busy_changed.emit(channel, True)
        return rid

    def cancel(self, channel: str, notify: bool = True) -> None:
        """Cancel the channel's running request (its result will be dropped)."""
        ev = self._cancels.pop(channel, None)
        if ev is not None:
            ev.set()
            self._latest.pop(channel, None)
            if notify:
                self.busy_changed.emit(channel, False)

    def is_busy(self, channel: str) -> bool:
        """Whether the channel has a live request."""
        return channel in self._latest

    def shutdown(self, timeout_ms: int = 5000) -> bool:
        """Cancel everything and wait for the threads; True when all have stopped."""
        for channel in list(self._cancels):
            self.cancel(channel, notify=False)
        done = self._pool.waitForDone(timeout_ms)
        _resume_gc()
        return done

    def active_count(self) -> int:
        """Number of threads still running a task (0 when idle)."""
        return self._pool.activeThreadCount()

    # --- delivery on the GUI thread, newest request only --------------------------------------
    def _on_idle(self) -> None:
        _resume_gc()

    def _on_progress(self, channel: str, rid: int, p: Progress) -> None:
        if self._latest.get(channel) == rid:
            self.progress.emit(channel, p)

    def _on_finished(self, channel: str, rid: int, result: Any) -> None:
        if self._latest.get(channel) == rid:
            self._latest.pop(channel, None)
            self._cancels.pop(channel, None)
            self.busy_changed.emit(channel, False)
            self.finished.emit(channel, result)

    def _on_failed(self, channel: str, rid: int, message: str) -> None:
        if self._latest.get(channel) == rid:
            self._latest.pop(channel, None)
            self._cancels.pop(channel, None)
            self.busy_changed.emit(channel, False)
            self.failed.emit(channel, message)


def runner_for(owner: QObject) -> JobRunner:
    """A :class:`JobRunner` owned by ``owner`` with the owner's ``_on_progress``,
    ``_on_finished``, ``_on_failed`` and ``_on_busy`` slots connected (the usual view wiring)."""
    runner = JobRunner(owner)
    runner.progress.connect(owner._on_progress)
    runner.finished.connect(owner._on_finished)
    runner.failed.connect(owner._on_failed)
    runner.busy_changed.connect(owner._on_busy)
    return runner
