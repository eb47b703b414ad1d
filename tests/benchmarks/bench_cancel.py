"""Cancel latency of the statistics job: time from ``JobRunner.cancel`` to the worker thread's end.

Run on demand (pytest does not collect this folder)::

    .venv/bin/python tests/benchmarks/bench_cancel.py [--repeats 8] [--only 20]

For each design a large statistics run is started and cancelled at a seeded random moment (0.2 …
1.2 s in, so cancels land anywhere inside a batch), and the time until the task's ``done`` event
is set is measured, with the process CPU time over the same interval and the load average.
Target: every cancel returns within 200 ms. Baseline, measured in the same run: the batch sizing
before work-based pieces (trials × codes ≤ 2^18 per batch, a trial never split), by wrapping
``montecarlo.plan_run``.
"""

from __future__ import annotations

import argparse
import dataclasses
import os
import random
import statistics
import time

os.environ.setdefault("QT_QPA_PLATFORM", "offscreen")

from PySide6.QtCore import QCoreApplication
from PySide6.QtWidgets import QApplication

from rungwise.app.jobs.workers import JobRunner
from rungwise.app.views.stats_job import StatsRequest, statistics_job
from rungwise.core import Design, montecarlo

TARGET_MS = 200.0
"""Longest acceptable time from cancel to the thread's end, ms."""

UNEQUAL = {"ron_high": 40.0, "ron_low": 25.0}
"""Unequal switches: the general (non-superposition) engine."""

DESIGNS = {
    "r2r 12 bits, exact engine": Design(topology="r2r-voltage", bits=12),
    "r2r 12 bits, general engine": Design(topology="r2r-voltage", bits=12, **UNEQUAL),
    "r2r 24 bits, exact engine": Design(topology="r2r-voltage", bits=24),
    "segmented 16 bits": Design(topology="segmented", bits=16, thermometer_bits=4),
    "r2r 20 bits, general engine": Design(topology="r2r-voltage", bits=20, **UNEQUAL),
    "binary-weighted 20 bits, general": Design(topology="binary-weighted", bits=20, **UNEQUAL),
    "segmented 20 bits, general": Design(topology="segmented", bits=20, thermometer_bits=4,
                                         **UNEQUAL),
    "string 12 bits, general": Design(topology="string", bits=12, ron_high=40.0),
    "string 16 bits, general": Design(topology="string", bits=16, ron_high=40.0),
    "segmented 16 bits all thermometer, general": Design(topology="segmented", bits=16,
                                                         thermometer_bits=16, **UNEQUAL),
    "binary 18 bits unit-array, exact": Design(topology="binary-weighted", bits=18,
                                               build={"binary": "unit-array"}),
}


def measure(design: Design, trials: int, delay: float) -> tuple[float, float]:
    """(cancel latency wall, process CPU over it), seconds, cancelling ``delay`` s after start."""
    runner = JobRunner()
    runner.submit("statistics", statistics_job(StatsRequest((design,), trials=trials, seed=5)))
    start = time.perf_counter()
    while time.perf_counter() - start < delay:
        QCoreApplication.processEvents()
        time.sleep(0.002)
    task = runner._tasks[-1]
    t0, c0 = time.perf_counter(), time.process_time()
    runner.cancel("statistics")
    task.done.wait(60)
    latency, cpu = time.perf_counter() - t0, time.process_time() - c0
    runner.shutdown()
    return latency, cpu


def run_all(designs: dict[str, Design], repeats: int, trials: int, label: str) -> float:
    """Measure every design; print one line each; return the worst latency, ms."""
    rng = random.Random(11)
    worst = 0.0
    for name, design in designs.items():
        runs = [measure(design, trials, rng.uniform(0.2, 1.2)) for _ in range(repeats)]
        lat = [r[0] * 1e3 for r in runs]
        cpu = [r[1] * 1e3 for r in runs]
        worst = max(worst, max(lat))
        print(f"{label:8s} {name:44s} cancel median {statistics.median(lat):7.1f} ms, max "
              f"{max(lat):7.1f} ms (CPU median {statistics.median(cpu):6.1f} ms); "
              f"max/target {max(lat) / TARGET_MS:.2f}; load {os.getloadavg()[0]:.1f}", flush=True)
    return worst


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--repeats", type=int, default=8)
    parser.add_argument("--trials", type=int, default=1_000_000)
    parser.add_argument("--only", default="", help="only designs whose name contains this")
    parser.add_argument("--no-baseline", action="store_true", help="skip the old batch sizing")
    args = parser.parse_args()
    QApplication.instance() or QApplication([])
    designs = {k: v for k, v in DESIGNS.items() if args.only in k}
    worst = run_all(designs, args.repeats, args.trials, "now")
    if not args.no_baseline:
        sized = montecarlo.plan_run

        def old_plan(*a, **k):  # whole trials, at most 2^18 (trial, code) pairs per batch
            plan = sized(*a, **k)
            if plan.engine != "general":
                return plan
            batch = min(plan.trials, max(1, montecarlo.GENERAL_BATCH_ELEMENTS // plan.n_codes))
            return dataclasses.replace(plan, batch_trials=batch, piece_codes=plan.n_codes)

        montecarlo.plan_run = old_plan
        base = run_all(designs, args.repeats, args.trials, "baseline")
        montecarlo.plan_run = sized
        print(f"worst cancel: now {worst:.1f} ms, baseline {base:.1f} ms "
              f"(ratio {worst / base:.2f})")
    verdict = "met" if worst <= TARGET_MS else "MISSED"
    print(f"worst cancel {worst:.1f} ms — target {TARGET_MS:.0f} ms: {verdict}")


if __name__ == "__main__":
    main()
