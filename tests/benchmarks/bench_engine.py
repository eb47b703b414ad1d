"""Speed of the engine at 16 bits against two baselines measured in the same run.

Run on demand (pytest does not collect this folder)::

    .venv/bin/python tests/benchmarks/bench_engine.py [--bits 16] [--repeat 5]
        [--dense-codes 2048] [--spice-codes 4096] [--no-spice]

For every topology and output variant, in two cases — *realistic* (unequal switch resistances,
a reference with output resistance, a finite load on unbuffered outputs) and *ideal* — it times:

* ``solve+lin``: build the network, solve vout, rout, iref at every code and compute INL/DNL
  (the engine's job the 50 ms target is about);
* ``evaluate``: the whole ``evaluate(design)`` with every summary figure;
* ``dense``: a straightforward per-code loop that forms the dense nodal matrix and calls
  ``numpy.linalg.solve`` (vout, iref and rout), timed on the first ``--dense-codes`` codes and
  scaled to all codes;
* ``ngspice``: the reference harness's ``.dc`` sweep (``tests/references/spice.py``) of the same
  network, timed on the first ``--spice-codes`` codes and scaled to all codes.

Ratios are baseline time / ``solve+lin`` time. The largest relative difference of each baseline
against the engine on the codes it solved is printed too (a benchmark that computes the wrong thing
fast is worthless).
"""

from __future__ import annotations

import argparse
import os
import sys
import time
from pathlib import Path

import numpy as np

sys.path.insert(0, str(Path(__file__).resolve().parents[1]))  # tests/ → ``references``

from references import spice

from rungwise.core import OUTPUTS_BY_TOPOLOGY, Design, evaluate
from rungwise.core.element_arrays import plain_equivalent
from rungwise.core.metrics import linearity
from rungwise.core.network import Network
from rungwise.core.solve import solve
from rungwise.core.topologies import build

TARGET_MS = 50.0
"""Target for one 16-bit nominal evaluation, milliseconds."""

MAX_BASELINE_NODES = 2000
"""Largest network (unknown nodes) given to the per-code baselines; a 16-bit resistor string
(65,536 taps) would need a 32 GB dense matrix per code."""


def designs(bits: int) -> list[tuple[str, Design]]:
    """(case, design) for every topology and output: realistic and ideal."""
    out = []
    for topology, outputs in OUTPUTS_BY_TOPOLOGY.items():
        for output in outputs:
            ideal = Design(topology=topology, output=output, bits=bits, vref=2.5, unit_r=10e3)
            real = ideal.replace(ron_high=40.0, ron_low=25.0, ref_r=2.0, load_r=100e3)
            out += [("realistic", real), ("ideal", ideal)]
    return out


def best_of(fn, repeat: int) -> tuple[float, object]:
    """Smallest wall time of ``repeat`` calls, seconds, and the last result."""
    best, result = np.inf, None
    for _ in range(repeat):
        t0 = time.perf_counter()
        result = fn()
        best = min(best, time.perf_counter() - t0)
    return best, result


def best_cpu_of(fn, repeat: int) -> float:
    """Smallest process CPU time of ``repeat`` calls, seconds (less sensitive to a busy machine;
    counts every thread of this process)."""
    best = np.inf
    for _ in range(repeat):
        t0 = time.process_time()
        fn()
        best = min(best, time.process_time() - t0)
    return best


def engine_job(design: Design) -> dict[str, np.ndarray]:
    """What the target covers: vout, rout, iref at every code and INL/DNL."""
    net = build(design)
    sol = solve(net)
    return {"vout": sol.vout, "rout": sol.rout, "iref": sol.iref,
            "inl_endpoint": linearity.inl_endpoint(sol.vout),
            "inl_bestfit": linearity.inl_bestfit(sol.vout), "dnl": linearity.dnl(sol.vout)}


# ------------------------------------------------------------------------------------------------
# the dense per-code baseline


class DenseBaseline:
    """Per-code full nodal matrix Y (every node, fixed ones included) and ``numpy.linalg.solve``."""

    def __init__(self, net: Network) -> None:
        self.net = net
        names = list(dict.fromkeys([*net.fixed, *net.unknown_nodes()]))
        self.idx = {n: i for i, n in enumerate(names)}
        m = len(names)
        self.y0 = np.zeros((m, m))
        for r in net.resistors:
            self._stamp(self.y0, r.a, r.b, 1.0 / r.ohms)
        self.leg_y = []
        for leg in net.legs:
            hi = np.zeros((m, m))
            self._stamp(hi, leg.node, leg.high, 1.0 / (leg.ohms + leg.ron_high))
            lo = np.zeros((m, m))
            if leg.low is not None:
                self._stamp(lo, leg.node, leg.low, 1.0 / (leg.ohms + leg.ron_low))
            self.leg_y.append((hi, lo))
        out = net.output
        self.virtual = out.kind == "virtual-ground"
        self.o = self.idx[out.node]
        self.fixed = np.array([self.idx[n] for n in net.fixed])
        self.v_fixed = np.array(list(net.fixed.values()), dtype=float)
        self.unknown = np.array([i for i in range(m) if i not in set(self.fixed)], dtype=int)
        probe = [*self.unknown, self.o] if self.virtual else list(self.unknown)
        self.probe = np.array(sorted(set(probe)), dtype=int)
        self.load = 0.0
        if out.kind == "node" and not out.buffered and np.isfinite(out.load_ohms):
            self.load = 1.0 / out.load_ohms
        self.src = self.idx[net.source]

    def _stamp(self, y: np.ndarray, a: str, b: str, g: float) -> None:
        i, j = self.idx[a], self.idx[b]
        y[i, i] += g
        y[j, j] += g
        y[i, j] -= g
        y[j, i] -= g

    def solve(self, codes: np.ndarray) -> dict[str, np.ndarray]:
        """vout, iref, rout at ``codes`` — one dense solve pair per code (Python loop)."""
        drive = self.net.decode(codes)
        out = self.net.output
        u, f, p = self.unknown, self.fixed, self.probe
        vout, iref, rout = (np.empty(len(codes)) for _ in range(3))
        for k in range(len(codes)):
            y = self.y0.copy()
            for (hi, lo), on in zip(self.leg_y, drive[k], strict=True):
                y += hi if on else lo
            yl = y.copy()
            yl[self.o, self.o] += self.load
            v = np.zeros(len(y))
            v[f] = self.v_fixed
            if u.size:
                v[u] = np.linalg.solve(yl[np.ix_(u, u)], -yl[np.ix_(u, f)] @ self.v_fixed)
            iref[k] = y[self.src] @ v
            if self.virtual:
                vout[k] = out.feedback_ohms * (y[self.o] @ v)
            else:
                vout[k] = v[self.o] * (out.gain if out.buffered else 1.0)
            e = (p == self.o).astype(float)
            try:
                z = np.linalg.solve(y[np.ix_(p, p)], e)
                rout[k] = z[p == self.o][0]
            except np.linalg.LinAlgError:
                rout[k] = np.inf
        return {"vout": vout, "iref": iref, "rout": rout}


def max_rel_diff(got: dict[str, np.ndarray], ref: dict[str, np.ndarray], n: int) -> float:
    """Largest relative difference over vout, iref, rout on the first ``n`` codes (scale: the
    largest finite magnitude of each quantity)."""
    worst = 0.0
    for name in ("vout", "iref", "rout"):
        a, b = np.asarray(got[name][:n]), np.asarray(ref[name][:n])
        fin = np.isfinite(a) & np.isfinite(b)
        if np.any(np.isinf(a) != np.isinf(b)):
            return np.inf
        scale = np.max(np.abs(b[fin]), initial=0.0) or 1.0
        worst = max(worst, float(np.max(np.abs(a[fin] - b[fin]), initial=0.0) / scale))
    return worst


def main(argv: list[str] | None = None) -> int:
    """Run the benchmark and print the table."""
    ap = argparse.ArgumentParser(description=__doc__.split("\n")[0])
    ap.add_argument("--bits", type=int, default=16)
    ap.add_argument("--repeat", type=int, default=5)
    ap.add_argument("--dense-codes", type=int, default=2048)
    ap.add_argument("--spice-codes", type=int, default=4096)
    ap.add_argument("--no-spice", action="store_true")
    args = ap.parse_args(argv)
    n_codes = 2**args.bits
    n_dense = min(args.dense_codes, n_codes)
    n_spice = min(args.spice_codes, n_codes)
    use_spice = not args.no_spice and spice.ngspice_path() is not None
    print(f"Rungwise engine benchmark: {args.bits} bits = {n_codes} codes; best of {args.repeat}; "
          f"target {TARGET_MS:g} ms for solve+lin")
    load = os.getloadavg()[0] if hasattr(os, "getloadavg") else float("nan")
    print(f"machine: {os.cpu_count()} cores, load average {load:.1f} at the start "
          "(other work on the machine slows every column)")
    print(f"dense numpy.linalg.solve baseline timed on {n_dense} codes and scaled ×"
          f"{n_codes / n_dense:g}" + ("" if n_dense < n_codes else " (all codes)"))
    if use_spice:
        print(f"ngspice .dc sweep timed on {n_spice} codes and scaled ×{n_codes / n_spice:g}"
              + ("" if n_spice < n_codes else " (all codes)"))
    else:
        print("ngspice: not run (missing or --no-spice)")
    head = (f"{'topology/output':38} {'case':9} {'solve+lin':>10} {'(cpu)':>8} {'evaluate':>9} "
            f"{'≤50ms':>5} "
            f"{'dense':>10} {'×dense':>8} {'ngspice':>10} {'×spice':>8} {'Δdense':>8} {'Δspice':>8}")
    print(head)
    print("-" * len(head))
    for case, design in designs(args.bits):
        t_job, job = best_of(lambda d=design: engine_job(d), args.repeat)
        cpu_job = best_cpu_of(lambda d=design: engine_job(d), args.repeat)
        t_eval, _ = best_of(lambda d=design: evaluate(d), max(1, args.repeat // 2))
        net = plain_equivalent(build(design))
        row = (f"{design.topology + ' / ' + design.output:38} {case:9} {t_job * 1e3:8.1f}ms "
               f"{cpu_job * 1e3:6.1f}ms {t_eval * 1e3:7.1f}ms "
               f"{'yes' if t_job * 1e3 <= TARGET_MS else 'NO':>5} ")
        shorted = any(leg.ohms + min(leg.ron_high, leg.ron_low) == 0 for leg in net.legs)
        if len(net.unknown_nodes()) > MAX_BASELINE_NODES or shorted:
            print(row + f"{'n/a':>10} {'':>8} {'n/a':>10}   ({len(net.unknown_nodes())} nodes"
                  + (", ideal 0 Ω switches" if shorted else "") + ": no per-code baseline)")
            continue
        base = DenseBaseline(net)
        codes = np.arange(n_dense)
        t_dense, dense = best_of(lambda b=base, c=codes: b.solve(c), 1)
        t_dense *= n_codes / n_dense
        row += f"{t_dense * 1e3:8.0f}ms {t_dense / t_job:7.0f}×"
        d_dense = max_rel_diff(dense, job, n_dense)
        if use_spice:
            try:
                sweep_codes = np.arange(n_spice)
                t_sp, sp = best_of(lambda n=net, c=sweep_codes: spice.simulate(n, codes=c,
                                                                             method="sweep"), 1)
                how = ""
            except ValueError:  # legs not driven one bit each: circuit copies instead
                sweep_codes = np.arange(min(n_spice, 256))
                t_sp, sp = best_of(lambda n=net, c=sweep_codes: spice.simulate(n, codes=c), 1)
                how = f"  (ngspice: .op copies of {sweep_codes.size} codes, scaled)"
            t_sp *= n_codes / sweep_codes.size
            d_spice = max_rel_diff({"vout": sp.vout, "iref": sp.iref, "rout": sp.rout}, job,
                                   sweep_codes.size)
            row += f" {t_sp * 1e3:8.0f}ms {t_sp / t_job:7.0f}× {d_dense:8.1e} {d_spice:8.1e}{how}"
        else:
            row += f" {'—':>10} {'—':>8} {d_dense:8.1e} {'—':>8}"
        print(row, flush=True)
    print("solve+lin and evaluate: best wall time; (cpu): best CPU time of this process for "
          "solve+lin. Ratios use the wall time.")
    print("Δ: largest difference against the engine on the codes the baseline solved, relative to "
          "the largest magnitude of vout, iref and rout.")
    return 0


if __name__ == "__main__":
    sys.exit(main())
