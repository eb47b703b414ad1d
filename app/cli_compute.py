"""``rungwise compute``: summary figures (and per-code arrays) of one or more candidates."""

from __future__ import annotations

import argparse
import csv
import io
import json
import math
import sys
from typing import Any

import numpy as np

from rungwise.core import SUMMARY_KEYS, Evaluation, MonteCarloResult, evaluate, monte_carlo
from rungwise.core.errors import RungwiseError
from rungwise.core.montecarlo import check_run, plan_run
from rungwise.core.targets import Targets
from rungwise.core.units import format_value

from .candidates import add_choice_arguments, chosen_candidates, load_document
from .stats_text import render_stats_table, stats_csv_rows

NAME = "compute"
HELP = "Solve candidates at every code and print their figures (json, csv or table)."


def add_arguments(p: argparse.ArgumentParser) -> None:
    """Options of ``compute``."""
    add_choice_arguments(p)
    p.add_argument("--format", choices=("json", "csv", "table"), default="table")
    p.add_argument("--per-code", action="store_true", help="also print every code's values")
    p.add_argument("--trials", type=int, metavar="T",
                   help="also run T Monte Carlo trials per candidate (mismatch from each design)")
    p.add_argument("--seed", type=int, metavar="S",
                   help="seed of the Monte Carlo trials (default: the design file's, else a new one, "
                   "printed)")


def _plain(x: Any) -> Any:
    """JSON-safe value: numpy scalars to Python, non-finite numbers to null."""
    if isinstance(x, np.generic):
        x = x.item()
    if isinstance(x, float) and not math.isfinite(x):
        return None
    return x


def result_dict(ev: Evaluation, per_code: bool, stats: MonteCarloResult | None = None
                ) -> dict[str, Any]:
    """One candidate's JSON object (keys fixed by the command-line contract)."""
    d = ev.design
    out: dict[str, Any] = {
        "name": d.label, "topology": d.topology, "output": d.output, "bits": d.bits,
        "summary": {k: _plain(v) for k, v in ev.summary.items()},
        "parts": [{k: _plain(v) for k, v in p.items()} for p in ev.parts],
    }
    if per_code:
        out["per_code"] = {
            "code": ev.codes.tolist(),
            **{k: [_plain(float(x)) for x in getattr(ev, k)]
               for k in ("vout", "rout", "iref", "inl_endpoint", "inl_bestfit", "dnl")},
        }
    if stats is not None:
        out["statistics"] = stats.to_dict()
    return out


def _cell(key: str, value: Any) -> str:
    unit = SUMMARY_KEYS.get(key, ("", ""))[1]
    if isinstance(value, bool):
        return "yes" if value else "no"
    if isinstance(value, int):
        return str(value)
    if unit in {"V", "Ω", "A", "W", "s", "V/√Hz"}:
        return format_value(value, unit)
    if unit == "fraction":
        return f"{value * 100:.4g} %"
    return f"{value:.5g}" + (f" {unit}" if unit and unit not in {"×"} else "")


def render_table(evs: list[Evaluation]) -> str:
    """Aligned text: one row per summary figure, one column per candidate."""
    rows = [["", *[e.design.label for e in evs]]]
    keys = [k for k in evs[0].summary if all(k in e.summary for e in evs)]
    for key in keys:
        label = SUMMARY_KEYS.get(key, (key, ""))[0]
        rows.append([label, *[_cell(key, e.summary[key]) for e in evs]])
    widths = [max(len(r[i]) for r in rows) for i in range(len(rows[0]))]
    return "\n".join("  ".join(c.ljust(w) for c, w in zip(r, widths, strict=True)).rstrip()
                     for r in rows)


def render_csv(evs: list[Evaluation], per_code: bool, stats: list[MonteCarloResult] | None = None
               ) -> str:
    """CSV: the summary (metric, one column per candidate), the statistics' ``stat.*`` rows when
    given, then per-code rows if asked."""
    buf = io.StringIO()
    w = csv.writer(buf, lineterminator="\n")
    w.writerow(["metric", *[e.design.label for e in evs]])
    for key in evs[0].summary:
        w.writerow([key, *[_plain(e.summary.get(key)) for e in evs]])
    for row in stats_csv_rows(stats) if stats else []:
        w.writerow([row[0], *[_plain(x) for x in row[1:]]])
    if per_code:
        w.writerow([])
        names = ("vout", "rout", "iref", "inl_endpoint", "inl_bestfit", "dnl")
        w.writerow(["candidate", "code", *names])
        for e in evs:
            pc = e.per_code()
            for i, code in enumerate(e.codes):
                w.writerow([e.design.label, int(code),
                            *[repr(float(pc[n][i])) if math.isfinite(pc[n][i]) else ""
                              for n in names]])
    return buf.getvalue()


def _statistics(args: argparse.Namespace, designs: list) -> list[MonteCarloResult] | None:
    """Monte Carlo results per candidate when ``--trials`` is given (plans checked first)."""
    if args.trials is None:
        if args.seed is not None:
            raise RungwiseError("--seed needs --trials")
        return None
    targets, seed = Targets(), args.seed
    if getattr(args, "design", None) is not None:
        doc = load_document(args.design)
        targets = doc.targets
        seed = doc.analysis.seed if seed is None else seed
    trials, seed = check_run(args.trials, seed)
    for d in designs:
        plan = plan_run(d, trials)
        if plan.n_batches > 10:
            print(f"rungwise: statistics of {d.label}: {plan.describe()}", file=sys.stderr)
    return [monte_carlo(d, trials, seed, targets=targets) for d in designs]


def run(args: argparse.Namespace) -> int:
    """Evaluate and print; returns the exit code."""
    designs = chosen_candidates(args)
    evs = [evaluate(d) for d in designs]
    stats = _statistics(args, designs)
    if args.format == "json":
        text = json.dumps({"results": [result_dict(e, args.per_code, s) for e, s in
                                       zip(evs, stats or [None] * len(evs), strict=True)]},
                          indent=1)
    elif args.format == "csv":
        text = render_csv(evs, args.per_code, stats)
    else:
        text = render_table(evs)
        if stats:
            text += "\n\n" + render_stats_table([e.design.label for e in evs], stats)
        if args.per_code:
            text += "\n\n" + render_csv(evs, True).split("\n\n", 1)[1]
    sys.stdout.write(text.rstrip("\n") + "\n")
    return 0
