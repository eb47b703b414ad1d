"""Speed of the worst-case guarantee, the ratio search and the joint fit, against baselines measured
in the same run.

Run on demand (pytest does not collect this folder)::

    .venv/bin/python tests/benchmarks/bench_monotonic.py [--repeat 3]

For each design: ``guarantee`` (``worst_case.summary``, part of every ``evaluate``) and ``ratio``
(``skew.ratio_for_monotonic``) over one nominal ``solve`` at every code (the baseline), with the
answers printed so a fast wrong one shows; then ``diagnose`` with the joint fit over the
single-part fit alone (``fit_suspects``) on a synthetic 8-bit board with two parts off.

Measured at load 8–10 on 2 shared cores: the guarantee costs 4–130 nominal solves (14 ms at 8 bits
with unequal switches, 131 ms at 12 bits, 222 ms at 16 bits with ideal switches) — most of it the
solver's fixed cost per batched call (sensitivities, vertices, up to six flip rounds); the ratio
search 0.1–2 s; the joint fit about 13× the single-part fit (0.34 s at 8 bits). A goal for later:
the guarantee within a few nominal solves up to 12 bits (fewer, larger batched solves).
"""

from __future__ import annotations

import argparse
import time

from rungwise.core import Design
from rungwise.core.diagnose import diagnose, fit_suspects
from rungwise.core.diagnose.synthetic import random_as_built, synthesize
from rungwise.core.skew import ratio_for_monotonic
from rungwise.core.solve import solve
from rungwise.core.topologies import build
from rungwise.core.worst_case import summary

DESIGNS = {
    "r2r 8-bit, 40/25 Ω switches": Design(bits=8, ron_high=40.0, ron_low=25.0, load_r=100e3),
    "r2r 12-bit, ideal switches": Design(bits=12),
    "r2r 12-bit, 40/25 Ω switches": Design(bits=12, ron_high=40.0, ron_low=25.0),
    "r2r 16-bit, ideal switches": Design(bits=16),
    "segmented 10/3, ideal": Design(topology="segmented", bits=10, thermometer_bits=3),
    "binary 10-bit, terminated": Design(topology="binary-weighted", output="terminated-divider",
                                        bits=10),
}


def _best(fn, repeat: int) -> float:
    times = []
    for _ in range(repeat):
        t = time.perf_counter()
        fn()
        times.append(time.perf_counter() - t)
    return min(times)


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.split("\n\n")[0])
    parser.add_argument("--repeat", type=int, default=3)
    args = parser.parse_args()
    print(f"{'design':<30}{'solve ms':>10}{'guarantee':>11}{'×':>6}{'ratio s':>9}{'×':>8}  answer")
    for name, d in DESIGNS.items():
        net = build(d)
        base = _best(lambda net=net: solve(net), args.repeat)
        guarantee = _best(lambda d=d: summary(d), args.repeat)
        figures, _ = summary(d)
        ratio = _best(lambda d=d: ratio_for_monotonic(d), 1)
        answer = ratio_for_monotonic(d)
        print(f"{name:<30}{base * 1e3:>10.1f}{guarantee * 1e3:>9.1f}ms{guarantee / base:>6.1f}"
              f"{ratio:>9.2f}{ratio / base:>8.0f}  guaranteed={figures['guaranteed_monotonic']}, "
              f"ratio={answer.ratio}")
    design = Design(bits=8, vref=3.3, ron_high=40.0, ron_low=25.0, load_r=100e3)
    built = random_as_built(design, 0.0002, seed=1, off={"leg3": 0.015, "series5": -0.012})
    m = synthesize(built, noise=60e-6, seed=2, repeats={0: 5, 128: 5, 255: 5})
    single = _best(lambda: fit_suspects(design, m.codes, m.volts, 3.3 / 256), args.repeat)
    joint = _best(lambda: diagnose(m, design), args.repeat)
    first = diagnose(m, design).joint.explanations[0].parts
    print(f"joint fit: diagnose {joint:.2f} s over single-part fit {single:.2f} s = "
          f"{joint / single:.1f}×; first explanation {first}")


if __name__ == "__main__":
    main()
