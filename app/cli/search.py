"""``rungwise search``: the cheapest design that meets the targets, over a space of networks, unit
values, series and tolerance grades (``rungwise.core.space_search``).

The base design is the file's first candidate (or the demo's) with ``--set`` applied; the file's
``[search]`` table gives the question, and each option here overrides its part of it. Costs come
from the file's ``[cost]`` table or the invented example prices (said in every output).
"""

from __future__ import annotations

import argparse
import csv
import io
import json
import math
import sys
from pathlib import Path
from typing import Any

from rungwise.core.search_question import SearchQuestion
from rungwise.core.search_report import TABLE_HEAD, search_summary
from rungwise.core.space_search import SearchResult, iter_search

from .candidates import apply_choices, load_document, parse_settings
from .progress import StderrProgress

NAME = "search"
HELP = ("Find the cheapest design that meets the targets: networks, thermometer bits, unit R, "
        "series and tolerance grades tried; yields decided at a stated confidence.")

CSV_COLUMNS = ("rank", "cost", "meets", "verdict", "yield", "yield_stderr", "yield_lower", "trials",
               "resistors", "switches", "amplifiers", "topology", "output", "thermometer_bits",
               "unit_r", "series", "tolerance", "prices")
"""Columns of ``--format csv`` (one row per design judged by Monte Carlo, cheapest first)."""


def add_arguments(p: argparse.ArgumentParser) -> None:
    """Options of ``search``."""
    p.add_argument("design", nargs="?", help="design file (default: the built-in demo); its first "
                   "candidate is the base, its [search] and [cost] tables are used")
    p.add_argument("--topology", action="append", metavar="T[:OUTPUT]",
                   help="networks to try (repeatable; default: every one of the base output's kind)")
    p.add_argument("--set", dest="settings", action="append", metavar="KEY=VALUE",
                   help="change a value of the base design, e.g. bits=10 (repeatable)")
    p.add_argument("--grades", metavar="LIST", help="tolerance grades, e.g. 1%%,0.5%%,0.1%%")
    p.add_argument("--series", metavar="LIST", help="part series, e.g. exact,E24,E96")
    p.add_argument("--thermometer-bits", metavar="RANGE", help="segmented M, e.g. 0-6 or 2,4")
    p.add_argument("--build", action="append", metavar="STYLE",
                   help="build styles to try (repeatable): as-designed, binary=unit-array, "
                        "two_r=two-units, lsb_section=unit-array (default: the base's)")
    p.add_argument("--unit-r", metavar="RANGE", help="unit R range (values of --unit-series) or "
                   "list, e.g. 1k-100k or 4k7,10k")
    p.add_argument("--unit-series", default=None, metavar="E6",
                   help="series the --unit-r range takes values from (default E6)")
    p.add_argument("--target-yield", metavar="P", help="yield to meet, e.g. 99%% (default: "
                   "[targets] min_yield)")
    p.add_argument("--criterion", choices=("monotonic", "dnl", "inl", "all"),
                   help="what a board must meet (default all)")
    p.add_argument("--trials", type=int, help="Monte Carlo budget per point (early stopping uses "
                   "fewer when decided)")
    p.add_argument("--seed", type=int, help="seed of every point's Monte Carlo run")
    p.add_argument("--confidence", metavar="C", help="confidence of each decision (default 95%%)")
    p.add_argument("--method", choices=("clopper-pearson", "wilson", "wald-sprt"),
                   help="how yields are decided (default clopper-pearson)")
    p.add_argument("--max-iref", metavar="A", help="largest reference current, e.g. 1m")
    p.add_argument("--max-rout", metavar="OHMS", help="largest output resistance")
    p.add_argument("--max-settling", metavar="S", help="longest settling to ½ LSB (needs load_c)")
    p.add_argument("--max-noise-lsb", metavar="LSB", help="largest thermal noise RMS, LSB")
    p.add_argument("--max-glitch", metavar="VS", help="largest glitch impulse, V·s (e.g. 1p)")
    p.add_argument("--max-transition-settling", metavar="S",
                   help="longest settling of any code transition to ½ LSB")
    p.add_argument("--workers", type=int, default=None, help="processes (default: up to 4)")
    p.add_argument("--format", choices=("table", "json", "csv"), default="table")
    p.add_argument("-o", "--output", metavar="FILE", help="write to FILE instead of the screen")


def question_from(args: argparse.Namespace, base_question: SearchQuestion | None) -> SearchQuestion:
    """The file's question (or the default) with every given option applied."""
    texts = {"topologies": args.topology, "grades": args.grades, "series": args.series,
             "thermometer_bits": args.thermometer_bits, "unit_r": args.unit_r,
             "builds": args.build,
             "unit_series": args.unit_series, "target_yield": args.target_yield,
             "confidence": args.confidence, "criterion": args.criterion, "trials": args.trials,
             "seed": args.seed, "method": args.method, "max_iref": args.max_iref,
             "max_rout": args.max_rout, "max_settling": args.max_settling,
             "max_noise_lsb": args.max_noise_lsb, "max_glitch": args.max_glitch,
             "max_transition_settling": args.max_transition_settling}
    return (base_question or SearchQuestion()).updated(texts)


def _num(x: float) -> Any:
    return "" if not math.isfinite(x) else x


def render_csv(result: SearchResult) -> str:
    """One row per judged design, cheapest first (``CSV_COLUMNS``)."""
    buf = io.StringIO()
    w = csv.writer(buf, lineterminator="\n")
    w.writerow(CSV_COLUMNS)
    for i, p in enumerate(result.decided, 1):
        d = p.design
        r, s, a = p.counts()
        w.writerow([i, p.cost, p.meets, p.verdict, _num(p.yield_), _num(p.yield_stderr),
                    _num(p.yield_lower), p.trials, r, s, a, d.topology, d.output,
                    d.thermometer_bits if d.topology == "segmented" else "", d.unit_r, d.series,
                    p.grade, result.prices])
    return buf.getvalue()


def _aligned(head: tuple[str, ...], rows: list[list[str]]) -> list[str]:
    widths = [max(len(str(x)) for x in col) for col in zip(head, *rows, strict=True)]
    return ["  ".join(str(x).ljust(wd) for x, wd in zip(row, widths, strict=True)).rstrip()
            for row in (list(head), *rows)]


def render_table(result: SearchResult, rows: int = 15) -> str:
    """The question, the answer, the cheapest designs, the front and why the others lost."""
    s = search_summary(result, rows=rows)
    out = ["Question:", *(f"  {line}" for line in s.question), "", s.answer, ""]
    if s.cost_lines:
        out += ["Cost of the answer: " + "; ".join(s.cost_lines), ""]
    out += [f"Cheapest {len(s.rows)} of {len(result.decided)} designs judged by Monte Carlo "
            f"(costs: {s.prices}):", *_aligned(TABLE_HEAD, s.rows), ""]
    if s.front:
        out += ["Pareto front (cost against yield bound and INL):", *_aligned(TABLE_HEAD, s.front),
                ""]
    if s.why_lost:
        out += ["Why the other networks lost:", *(f"  {line}" for line in s.why_lost), ""]
    if result.pruned:
        out.append(f"{len(result.pruned)} points ruled out by their nominal figures (see --format "
                   "json, 'pruned').")
    out.append(f"Method: {s.method}.")
    return "\n".join(out)


def run(args: argparse.Namespace) -> int:
    """Search and write; returns the exit code."""
    doc = load_document(args.design)
    base = apply_choices(doc.candidates[:1], parse_settings(args.settings), None)[0]
    question = question_from(args, doc.search)
    executor = None
    if args.workers is not None:
        from rungwise.core.errors import DesignError
        from rungwise.core.space_search import default_executor

        if not 1 <= args.workers <= 64:
            raise DesignError("workers", f"{args.workers} is out of range; allowed: 1 … 64")
        executor = default_executor(args.workers)
    try:
        with StderrProgress() as progress:
            for last in iter_search(base, question, doc.targets, doc.cost, executor):
                progress(f"search: {last.result.done} of {last.result.total} designs judged")
    finally:
        if executor is not None:
            executor.shutdown()
    result = last.result
    if args.format == "json":
        text = json.dumps(result.to_dict(), indent=1, allow_nan=False)
    elif args.format == "csv":
        text = render_csv(result)
    else:
        text = render_table(result)
    if args.output:
        Path(args.output).write_text(text.rstrip("\n") + "\n", encoding="utf-8")
    else:
        sys.stdout.write(text.rstrip("\n") + "\n")
    return 0
