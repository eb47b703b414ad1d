"""Speed of the design-space search against baselines measured in the same run.

Run on demand (pytest does not collect this folder)::

    .venv/bin/python tests/benchmarks/bench_search.py [--bits 10] [--trials 4000] [--workers 2]

Prints, for one space (every passive network, M = 1 … 4, E24 and E96, five grades):

* ``early stopping``: boards the search used against points × budget (what a fixed-budget run
  would use), and the wall time of the search against the same points each run to the full budget
  (one look, same seed) — the decisions of the two are compared too;
* ``process pool``: the search through ``default_executor(workers)`` against ``InlineExecutor``
  (same results, wall time ratio), with the load average.
"""

from __future__ import annotations

import argparse
import os
import time

from rungwise.core import Design, monte_carlo
from rungwise.core.grades import with_tolerance
from rungwise.core.search_point import board_passes
from rungwise.core.search_question import SearchQuestion
from rungwise.core.space_search import InlineExecutor, default_executor, search
from rungwise.core.yield_decision import decide_yield


def main() -> None:
    ap = argparse.ArgumentParser()
    ap.add_argument("--bits", type=int, default=10)
    ap.add_argument("--trials", type=int, default=4000)
    ap.add_argument("--workers", type=int, default=2)
    args = ap.parse_args()
    base = Design(bits=args.bits)
    q = SearchQuestion(series=("E24", "E96"), trials=args.trials)
    print(f"load average {os.getloadavg()[0]:.2f}; {q.size(base)} points, budget {args.trials} boards")

    t0 = time.perf_counter()
    inline = search(base, q, executor=InlineExecutor())
    t_inline = time.perf_counter() - t0
    decided = inline.decided
    used = sum(p.trials for p in decided)
    print(f"inline search: {t_inline:.2f} s; {len(decided)} points by Monte Carlo, "
          f"{len(inline.pruned)} pruned; boards used {used} of {len(decided) * args.trials} "
          f"({used / max(1, len(decided) * args.trials):.1%})")

    t0 = time.perf_counter()
    disagree = 0
    for p in decided:
        full = monte_carlo(with_tolerance(p.design, p.grade), args.trials, q.seed,
                           targets=inline.targets)
        ok = board_passes(full, q.criterion)
        whole = decide_yield(int(ok.sum()), args.trials, inline.target_yield)
        disagree += whole.verdict != "undecided" and p.verdict != "undecided" and \
            whole.verdict != p.verdict
    t_full = time.perf_counter() - t0
    print(f"full-budget baseline (Monte Carlo only, no pruning): {t_full:.2f} s → early stopping "
          f"×{t_full / t_inline:.2f} faster end to end; decided differently: {disagree} of "
          f"{len(decided)}")

    with default_executor(args.workers) as pool:
        t0 = time.perf_counter()
        pooled = search(base, q, executor=pool)
        t_pool = time.perf_counter() - t0
    same = [p.to_dict() for p in pooled.decided] == [p.to_dict() for p in decided]
    print(f"process pool ({args.workers} workers, pool start included): {t_pool:.2f} s, "
          f"×{t_inline / t_pool:.2f} against inline; same results: {same}")
    print(inline.answer_text())


if __name__ == "__main__":
    main()
