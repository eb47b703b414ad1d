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

from rungwise.core import SUMMARY_KEYS, Evaluation, MonteCarloResult, evaluate, iter_monte_carlo
from rungwise.core.errors import RungwiseError
from rungwise.core.figure_meaning import note_line, numbered
from rungwise.core.formatting import format_quantity
from rungwise.core.grades import CRITERIA
from rungwise.core.metrics.spectrum import percentiles, spectrum_trials
from rungwise.core.montecarlo import check_run, plan_run
from rungwise.core.review import DEFER, voltage_cautions
from rungwise.core.skew import add_skew_figures
from rungwise.core.targets import Targets

from .candidates import add_choice_arguments, chosen_candidates, load_document
from .progress import StderrProgress
from .stats_text import grade_curves, grades_dict, render_stats_table, stats_csv_rows

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
    p.add_argument("--grades", action="store_true",
                   help="with --trials: yield at every standard tolerance grade and the loosest grade "
                   "meeting the target yield")
    p.add_argument("--criterion", choices=CRITERIA, default="all",
                   help="which yield --grades judges (default: every target at once)")


def _plain(x: Any) -> Any:
    """JSON-safe value: numpy scalars to Python, non-finite numbers to null."""
    if isinstance(x, np.generic):
        x = x.item()
    if isinstance(x, float) and not math.isfinite(x):
        return None
    return x


def result_dict(ev: Evaluation, per_code: bool, stats: MonteCarloResult | None = None,
                grades: dict[str, Any] | None = None, spectrum: dict[str, Any] | None = None
                ) -> dict[str, Any]:
    """One candidate's JSON object (keys fixed by the command-line contract)."""
    d = ev.design
    out: dict[str, Any] = {
        "name": d.label, "topology": d.topology, "output": d.output, "bits": d.bits,
        "summary": {k: _plain(v) for k, v in ev.summary.items()},
        "notes": dict(ev.notes),
        "no_meaning": dict(ev.no_meaning),
        "parts": [{k: _plain(v) for k, v in p.items()} for p in ev.parts],
    }
    if per_code:
        pc = ev.per_code()
        out["per_code"] = {
            "code": ev.codes.tolist(),
            **{k: [_plain(float(x)) for x in getattr(ev, k)]
               for k in ("vout", "rout", "iref", "inl_endpoint", "inl_bestfit", "dnl")},
            **{k: [_plain(float(x)) for x in pc[k]] for k in ("glitch", "settling")},
        }
    if stats is not None:
        out["statistics"] = stats.to_dict()
        if grades is not None:
            out["statistics"]["grades"] = grades
        if spectrum is not None:
            out["statistics"]["spectrum"] = spectrum
    return out


def spectrum_statistics(designs: list, trials: int, seed: int) -> list[dict[str, Any]]:
    """The test sine's SFDR, THD, SINAD and ENOB over the same Monte Carlo boards, as
    percentiles per candidate: ``{metric: {"p5", "p50", "p95"}}``."""
    return [percentiles(spectrum_trials(d, trials, seed)) for d in designs]


def _spectrum_lines(labels: list[str], spectra: list[dict[str, Any]]) -> list[str]:
    """Text lines of :func:`spectrum_statistics` for the table output."""
    lines = ["Test sine over the Monte Carlo boards (5th / 50th / 95th percentile)"]
    for label, spec in zip(labels, spectra, strict=True):
        for key, q in spec.items():
            name, unit = _label_unit(key)
            lines.append(f"  {label}: {name}: " + " / ".join(format_quantity(q[p], unit) for p in q))
    return lines


def _label_unit(key: str) -> tuple[str, str]:
    return SUMMARY_KEYS.get(key, (key, ""))


def _cell(key: str, value: Any, reason: str | None, notes: dict[str, int]) -> str:
    """A figure's text; one with no meaning for the inputs is ``no meaning (n)``, its reason listed
    once under the table (a reason in every cell would make every column as wide as a sentence)."""
    if reason:
        return numbered(reason, notes)
    return format_quantity(value, _label_unit(key)[1])


def render_table(evs: list[Evaluation]) -> str:
    """Aligned text: one row per summary figure, one column per candidate."""
    rows = [["", *[e.design.label for e in evs]]]
    keys = [k for k in evs[0].summary if all(k in e.summary for e in evs)]
    reasons: dict[str, int] = {}
    for key in keys:
        label = _label_unit(key)[0]
        rows.append([label, *[_cell(key, e.summary[key], e.no_meaning.get(key), reasons) for e in evs]])
    widths = [max(len(r[i]) for r in rows) for i in range(len(rows[0]))]
    table = "\n".join("  ".join(c.ljust(w) for c, w in zip(r, widths, strict=True)).rstrip()
                      for r in rows)
    notes = [note_line(reason, n) for reason, n in reasons.items()]
    notes += [f"{e.design.label}: {_label_unit(k)[0].strip()}: {text}"
              for e in evs for k, text in e.notes.items()]
    return table + ("\n\n" + "\n".join(notes) if notes else "")


def render_csv(evs: list[Evaluation], per_code: bool, stats: list[MonteCarloResult] | None = None,
               grades: list[dict[str, Any] | None] | None = None,
               spectra: list[dict[str, Any]] | None = None) -> str:
    """CSV: the summary (metric, one column per candidate), the statistics' ``stat.*`` rows when
    given, then per-code rows if asked."""
    buf = io.StringIO()
    w = csv.writer(buf, lineterminator="\n")
    w.writerow(["metric", *[e.design.label for e in evs]])
    for key in evs[0].summary:
        w.writerow([key, *[_plain(e.summary.get(key)) for e in evs]])
    for row in stats_csv_rows(stats, grades) if stats else []:
        w.writerow([row[0], *[_plain(x) for x in row[1:]]])
    for key in spectra[0] if spectra else []:
        for q in spectra[0][key]:
            w.writerow([f"stat.spectrum.{key}.{q}", *[_plain(s[key][q]) for s in spectra]])
    if per_code:
        w.writerow([])
        names = ("vout", "rout", "iref", "inl_endpoint", "inl_bestfit", "dnl", "glitch", "settling")
        w.writerow(["candidate", "code", *names])
        for e in evs:
            pc = e.per_code()
            for i, code in enumerate(e.codes):
                w.writerow([e.design.label, int(code),
                            *[repr(float(pc[n][i])) if math.isfinite(pc[n][i]) else ""
                              for n in names]])
    return buf.getvalue()


def _statistics(args: argparse.Namespace, designs: list
                ) -> tuple[list[MonteCarloResult] | None, list[dict[str, Any] | None] | None]:
    """Monte Carlo results per candidate when ``--trials`` is given (plans checked first), and
    with ``--grades`` each candidate's yield-against-grade summary (``None`` for on-chip)."""
    if args.trials is None:
        for flag, given in (("--seed", args.seed is not None), ("--grades", args.grades)):
            if given:
                raise RungwiseError(f"{flag} needs --trials")
        return None, None
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
    if args.criterion != "all" and not args.grades:
        raise RungwiseError("--criterion needs --grades")
    with StderrProgress() as progress:
        results = []
        for i, d in enumerate(designs):
            for partial in iter_monte_carlo(d, trials, seed, targets=targets, reports=20):
                progress(f"statistics of {d.label} ({i + 1} of {len(designs)}): "
                         f"{partial.done:,} of {trials:,} boards")
            results.append(partial)
        if not args.grades:
            return results, None
        progress("yield against part grade …")
        curves = grade_curves(designs, trials, seed, targets, args.criterion)
    return results, [None if c is None else grades_dict(c, targets.min_yield, targets) for c in curves]


def run(args: argparse.Namespace) -> int:
    """Evaluate and print; returns the exit code."""
    designs = chosen_candidates(args)
    evs = [evaluate(d) for d in designs]
    for e in evs:  # the ratio search costs several worst-case searches: here, not in evaluate
        add_skew_figures(e)
    warned = voltage_cautions(evs)
    for line in [*warned, DEFER] if warned else []:  # on stderr: the figures stay machine-readable
        print(f"rungwise: caution: {line}", file=sys.stderr)
    stats, grades = _statistics(args, designs)
    spectra = spectrum_statistics(designs, stats[0].trials, stats[0].seed) if stats else None
    if args.format == "json":
        none = [None] * len(evs)
        text = json.dumps({"results": [result_dict(e, args.per_code, s, g, p) for e, s, g, p in
                                       zip(evs, stats or none, grades or none, spectra or none,
                                           strict=True)]}, indent=1)
    elif args.format == "csv":
        text = render_csv(evs, args.per_code, stats, grades, spectra)
    else:
        text = render_table(evs)
        if stats:
            labels = [e.design.label for e in evs]
            text += "\n\n" + render_stats_table(labels, stats, grades)
            text += "\n\n" + "\n".join(_spectrum_lines(labels, spectra))
        if args.per_code:
            text += "\n\n" + render_csv(evs, True).split("\n\n", 1)[1]
    sys.stdout.write(text.rstrip("\n") + "\n")
    return 0
