"""Nominal results of the compared candidates, computed off the GUI thread, newest request wins.

:class:`LiveResults` throttles bursts of requests (a value being dragged) to one job per
``THROTTLE_MS``, runs it on a :class:`~rungwise.app.jobs.workers.JobRunner` channel and delivers only the
newest request's results. Evaluations are cached by design, so editing one candidate recomputes
only that one.
"""

from __future__ import annotations

import threading
import time
from collections import OrderedDict
from collections.abc import Iterator, Sequence
from dataclasses import dataclass, field

import numpy as np
from PySide6.QtCore import QObject, QTimer, Signal

from rungwise.core.design import Design
from rungwise.core.errors import RungwiseError
from rungwise.core.evaluate import Evaluation, evaluate

from .workers import JobRunner, Progress

CHANNEL = "nominal"
"""JobRunner channel of the nominal comparison."""

THROTTLE_MS = 40
"""Shortest gap between two jobs while a value moves, ms."""

CACHE_SIZE = 16
"""Evaluations kept for reuse."""


def design_key(design: Design) -> str:
    """A hashable identity of a design's values (its ``parts`` mapping is not hashable)."""
    return repr(sorted(design.to_dict().items()))


@dataclass
class CandidateResult:
    """One candidate's nominal results, or why it could not be solved.

    ``error_v`` : ndarray, shape (n_codes,), volts — output minus the ideal line ``ideal_lsb·code``.
    """

    design: Design
    evaluation: Evaluation | None = None
    error_v: np.ndarray | None = None
    message: str = ""


@dataclass
class ResultSet:
    """Results of one request, in candidate order, with the time the job took (s)."""

    results: list[CandidateResult]
    seconds: float = 0.0
    computed: int = 0
    keys: list[str] = field(default_factory=list)


def result_for(design: Design) -> CandidateResult:
    """Evaluate one design; a design the engine refuses becomes a message, not an exception."""
    try:
        ev = evaluate(design)
    except (RungwiseError, MemoryError) as exc:
        return CandidateResult(design, message=str(exc) or type(exc).__name__)
    ideal = ev.summary["ideal_lsb"] * ev.codes.astype(float)
    return CandidateResult(design, ev, ev.vout - ideal)


def nominal_job(designs: Sequence[Design], cached: dict[str, CandidateResult]):
    """A JobRunner job evaluating ``designs`` (reusing ``cached``), one candidate per chunk."""

    def job(cancel: threading.Event) -> Iterator[Progress | ResultSet]:
        start = time.perf_counter()
        out: list[CandidateResult] = []
        keys = [design_key(d) for d in designs]
        computed = 0
        for i, (d, key) in enumerate(zip(designs, keys, strict=True)):
            if cancel.is_set():
                return
            hit = cached.get(key)
            if hit is None:
                hit = result_for(d)
                computed += 1
            out.append(hit)
            yield Progress(i + 1, len(designs))
        yield ResultSet(out, time.perf_counter() - start, computed, keys)

    return job


class LiveResults(QObject):
    """Requests nominal results and hands the newest set to the window.

    Signals
    -------
    results_changed(ResultSet), progress_changed(done, total), busy_changed(bool),
    failed(message).
    """

    results_changed = Signal(object)
    progress_changed = Signal(int, int)
    busy_changed = Signal(bool)
    failed = Signal(str)

    def __init__(self, parent: QObject | None = None) -> None:
        super().__init__(parent)
        self.runner = JobRunner(self)
        self.runner.finished.connect(self._on_finished)
        self.runner.progress.connect(lambda _c, p: self.progress_changed.emit(p.done, p.total))
        self.runner.failed.connect(lambda _c, msg: self.failed.emit(msg))
        self.runner.busy_changed.connect(lambda _c, busy: self.busy_changed.emit(busy))
        self._cache: OrderedDict[str, CandidateResult] = OrderedDict()
        self._pending: list[Design] | None = None
        self._timer = QTimer(self, singleShot=True, interval=THROTTLE_MS)
        self._timer.timeout.connect(self._submit)
        self.latest: ResultSet | None = None

    def request(self, designs: Sequence[Design], now: bool = False) -> None:
        """Ask for results of ``designs``; bursts are merged, only the newest is computed."""
        self._pending = list(designs)
        if now:
            self._timer.stop()
            self._submit()
        elif not self._timer.isActive():
            self._timer.start()

    def _submit(self) -> None:
        if self._pending is None:
            return
        designs, self._pending = self._pending, None
        self.runner.submit(CHANNEL, nominal_job(designs, dict(self._cache)))

    def cancel(self) -> None:
        """Stop the running request (the curves keep the last results)."""
        self._timer.stop()
        self._pending = None
        self.runner.cancel(CHANNEL)

    def evaluation_of(self, design: Design) -> Evaluation | None:
        """The evaluation these live results already hold for ``design`` (same values), or
        ``None`` — exports and the report reuse it instead of solving again."""
        hit = self._cache.get(design_key(design))
        return None if hit is None else hit.evaluation

    def is_busy(self) -> bool:
        """Whether a request is waiting or running."""
        return self._pending is not None or self.runner.is_busy(CHANNEL)

    def shutdown(self) -> bool:
        """Cancel everything and wait for the worker threads."""
        self._timer.stop()
        self._pending = None
        return self.runner.shutdown()

    def _on_finished(self, _channel: str, result: ResultSet) -> None:
        for key, r in zip(result.keys, result.results, strict=True):
            self._cache[key] = r
            self._cache.move_to_end(key)
        while len(self._cache) > CACHE_SIZE:
            self._cache.popitem(last=False)
        self.latest = result
        self.results_changed.emit(result)
