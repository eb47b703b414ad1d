"""Cancel latency of the statistics job: time from ``JobRunner.cancel`` to the worker thread's end.

Run on demand (pytest does not collect this folder)::

    .venv/bin/python tests/benchmarks/bench_cancel.py [--repeats 10]

For each design (exact engine, general engine, a 16-bit segmented network) a large statistics run
is started, cancelled right after its first progress report, and the time until the task's ``done``
event is set is measured. Target: every cancel returns within 200 ms. The baseline printed beside
it is the time one progress chunk takes on this machine (the longest a cancel can wait in theory).
"""

from __future__ import annotations

import argparse
import os
import statistics
import time

os.environ.setdefault("QT_QPA_PLATFORM", "offscreen")

from PySide6.QtCore import QCoreApplication
from PySide6.QtWidgets import QApplication

from rungwise.app.stats_job import StatsRequest, statistics_job
from rungwise.app.workers import JobRunner
from rungwise.core import Design

TARGET_MS = 200.0
"""Longest acceptable time from cancel to the thread's end, ms."""

DESIGNS = {
    "r2r 12 bits, exact engine": Design(topology="r2r-voltage", bits=12),
    "r2r 12 bits, general engine": Design(topology="r2r-voltage", bits=12, ron_high=40.0, ron_low=25.0),
    "r2r 24 bits, exact engine": Design(topology="r2r-voltage", bits=24),
    "segmented 16 bits": Design(topology="segmented", bits=16, thermometer_bits=4),
}


def measure(design: Design, trials: int) -> tuple[float, float]:
    """(cancel latency, time to the first progress report), seconds."""
    runner = JobRunner()
    seen: list[float] = []
    runner.progress.connect(lambda *_: seen.append(time.perf_counter()))
    start = time.perf_counter()
    runner.submit("statistics", statistics_job(StatsRequest((design,), trials=trials, seed=5)))
    while not seen:
        QCoreApplication.processEvents()
        time.sleep(0.001)
    first = seen[0] - start
    task = runner._tasks[-1]
    t0 = time.perf_counter()
    runner.cancel("statistics")
    task.done.wait(30)
    latency = time.perf_counter() - t0
    runner.shutdown()
    return latency, first


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--repeats", type=int, default=10)
    parser.add_argument("--trials", type=int, default=1_000_000)
    args = parser.parse_args()
    QApplication.instance() or QApplication([])
    worst = 0.0
    for label, design in DESIGNS.items():
        runs = [measure(design, args.trials) for _ in range(args.repeats)]
        lat = [r[0] * 1e3 for r in runs]
        chunk = statistics.median(r[1] for r in runs) * 1e3
        worst = max(worst, max(lat))
        print(f"{label:32s} cancel median {statistics.median(lat):7.1f} ms, max {max(lat):7.1f} ms; "
              f"baseline first chunk {chunk:7.1f} ms; ratio max/target {max(lat) / TARGET_MS:.2f}")
    verdict = "met" if worst <= TARGET_MS else "MISSED"
    print(f"worst cancel {worst:.1f} ms — target {TARGET_MS:.0f} ms: {verdict}")


if __name__ == "__main__":
    main()
