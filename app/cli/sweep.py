"""``rungwise sweep``: every comparison figure of each candidate over a range of bit counts N or
segmented (thermometer) bits M, written as CSV or JSON."""

from __future__ import annotations

import argparse
import csv
import io
import json
import sys
from pathlib import Path

from rungwise.core.mismatch import NUMERIC_SETTINGS
from rungwise.core.ranges import FRACTION, FieldSpec
from rungwise.core.sweep import SWEEP_KEYS, SweepResult, SweepStatistics, iter_sweep, sweep_values
from rungwise.core.sweep_answer import answer_lines

from .candidates import apply_choices, load_candidates, parse_settings
from .compute import _plain
from .progress import StderrProgress

TARGET_YIELD = FieldSpec("Target yield", FRACTION, 0.0, 1.0, low_open=True)
"""What ``--target-yield`` accepts."""

NAME = "sweep"
HELP = ("Sweep the bit count N or a segmented design's thermometer bits M and write every figure "
        "per point (csv or json).")


def add_arguments(p: argparse.ArgumentParser) -> None:
    """Options of ``sweep``."""
    p.add_argument("design", nargs="?", help="design file (default: the built-in demo)")
    p.add_argument("--over", choices=("bits", "thermometer_bits"), default="bits",
                   help="what to vary: the resolution N (2 … 16) or the segmented bits M (0 … N)")
    p.add_argument("--from", dest="start", type=int, required=True, metavar="A", help="first value")
    p.add_argument("--to", dest="stop", type=int, required=True, metavar="B", help="last value")
    p.add_argument("--set", dest="settings", action="append", metavar="KEY=VALUE",
                   help="change a design value for every candidate, e.g. topology=segmented")
    p.add_argument("--topology", action="append", metavar="TOPOLOGY[:OUTPUT]",
                   help="sweep these topologies instead of the file's candidates (repeatable)")
    p.add_argument("--tolerance", metavar="GRADE",
                   help="also run Monte Carlo at this part tolerance (e.g. 0.1%%) and add the yields")
    p.add_argument("--trials", type=int, default=500, help="boards per point with --tolerance")
    p.add_argument("--seed", type=int, default=1, help="seed of every point's Monte Carlo run")
    p.add_argument("--target-yield", default="99%", metavar="YIELD",
                   help="with --tolerance: say on stderr where each candidate first reaches this "
                        "monotonic yield and its part count (default 99%%)")
    p.add_argument("--format", choices=("csv", "json"), default="csv")
    p.add_argument("-o", "--output", metavar="FILE", help="write to FILE instead of the screen")


def render_json(result: SweepResult) -> str:
    """``{"over", "values", "statistics", "points": [{candidate, <over>, note, figures…}]}``."""
    stats = result.statistics
    doc = {
        "over": result.over,
        "values": result.values,
        "statistics": None if stats is None else {"tolerance": stats.tolerance,
                                                   "trials": stats.trials, "seed": stats.seed},
        "units": {k: SWEEP_KEYS[k][1] for k in result.metrics()},
        "points": [{k: _plain(v) for k, v in row.items()} for row in result.rows()],
    }
    return json.dumps(doc, indent=1)


def render_csv(result: SweepResult) -> str:
    """One row per point: candidate, the swept value, note, then every figure."""
    rows = result.rows()
    buf = io.StringIO()
    w = csv.writer(buf, lineterminator="\n")
    keys = ["candidate", result.over, "note", *result.metrics()]
    w.writerow(keys)
    for row in rows:
        w.writerow(["" if _plain(row.get(k)) is None else _plain(row.get(k)) for k in keys])
    return buf.getvalue()


def run(args: argparse.Namespace) -> int:
    """Sweep and write; returns the exit code."""
    values = sweep_values(args.over, args.start, args.stop)
    designs = apply_choices(load_candidates(args.design), parse_settings(args.settings),
                            args.topology)
    stats = None
    if args.tolerance is not None:
        from rungwise.core.montecarlo import check_run

        tol = NUMERIC_SETTINGS["tolerance"].check("tolerance", args.tolerance)
        trials, seed = check_run(args.trials, args.seed)
        stats = SweepStatistics(tol, trials, seed)
        target = TARGET_YIELD.check("target-yield", args.target_yield)
    total = len(designs) * len(values)
    with StderrProgress() as progress:
        for result in iter_sweep(designs, args.over, values, stats):
            progress(f"sweep: {len(result.points)} of {total} points")
    text = render_json(result) if args.format == "json" else render_csv(result)
    if args.output:
        Path(args.output).write_text(text.rstrip("\n") + "\n", encoding="utf-8")
    else:
        sys.stdout.write(text.rstrip("\n") + "\n")
    if stats is not None:
        for line in answer_lines(result, target):
            print(f"rungwise: {line}", file=sys.stderr)
    return 0
