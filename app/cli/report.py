"""``rungwise report``: the design-review report of a design file as PDF (no display needed)."""

from __future__ import annotations

import argparse
import dataclasses
import sys
from pathlib import Path

from rungwise.core.errors import RungwiseError

from .candidates import add_choice_arguments, chosen_candidates, load_document
from .progress import StderrProgress

NAME = "report"
HELP = ("Write the design-review report (PDF): inputs, comparison, plots, statistics, parts, "
        "cautions, method and a recommendation derived from the targets.")


def add_arguments(p: argparse.ArgumentParser) -> None:
    """Options of ``report``."""
    add_choice_arguments(p)
    p.add_argument("-o", "--output", required=True, metavar="FILE.pdf", help="PDF to write")
    p.add_argument("--title", help="report title (default: from the design file's name)")
    p.add_argument("--no-stats", action="store_true",
                   help="leave out the Monte Carlo statistics (faster)")


def run(args: argparse.Namespace) -> int:
    """Gather the figures, write the PDF; returns the exit code."""
    out = Path(args.output)
    if out.suffix.lower() != ".pdf":
        raise RungwiseError(f"-o: the report is a PDF; end the name with .pdf (got {out.name})")
    if not out.parent.is_dir():
        raise RungwiseError(f"folder {out.parent} does not exist (for {out})")
    doc = load_document(args.design)
    doc = dataclasses.replace(doc, candidates=chosen_candidates(args))  # search and cost kept
    title = args.title or (f"Design review: {Path(args.design).stem}" if args.design
                           else "Design review: demo")
    from ..export.report_content import gather
    from ..plots.report_pdf import write_report  # imports Qt: only this command needs it

    source = Path(args.design) if args.design else None
    with StderrProgress() as progress:
        data = gather(doc, title=title, with_stats=not args.no_stats, progress=progress,
                      source=source.name if source else "",
                      file_bytes=source.read_bytes() if source else None)
    try:
        write_report(out, data)
    except OSError as exc:
        raise RungwiseError(f"cannot write {out}: {exc.strerror or exc}") from None
    print(f"wrote {out}\n{data.recommendation.text}", file=sys.stderr)
    return 0
