"""``rungwise bom``: the bill of materials of each candidate as CSV, overloads flagged."""

from __future__ import annotations

import argparse
import sys
from pathlib import Path

from rungwise.core import evaluate
from rungwise.core.errors import RungwiseError
from rungwise.core.parts.bom import CAUTION, bill_of_materials, to_csv

from .candidates import add_choice_arguments, chosen_candidates

NAME = "bom"
HELP = "Write the bill of materials (designators, values, ratings, quantities) as CSV."


def add_arguments(p: argparse.ArgumentParser) -> None:
    """Options of ``bom``."""
    add_choice_arguments(p)
    p.add_argument("-o", "--output", metavar="FILE", help="CSV file to write (default: print)")


def run(args: argparse.Namespace) -> int:
    """Write the CSV; overloads are also reported on stderr with the caution."""
    designs = chosen_candidates(args)
    boms = [(d.label, bill_of_materials(evaluate(d))) for d in designs]
    text = to_csv(boms)
    if args.output:
        try:
            Path(args.output).write_text(text, encoding="utf-8")
        except OSError as exc:
            raise RungwiseError(f"cannot write {args.output}: {exc.strerror or exc}") from exc
    else:
        sys.stdout.write(text)
    flagged = [(label, ln) for label, lines in boms for ln in lines if ln.flagged]
    for label, ln in flagged:
        print(f"rungwise: warning: {label}: {ln.designators}: {ln.note}", file=sys.stderr)
    if flagged:
        print(f"rungwise: caution: {CAUTION}", file=sys.stderr)
    return 0
