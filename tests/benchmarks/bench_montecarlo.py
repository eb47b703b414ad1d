"""Speed and memory of the Monte Carlo engine, with baselines measured in the same run.

Run on demand (pytest does not collect this folder)::

    .venv/bin/python tests/benchmarks/bench_montecarlo.py [--spice-trials 3] [--no-spice]

Three measurements:

1. **exact**: 10^5 trials of a 12-bit R-2R ladder (ideal switches, so superposition holds) with the
   exact per-bit engine — target < 2 s. Baseline: the general engine (every code solved) on the same
   design, timed on the first 2000 trials and scaled to 10^5.
2. **general**: 10^3 trials of a 12-bit ladder with unequal on-resistances (40 Ω / 25 Ω), all 4096
   codes per trial. Baseline: ngspice's ``.dc`` sweep (``tests/references/spice.py``) of the same
   sampled boards, one run per trial, timed on ``--spice-trials`` trials and scaled to 10^3 —
   target ≥ 100×. The largest relative difference of ngspice's outputs against the engine on the
   trials it solved is printed (a fast wrong answer is worthless).
3. **memory**: 16 bits × 10^5 trials. The plan (batches, envelope) is printed before starting; the
   exact engine runs all trials under ``tracemalloc``; the general engine (unequal switches) runs
   its first batches under ``tracemalloc`` and is cancelled, its full time scaled from them.
"""

from __future__ import annotations

import argparse
import os
import sys
import threading
import time
import tracemalloc
from pathlib import Path

import numpy as np

sys.path.insert(0, str(Path(__file__).resolve().parents[1]))  # tests/ → ``references``

from references import spice

from rungwise.core import Design, iter_monte_carlo, monte_carlo
from rungwise.core.montecarlo import plan_run, sample_trials
from rungwise.core.solve import solve
from rungwise.core.topologies import build

EXACT_TARGET_S = 2.0
"""Target for 10^5 exact trials of a 12-bit ladder, seconds."""

SPICE_TARGET_RATIO = 100.0
"""Target speed-up of the general engine over ngspice."""


def timed(fn):
    """(wall time in seconds, result) of one call."""
    t0 = time.perf_counter()
    out = fn()
    return time.perf_counter() - t0, out


def cpu_timed(fn):
    """(wall time, CPU time of this process, result) of one call, seconds."""
    c0 = time.process_time()
    wall, out = timed(fn)
    return wall, time.process_time() - c0, out


def bench_exact() -> None:
    d = Design(topology="r2r-voltage", bits=12, mismatch={"tolerance": 0.001})
    monte_carlo(d, 1000, seed=1)  # warm-up (imports, plan cache)
    t_exact, cpu, r = min((cpu_timed(lambda: monte_carlo(d, 100_000, seed=1)) for _ in range(3)),
                          key=lambda x: x[0])
    t_sub, g = timed(lambda: monte_carlo(d, 2000, seed=1, engine="general"))
    t_general = t_sub * 100_000 / 2000
    diff = np.max(np.abs(r.max_abs_dnl[:2000] - g.max_abs_dnl))
    print(f"exact   12-bit R-2R, 1e5 trials: {t_exact:.2f} s wall, {cpu:.2f} s CPU (target < "
          f"{EXACT_TARGET_S:g} s: {'met' if t_exact < EXACT_TARGET_S else 'MISSED'} by wall time); "
          f"engine {r.engine}")
    print(f"        general engine, same design: {t_sub:.2f} s for 2000 trials → {t_general:.1f} s "
          f"for 1e5 (scaled); ratio {t_general / t_exact:.0f}×; max |ΔDNL| {diff:.1e} LSB")


def bench_general(spice_trials: int, use_spice: bool) -> None:
    d = Design(topology="r2r-voltage", bits=12, ron_high=40.0, ron_low=25.0,
               mismatch={"tolerance": 0.001})
    monte_carlo(d, 10, seed=2)
    t_engine, r = timed(lambda: monte_carlo(d, 1000, seed=2))
    print(f"general 12-bit R-2R, 40/25 Ω switches, 1e3 trials × 4096 codes: {t_engine:.2f} s "
          f"(engine {r.engine})")
    if not use_spice or spice.ngspice_path() is None:
        print("        ngspice baseline skipped (--no-spice or ngspice missing)")
        return
    net = build(d)
    ohms = sample_trials(d, 2, 0, spice_trials)
    t0 = time.perf_counter()
    refs = [spice.simulate(net, ohms={k: float(v[t, 0]) for k, v in ohms.items()}, method="sweep")
            for t in range(spice_trials)]
    t_spice = (time.perf_counter() - t0) * 1000 / spice_trials
    ours = solve(net, ohms=ohms).vout
    rel = max(float(np.max(np.abs(ours[t] - ref.vout) / np.max(np.abs(ref.vout))))
              for t, ref in enumerate(refs))
    ratio = t_spice / t_engine
    print(f"        ngspice .dc sweep: {spice_trials} trials timed, scaled to 1e3: {t_spice:.1f} s; "
          f"ratio {ratio:.0f}× (target ≥ {SPICE_TARGET_RATIO:g}×: "
          f"{'met' if ratio >= SPICE_TARGET_RATIO else 'MISSED'}); max rel. difference {rel:.1e}")


def bench_memory() -> None:
    exact = Design(bits=16, mismatch={"tolerance": 0.0001})
    general = exact.replace(ron_high=40.0, ron_low=25.0)
    for label, d in (("exact", exact), ("general", general)):
        plan = plan_run(d, 100_000)
        print(f"memory  16 bits × 1e5 trials, {label}: plan — {plan.describe()}")
    tracemalloc.start()
    t, r = timed(lambda: monte_carlo(exact, 100_000, seed=3))
    peak = tracemalloc.get_traced_memory()[1]
    tracemalloc.stop()
    print(f"        {r.engine}: all 1e5 trials in {t:.2f} s, peak traced memory {peak / 2**20:.0f} MiB")
    cancel = threading.Event()
    tracemalloc.start()
    t0 = time.perf_counter()
    done = 0
    for partial in iter_monte_carlo(general, 100_000, seed=3, cancel=cancel, reports=2000):
        done = partial.done
        if done >= 800:
            cancel.set()
    t = time.perf_counter() - t0
    peak = tracemalloc.get_traced_memory()[1]
    tracemalloc.stop()
    print(f"        general: first {done} trials in {t:.2f} s (→ {t * 100_000 / max(done, 1) / 60:.0f} min "
          f"for 1e5, scaled), peak traced memory {peak / 2**20:.0f} MiB")


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.split("\n\n")[0])
    parser.add_argument("--spice-trials", type=int, default=3)
    parser.add_argument("--no-spice", action="store_true")
    args = parser.parse_args()
    load = os.getloadavg()[0]
    print(f"machine: {os.cpu_count()} CPUs, load average {load:.1f} (timings are wall time; a load "
          "above the CPU count slows every figure)")
    bench_exact()
    bench_general(args.spice_trials, not args.no_spice)
    bench_memory()


if __name__ == "__main__":
    main()
