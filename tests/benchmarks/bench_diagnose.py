"""Speed of ``diagnose`` against one nominal solve of the same network, measured in the same run.

Run on demand (pytest does not collect this folder)::

    .venv/bin/python tests/benchmarks/bench_diagnose.py [--bits 8 12 14 16] [--repeat 3]

For each resolution, a synthetic measurement of the demo ladder with one leg 1 % high (every code,
20 µV noise) is diagnosed. ``ratio`` = diagnose time / the time of one ``solve`` of the nominal
network at every code (the baseline); the part found and its deviation are printed so that a fast
wrong answer shows. The goal: a 16-bit curve diagnosed well within a minute.
"""

from __future__ import annotations

import argparse
import time

from rungwise.core.demo import DEMO_BASE
from rungwise.core.diagnose import diagnose
from rungwise.core.diagnose.synthetic import random_as_built, synthesize
from rungwise.core.solve import solve
from rungwise.core.topologies import build


def _best(fn, repeat: int) -> float:
    times = []
    for _ in range(repeat):
        t = time.perf_counter()
        fn()
        times.append(time.perf_counter() - t)
    return min(times)


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--bits", type=int, nargs="+", default=[8, 12, 14, 16])
    ap.add_argument("--repeat", type=int, default=3)
    args = ap.parse_args()
    print(f"{'bits':>4} {'solve s':>9} {'diagnose s':>11} {'ratio':>7}  found")
    for bits in args.bits:
        design = DEMO_BASE.replace(bits=bits)
        part = f"leg{bits - 3}"
        m = synthesize(random_as_built(design, 0.0002, seed=1, off={part: 0.01}), noise=20e-6,
                       seed=2)
        net = build(design)
        base = _best(lambda net=net: solve(net), args.repeat)
        result = None

        def run(m=m, design=design):
            nonlocal result
            result = diagnose(m, design)

        t = _best(run, args.repeat)
        best = result.suspects.suspects[0]
        print(f"{bits:>4} {base:>9.3f} {t:>11.3f} {t / base:>7.1f}  {best.id} "
              f"{best.deviation * 100:+.3f} % (set {part} +1 %)")


if __name__ == "__main__":
    main()
