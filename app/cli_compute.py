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

from rungwise.core import SUMMARY_KEYS, Evaluation, evaluate
from rungwise.core.units import format_value

from .candidates import add_choice_arguments, chosen_candidates

NAME = "compute"
HELP = "Solve candidates at every code and print their figures (json, csv or table)."


def add_arguments(p: argparse.ArgumentParser) -> None:
    """Options of ``compute``."""
    add_choice_arguments(p)
    p.add_argument("--format", choices=("json", "csv", "table"), default="table")
    p.add_argument("--per-code", action="store_true", help="also print every code's values")


def _plain(x: Any) -> Any:
    """JSON-safe value: numpy scalars to Python, non-finite numbers to null."""
    if isinstance(x, np.generic):
        x = x.item()
    if isinstance(x, float) and not math.isfinite(x):
        return None
    return x


def result_dict(ev: Evaluation, per_code: bool) -> dict[str, Any]:
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


def render_csv(evs: list[Evaluation], per_code: bool) -> str:
    """CSV: the summary (metric, one column per candidate), then per-code rows if asked."""
    buf = io.StringIO()
    w = csv.writer(buf, lineterminator="\n")
    w.writerow(["metric", *[e.design.label for e in evs]])
    for key in evs[0].summary:
        w.writerow([key, *[_plain(e.summary.get(key)) for e in evs]])
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


def run(args: argparse.Namespace) -> int:
    """Evaluate and print; returns the exit code."""
    designs = chosen_candidates(args)
    evs = [evaluate(d) for d in designs]
    if args.format == "json":
        text = json.dumps({"results": [result_dict(e, args.per_code) for e in evs]}, indent=1)
    elif args.format == "csv":
        text = render_csv(evs, args.per_code)
    else:
        text = render_table(evs)
        if args.per_code:
            text += "\n\n" + render_csv(evs, True).split("\n\n", 1)[1]
    sys.stdout.write(text.rstrip("\n") + "\n")
    return 0
