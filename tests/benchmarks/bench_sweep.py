"""Speed of the explorer's sweep and of the 16-bit resistor string, against baselines measured in
the same run.

Run on demand (pytest does not collect this folder)::

    .venv/bin/python tests/benchmarks/bench_sweep.py [--repeat 3]

Times (wall and CPU, with the load average; the sweep also as a multiple of a fixed numpy
workload timed in the same run, which moves less with the machine and its load):

* ``sweep``: ``core.sweep.sweep`` of N = 2 … 16 over every topology and output variant (nominal
  figures, cache cleared first) — target < 2 s; also the same sweep again (cached: re-plotting);
* ``string16``: a 16-bit string (tap switch, finite load) solved at all 65,536 codes with INL/DNL
  (``solve`` + linearity; target < 100 ms), and the whole ``evaluate`` (65,536 parts held as
  arrays, every power figure in closed form);
* ``segmented16``: 16-bit segmented designs, M = 0 … 16, solve + INL/DNL on the bit-tensor layout
  (target < 50 ms) against the per-code layout of the same solver, and the whole ``evaluate``;
* baselines: the string's tap table by the general sparse LU path (``selector.tap_table(...,
  "sparse")``, one solve per tap, timed on a 10-bit string and scaled by n²) and the dense nodal
  matrix inverse of a 12-bit string (``numpy.linalg.inv``, scaled by n³). The largest relative
  difference against the closed form on the codes compared is printed.
"""

from __future__ import annotations

import argparse
import os
import time

import numpy as np

from rungwise.core import OUTPUTS_BY_TOPOLOGY, Design, evaluate
from rungwise.core import sweep as sw
from rungwise.core.metrics import linearity
from rungwise.core.selector import tap_table
from rungwise.core.solve import solve
from rungwise.core.topologies import build

SWEEP_TARGET_S = 2.0
STRING_TARGET_MS = 100.0
SEGMENTED_TARGET_MS = 50.0


def curves(v):
    return linearity.inl_endpoint(v), linearity.inl_bestfit(v), linearity.dnl(v)


def best_of(fn, repeat: int):
    best, out = np.inf, None
    for _ in range(repeat):
        t = time.perf_counter()
        out = fn()
        best = min(best, time.perf_counter() - t)
    return best, out


def wall_and_cpu(fn, repeat: int):
    """Best wall time and the CPU time of that same run, seconds, and the 1-minute load."""
    best = (np.inf, np.inf)
    for _ in range(repeat):
        t, c = time.perf_counter(), time.process_time()
        fn()
        best = min(best, (time.perf_counter() - t, time.process_time() - c))
    return best[0], best[1], os.getloadavg()[0]


def calibration() -> None:
    """A fixed numpy workload (element-wise passes over 65,536 values, like the engine's): the
    sweep is printed as a multiple of it, a figure that moves less with the machine and its load."""
    x = np.linspace(0.0, 1.0, 1 << 16)
    for _ in range(400):
        x = np.sqrt(x * x + 1.0) - 0.5


def candidates() -> list[Design]:
    out = []
    for topology, outputs in OUTPUTS_BY_TOPOLOGY.items():
        for output in outputs:
            out.append(Design(topology=topology, output=output, bits=8, vref=2.5, unit_r=10e3,
                              ron_high=40.0, ron_low=25.0, load_r=100e3))
    return out


def string_engine(design: Design):
    net = build(design)
    sol = solve(net)
    return sol, linearity.inl_endpoint(sol.vout), linearity.dnl(sol.vout)


def main() -> None:
    ap = argparse.ArgumentParser()
    ap.add_argument("--repeat", type=int, default=3)
    args = ap.parse_args()
    cands = candidates()
    values = sw.sweep_values("bits", 2, 16)

    def fresh():
        sw._CACHE.clear()
        return sw.sweep(cands, "bits", values)

    fresh()  # warm imports and caches of ids
    t_cal, c_cal, _ = wall_and_cpu(calibration, args.repeat)
    t_sweep, c_sweep, load = wall_and_cpu(fresh, args.repeat)
    result = sw.sweep(cands, "bits", values)
    t_cached, _ = best_of(lambda: sw.sweep(cands, "bits", values), args.repeat)
    print(f"sweep N=2…16 × {len(cands)} candidates ({result.done} points): wall {t_sweep:.3f} s, "
          f"CPU {c_sweep:.3f} s, load average {load:.2f} (target < {SWEEP_TARGET_S} s: "
          f"{'met' if t_sweep < SWEEP_TARGET_S else 'MISSED'}); cached again: "
          f"{t_cached * 1e3:.1f} ms (×{t_sweep / t_cached:.0f} faster)")
    print(f"  baseline (fixed numpy workload, same run): wall {t_cal * 1e3:.0f} ms, CPU "
          f"{c_cal * 1e3:.0f} ms; sweep = ×{t_sweep / t_cal:.1f} of it by wall, "
          f"×{c_sweep / c_cal:.1f} by CPU")
    # where the time goes: CPU per candidate (each point evaluated once more, uncached)
    for d in cands:
        c = time.process_time()
        for n in values:
            evaluate(sw.point_design(d, "bits", n))
        print(f"  {d.topology:16s} {d.output:19s} CPU {time.process_time() - c:.3f} s "
              f"({(time.process_time() - c) / c_sweep:.0%} of the sweep)")

    d16 = Design(topology="string", bits=16, vref=2.5, unit_r=1e3, ron_high=150.0, load_r=1e6)
    string_engine(d16)
    t_eng, (_sol, _inl, _) = best_of(lambda: string_engine(d16), args.repeat)
    t_eval, _ = best_of(lambda: evaluate(d16), 1)
    print(f"16-bit string, solve + INL/DNL, all 65,536 codes: {t_eng * 1e3:.1f} ms (target < "
          f"{STRING_TARGET_MS:.0f} ms: {'met' if t_eng * 1e3 < STRING_TARGET_MS else 'MISSED'}); "
          f"whole evaluate (65,536 parts, power figures in closed form): "
          f"{t_eval * 1e3:.0f} ms")

    # 16-bit segmented designs: the bit-tensor layout (group level on the top bits' axes) against
    # the per-code layout of the same solver (explicit codes), same run
    for m in (0, 3, 8, 12, 16):
        ds = Design(topology="segmented", bits=16, thermometer_bits=m, vref=2.5, unit_r=10e3,
                    ron_high=40.0, ron_low=25.0, load_r=100e3)
        net = build(ds)
        codes = np.arange(net.n_codes)[::-1]  # descending: not an aligned block → per-code layout
        t_seg, c_seg, load = wall_and_cpu(lambda net=net: curves(solve(net).vout), args.repeat)
        t_flat, _ = best_of(lambda net=net, codes=codes: curves(solve(net, codes=codes).vout[::-1]),
                            1)
        diff = float(np.max(np.abs(solve(net).vout - solve(net, codes=codes).vout[::-1])))
        t_ev, c_ev, _ = wall_and_cpu(lambda ds=ds: evaluate(ds), 1)
        print(f"16-bit segmented M={m:2d}: solve + INL/DNL wall {t_seg * 1e3:.1f} ms, CPU "
              f"{c_seg * 1e3:.1f} ms (target < {SEGMENTED_TARGET_MS:.0f} ms: "
              f"{'met' if t_seg * 1e3 < SEGMENTED_TARGET_MS else 'MISSED'}); per-code layout "
              f"{t_flat * 1e3:.0f} ms (×{t_flat / t_seg:.1f}), max |Δvout| {diff:.1e} V; whole "
              f"evaluate wall {t_ev * 1e3:.0f} ms, CPU {c_ev * 1e3:.0f} ms; load {load:.2f}")

    # baseline 1: general sparse path, one LU solve per tap (10 bits, scaled by n²)
    d10 = d16.replace(bits=10)
    net10 = build(d10)
    t_sp, sparse = best_of(lambda: tap_table(net10, {}, "sparse"), 1)
    closed = tap_table(net10, {}, "series-path")
    err = float(np.max(np.abs(sparse.r - closed.r) / np.maximum(closed.r, 1.0)))
    scale = (2**16 / 2**10) ** 2
    print(f"baseline sparse LU per tap, 10 bits: {t_sp * 1e3:.0f} ms → 16 bits ≈ {t_sp * scale:.0f} s "
          f"(×{t_sp * scale / t_eng:.0f} the closed form); max rel. diff of r: {err:.1e}")

    # baseline 2: dense inverse of the nodal matrix (12 bits, scaled by n³)
    n = 2**12 - 1
    r = np.asarray(build(d16.replace(bits=12)).chains[0].ohms)
    g = 1.0 / r
    a = np.diag(g[:-1] + g[1:]) - np.diag(g[1:-1], 1) - np.diag(g[1:-1], -1)
    t_dense, inv = best_of(lambda: np.linalg.inv(a), 1)
    closed12 = tap_table(build(d16.replace(bits=12)), {}, "series-path")
    err = float(np.max(np.abs(np.diag(inv) - closed12.r[1:n + 1]) / closed12.r[1:n + 1]))
    print(f"baseline dense inverse, 12 bits: {t_dense * 1e3:.0f} ms → 16 bits ≈ "
          f"{t_dense * 4096:.0f} s (×{t_dense * 4096 / t_eng:.0f}); max rel. diff: {err:.1e}")


if __name__ == "__main__":
    main()
