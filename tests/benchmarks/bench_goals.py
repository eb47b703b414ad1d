"""The speed goals of the engine, each as a ratio against ngspice and against the plain per-code
dense path, all measured in the same run.

Run on demand (pytest does not collect this folder)::

    .venv/bin/python tests/benchmarks/bench_goals.py [--repeat 3] [--only evaluate,mc12,…]

Rows (``--only`` picks some by name):

* ``evaluate`` — ``evaluate()`` of a 16-bit R-2R ladder, switches 12 Ω high / 8 Ω low (general
  path), against one ngspice ``.dc`` sweep of the same network over every code. Goal ≥ 100×.
* ``mc12`` — ``monte_carlo`` of that ladder at 12 bits, 1000 trials (0.1 % parts): ngspice's cost
  is its sweep of sampled boards, timed per trial and multiplied by the trials. Goal ≥ 100×.
* ``mc16`` — the same at 16 bits, 100 trials. Goal ≥ 100×.
* ``topology`` — 16-bit ``evaluate()`` of every topology and output (12/8 Ω switches): each ≤ 1/100
  of ngspice on the same network (ngspice timed on a subset of codes and scaled, as printed).
* ``sweep`` — the demo's sweep over N = 2 … 16 (nominal, cache cleared) and the README's segmented
  sweep with yields, against one ngspice sweep of the 16-bit demo network. Goal: faster than it.
* ``report`` — the report's figures with statistics of the demo at 16 bits (1000 boards each),
  against ngspice's cost of the same boards. Goal: the Monte Carlo ratio above.
* ``stats`` — the Statistics view's job: three 12-bit candidates, 2,000 boards each (stops early
  once each yield is decided). Goal: a few seconds.

The dense baseline (``bench_engine.DenseBaseline``: the full nodal matrix per code and
``numpy.linalg.solve``) is timed on the first codes and scaled, as printed; Monte Carlo multiplies
its per-code cost by codes × trials. The largest relative difference of each baseline against the
engine is printed beside it (a fast wrong answer is worthless).
"""

from __future__ import annotations

import argparse
import os
import sys
import time
from pathlib import Path

import numpy as np

sys.path.insert(0, str(Path(__file__).resolve().parents[1]))  # tests/ → ``references``
sys.path.insert(0, str(Path(__file__).resolve().parent))  # ``bench_engine``

from bench_engine import DenseBaseline, best_of, max_rel_diff
from references import spice

from rungwise.core import OUTPUTS_BY_TOPOLOGY, Design, evaluate, monte_carlo
from rungwise.core import sweep as sw
from rungwise.core.demo import DEMO_BASE, demo_candidates
from rungwise.core.element_arrays import plain_equivalent
from rungwise.core.montecarlo import sample_trials
from rungwise.core.solve import solve
from rungwise.core.topologies import build

GOAL_RATIO = 100.0
"""Wanted speed-up over ngspice for one evaluation and for Monte Carlo."""

LADDER = Design(topology="r2r-voltage", bits=16, vref=2.5, unit_r=10e3, ron_high=12.0, ron_low=8.0)
"""The issue's network: a 16-bit R-2R ladder with real switches (general path)."""

MISMATCH = {"tolerance": 0.001}


def verdict(ratio: float, goal: float = GOAL_RATIO) -> str:
    return "met" if ratio >= goal else "MISSED"


def spice_time(net, codes: int, ohms=None) -> tuple[float, object, int]:
    """(ngspice seconds for the first ``codes`` codes, its result, codes solved); the ``.dc``
    sweep when every leg follows one bit, else circuit copies of at most 16 codes."""
    try:
        t, res = best_of(lambda: spice.simulate(net, codes=np.arange(codes), ohms=ohms,
                                                method="sweep"), 1)
        return t, res, codes
    except ValueError:
        n = min(codes, 16)
        t, res = best_of(lambda: spice.simulate(net, codes=np.arange(n), ohms=ohms), 1)
        return t, res, n


def dense_per_code(net, n_codes: int) -> tuple[float, dict | None]:
    """(dense seconds per code, its result on the first codes) or (nan, None) when too large."""
    net = plain_equivalent(net)
    if len(net.unknown_nodes()) > 2000 or any(
            leg.ohms + min(leg.ron_high, leg.ron_low) == 0 for leg in net.legs):
        return float("nan"), None
    base = DenseBaseline(net)
    t, res = best_of(lambda: base.solve(np.arange(n_codes)), 1)
    return t / n_codes, res


def row_evaluate(repeat: int) -> None:
    net = build(LADDER)
    evaluate(LADDER)
    t_eval, ev = best_of(lambda: evaluate(LADDER), repeat)
    t_sp, sp, n_sp = spice_time(net, net.n_codes)
    t_sp *= net.n_codes / n_sp
    per_code, dense = dense_per_code(net, 2048)
    ours = {"vout": ev.vout, "iref": ev.iref, "rout": ev.rout}
    d_sp = max_rel_diff({"vout": sp.vout, "iref": sp.iref, "rout": sp.rout}, ours, n_sp)
    d_dn = max_rel_diff(dense, ours, 2048)
    ratio = t_sp / t_eval
    print(f"evaluate  16-bit R-2R 12/8 Ω: {t_eval * 1e3:7.1f} ms; ngspice .dc sweep {t_sp:6.2f} s "
          f"→ {ratio:5.0f}× (goal ≥ {GOAL_RATIO:g}×: {verdict(ratio)}); dense "
          f"{per_code * net.n_codes:6.2f} s → {per_code * net.n_codes / t_eval:5.0f}×; "
          f"Δspice {d_sp:.1e} Δdense {d_dn:.1e}")


def row_monte_carlo(bits: int, trials: int, spice_trials: int) -> float:
    """Time one Monte Carlo run and print its ratios; returns ngspice seconds per trial."""
    d = LADDER.replace(bits=bits, mismatch=MISMATCH)
    net = build(d)
    monte_carlo(d.replace(bits=4), 10, seed=1)  # warm-up (imports)
    t_mc, res = best_of(lambda: monte_carlo(d, trials, seed=2), 1)
    ohms = sample_trials(d, 2, 0, spice_trials)
    t0 = time.perf_counter()
    refs = [spice.simulate(net, ohms={k: float(v[t, 0]) for k, v in ohms.items()}, method="sweep")
            for t in range(spice_trials)]
    per_trial = (time.perf_counter() - t0) / spice_trials
    ours = solve(net, ohms=ohms).vout
    rel = max(float(np.max(np.abs(ours[t] - ref.vout)) / np.max(np.abs(ref.vout)))
              for t, ref in enumerate(refs))
    per_code, _ = dense_per_code(net, 1024)
    t_dense = per_code * net.n_codes * trials
    ratio = per_trial * trials / t_mc
    print(f"mc{bits:<7} {bits}-bit R-2R 12/8 Ω, {trials} trials ({res.engine} engine): "
          f"{t_mc:6.2f} s; ngspice {per_trial:.2f} s/trial ({spice_trials} timed) → {ratio:5.0f}× "
          f"(goal ≥ {GOAL_RATIO:g}×: {verdict(ratio)}); dense {t_dense:7.1f} s → "
          f"{t_dense / t_mc:5.0f}×; Δspice {rel:.1e}")
    return per_trial


def row_topologies(repeat: int, spice_codes: int) -> None:
    print(f"topology  16-bit evaluate per topology, 12/8 Ω switches (ngspice on ≤ {spice_codes} "
          "codes, scaled; goal: each ≥ 100×)")
    for topology, outputs in OUTPUTS_BY_TOPOLOGY.items():
        for output in outputs:
            d = LADDER.replace(topology=topology, output=output)
            net = build(d)
            evaluate(d)
            t_eval, ev = best_of(lambda d=d: evaluate(d), repeat)
            plain = plain_equivalent(net)
            n = spice_codes if plain.legs and len(plain.unknown_nodes()) < 5000 else 2
            t_sp, sp, n_sp = spice_time(plain, n)
            t_sp *= net.n_codes / n_sp
            per_code, dense = dense_per_code(net, 512)
            ours = {"vout": ev.vout, "iref": ev.iref, "rout": ev.rout}
            d_sp = max_rel_diff({"vout": sp.vout, "iref": sp.iref, "rout": sp.rout}, ours, n_sp)
            ratio = t_sp / t_eval
            dense_text = ("dense n/a (network too large for a dense matrix per code)"
                          if dense is None else
                          f"dense ×{per_code * net.n_codes / t_eval:5.0f} "
                          f"Δ{max_rel_diff(dense, ours, 512):.0e}")
            print(f"          {topology + ' / ' + output:34} {t_eval * 1e3:7.1f} ms; ngspice "
                  f"{t_sp:8.2f} s ({n_sp} codes) → {ratio:6.0f}× {verdict(ratio):6}; "
                  f"{dense_text}; Δspice {d_sp:.0e}", flush=True)


def row_sweep() -> None:
    demo = demo_candidates()
    sw._CACHE.clear()
    t_nom, _ = best_of(lambda: sw.sweep(demo, "bits", sw.sweep_values("bits", 2, 16)), 1)
    seg = [Design(topology="segmented", bits=12)]
    stats = sw.SweepStatistics(tolerance=0.001, trials=500, seed=1)
    t_seg, _ = best_of(lambda: sw.sweep(seg, "thermometer_bits",
                                        sw.sweep_values("thermometer_bits", 0, 8), stats), 1)
    net = build(DEMO_BASE.replace(bits=16))
    t_sp, _, _ = spice_time(net, net.n_codes)
    print(f"sweep     demo over N = 2 … 16: {t_nom:5.2f} s; README segmented sweep (M = 0 … 8, "
          f"500 boards a point): {t_seg:5.2f} s; one ngspice sweep of the 16-bit demo: {t_sp:5.2f} s "
          f"→ {t_sp / t_nom:4.1f}× and {t_sp / t_seg:4.1f}× (goal > 1×: "
          f"{verdict(min(t_sp / t_nom, t_sp / t_seg), 1.0)})")


def row_report(per_trial_16: float | None) -> None:
    from rungwise.app.export.report_content import gather
    from rungwise.core.designfile import DesignFile

    cands = [d.replace(bits=16) for d in demo_candidates()]
    doc = DesignFile(candidates=cands)
    trials = doc.analysis.trials
    t, _ = best_of(lambda: gather(doc), 1)
    text = (f"report    figures + statistics of the demo at 16 bits ({trials} boards × "
            f"{len(cands)}): {t:6.1f} s")
    if per_trial_16:
        t_sp = per_trial_16 * trials * len(cands)
        text += f"; ngspice's cost of those boards {t_sp:6.0f} s → {t_sp / t:4.0f}×"
    print(text)


def row_stats() -> None:
    import threading

    from rungwise.app.views.stats_job import StatsRequest, statistics_job

    tol = {"tolerance": 0.001}
    cands = (DEMO_BASE.replace(bits=12, mismatch=tol),
             DEMO_BASE.replace(bits=12, topology="binary-weighted", output="terminated-divider",
                               mismatch=tol),
             Design(topology="segmented", bits=12, ron_high=12.0, ron_low=8.0, mismatch=tol))

    def run():
        return list(statistics_job(StatsRequest(cands, trials=2000, seed=1))(threading.Event()))[-1]

    t, _ = best_of(run, 1)
    print(f"stats     Statistics view's job, three 12-bit candidates × 2,000 boards (run at the "
          f"grade and the yield-vs-grade curve): {t:5.2f} s (goal: a few seconds)")


ROWS = ("evaluate", "mc12", "mc16", "topology", "sweep", "report", "stats")


def main(argv: list[str] | None = None) -> int:
    ap = argparse.ArgumentParser(description=__doc__.split("\n")[0])
    ap.add_argument("--repeat", type=int, default=3)
    ap.add_argument("--spice-codes", type=int, default=4096)
    ap.add_argument("--only", default=",".join(ROWS), help="comma-separated rows: " + ", ".join(ROWS))
    args = ap.parse_args(argv)
    rows = set(args.only.split(","))
    if spice.ngspice_path() is None:
        print("ngspice is missing: this benchmark needs it for its baseline")
        return 1
    print(f"machine: {os.cpu_count()} cores, load average {os.getloadavg()[0]:.1f} at the start "
          "(other work on the machine slows every column)")
    per_trial_16 = None
    if "evaluate" in rows:
        row_evaluate(args.repeat)
    if "mc12" in rows:
        row_monte_carlo(12, 1000, 3)
    if "mc16" in rows:
        per_trial_16 = row_monte_carlo(16, 100, 1)
    if "topology" in rows:
        row_topologies(args.repeat, args.spice_codes)
    if "sweep" in rows:
        row_sweep()
    if "report" in rows:
        row_report(per_trial_16)
    if "stats" in rows:
        row_stats()
    print(f"load average at the end {os.getloadavg()[0]:.1f}")
    return 0


if __name__ == "__main__":
    sys.exit(main())
