"""``rungwise export``: the comparison table, per-code values and plots written to files."""

from __future__ import annotations

import argparse
import sys
from pathlib import Path

from rungwise.core import evaluate
from rungwise.core.errors import RungwiseError

from ..export import tables as export_table
from .candidates import add_choice_arguments, chosen_candidates

NAME = "export"
HELP = ("Write the comparison of a design file's candidates: table (.csv .md .html .xlsx), "
        "per-code CSV, bill of materials CSV, plots (PNG/SVG).")


def add_arguments(p: argparse.ArgumentParser) -> None:
    """Options of ``export``."""
    add_choice_arguments(p)
    p.add_argument("--table", metavar="FILE", help="comparison table; format from the extension: "
                   + ", ".join(export_table.TABLE_FORMATS))
    p.add_argument("--per-code", metavar="FILE.csv", help="every code's values of every candidate")
    p.add_argument("--bom", metavar="FILE.csv", help="bill of materials of every candidate")
    p.add_argument("--plots", metavar="DIR", help="folder for the plots (created if missing)")
    p.add_argument("--plot-format", default="png,svg", metavar="png,svg",
                   help="plot formats, comma-separated (default %(default)s)")


def _checked_output(path: str) -> Path:
    out = Path(path)
    if not out.parent.is_dir():
        raise RungwiseError(f"folder {out.parent} does not exist (for {out})")
    return out


def run(args: argparse.Namespace) -> int:
    """Evaluate once and write every export asked for; returns the exit code."""
    if not (args.table or args.per_code or args.plots or args.bom):
        raise RungwiseError("nothing to export: give --table, --per-code, --bom and/or --plots")
    formats = [f.strip().lower() for f in args.plot_format.split(",") if f.strip()]
    bad = [f for f in formats if f not in ("png", "svg")]
    if bad or not formats:
        raise RungwiseError(f"--plot-format: {', '.join(bad) or 'empty'} not supported; use png, svg")
    table = _checked_output(args.table) if args.table else None
    if table is not None:
        fmt = table.suffix.lstrip(".").lower()
        fmt = {"markdown": "md", "htm": "html"}.get(fmt, fmt)
        if fmt not in export_table.TABLE_FORMATS:
            raise RungwiseError(f"--table: cannot tell the format of {table.name}; end the name "
                                "with " + ", ".join("." + f for f in export_table.TABLE_FORMATS))
    per_code = _checked_output(args.per_code) if args.per_code else None
    bom = _checked_output(args.bom) if args.bom else None
    designs = chosen_candidates(args)
    evs = [evaluate(d) for d in designs]
    written: list[Path] = []
    try:
        if table is not None:
            export_table.write_table(table, evs)
            written.append(table)
        if per_code is not None:
            export_table.write_text(per_code, export_table.per_code_csv(evs))
            written.append(per_code)
        if bom is not None:
            export_table.write_text(bom, export_table.bom_csv(evs))
            written.append(bom)
        if args.plots:
            from ..plots.export import export_plots  # imports Qt: only when plots are asked for

            written += export_plots(evs, Path(args.plots), formats)
    except OSError as exc:
        raise RungwiseError(f"cannot write {exc.filename or 'the export'}: "
                            f"{exc.strerror or exc}") from None
    for path in written:
        print(f"wrote {path}", file=sys.stderr)
    return 0
