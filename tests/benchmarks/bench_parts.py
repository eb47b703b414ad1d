"""Cost of the real-part figures against the solve they build on, measured in the same run.

Run on demand (pytest does not collect this folder)::

    .venv/bin/python tests/benchmarks/bench_parts.py [--repeat 5]

For a realistic ladder and binary divider (unequal switch resistances, a load) at 8, 12 and 16 bits
it times the plain ``solve``, the worst-case power pass (``metrics.power.worst_case``), the drift
pass (two temperatures) and ``suggest`` over E24, and prints each as a ratio to ``solve``.
"""

from __future__ import annotations

import argparse
import time

from rungwise.core import Design
from rungwise.core.metrics.drift import drift
from rungwise.core.metrics.power import worst_case
from rungwise.core.parts.suggest import Limits, suggest
from rungwise.core.solve import solve
from rungwise.core.topologies import build


def best_of(repeat: int, fn) -> float:
    """Shortest of ``repeat`` runs of ``fn()``, seconds."""
    times = []
    for _ in range(repeat):
        t = time.perf_counter()
        fn()
        times.append(time.perf_counter() - t)
    return min(times)


def main() -> None:
    ap = argparse.ArgumentParser()
    ap.add_argument("--repeat", type=int, default=5)
    args = ap.parse_args()
    print(f"{'case':<34}{'solve':>10}{'power':>10}{'drift':>10}{'suggest':>10}   (ratio to solve)")
    for bits in (8, 12, 16):
        for topo, out in (("r2r-voltage", "unbuffered"), ("binary-weighted", "terminated-divider")):
            unit_r = 1e3 if topo == "r2r-voltage" else 100.0  # keeps every bit within 10 MΩ
            d = Design(topology=topo, output=out, bits=bits, unit_r=unit_r, ron_high=40.0, ron_low=25.0,
                       load_r=100e3, series="E24", mismatch={"tempco": 100e-6})
            net = build(d)
            t_solve = best_of(args.repeat, lambda net=net: solve(net))
            t_power = best_of(args.repeat, lambda net=net: worst_case(net))
            t_drift = best_of(args.repeat, lambda d=d, net=net: drift(d, net, [0.0, 70.0]))
            t_sug = best_of(1, lambda d=d: suggest(d, Limits(iref_max=1e-3))) if bits <= 12 else float("nan")
            print(f"{topo + ' ' + str(bits) + ' bits':<34}{t_solve * 1e3:>8.2f}ms"
                  f"{t_power / t_solve:>10.2f}{t_drift / t_solve:>10.2f}{t_sug / t_solve:>10.1f}")


if __name__ == "__main__":
    main()
