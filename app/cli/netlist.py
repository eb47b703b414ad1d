"""``rungwise netlist``: one candidate as built, as a SPICE netlist for a circuit simulator."""

from __future__ import annotations

import argparse
import sys
from pathlib import Path

from rungwise.core.atomic import write_atomically
from rungwise.core.errors import DesignError, RungwiseError
from rungwise.core.netlist import spice_netlist
from rungwise.core.version import program_version

from .candidates import add_choice_arguments, chosen_candidates, pick_candidate

NAME = "netlist"
HELP = ("Write one candidate as built as a SPICE netlist (switches in the state of --code, or a dc "
        "sweep over every code with --all-codes); 'ngspice -b FILE.cir' prints v(out).")


def add_arguments(p: argparse.ArgumentParser) -> None:
    """Options of ``netlist``."""
    add_choice_arguments(p)
    p.add_argument("--candidate", metavar="NAME|NUMBER",
                   help="which candidate (its name, or its number from 1; default: the first)")
    which = p.add_mutually_exclusive_group(required=True)
    which.add_argument("--code", metavar="K", help="input code whose switch states are written "
                       "(0 … 2^N − 1; also 0x.. or 0b..)")
    which.add_argument("--all-codes", action="store_true",
                       help="sweep a code voltage over every code (a dc analysis)")
    p.add_argument("-o", "--output", metavar="FILE.cir", help="netlist to write (default: print)")


def _code(text: str, bits: int) -> int:
    try:
        code = int(text.strip().replace("_", ""), 0)
    except ValueError:
        code = -1
    if not 0 <= code < 2**bits:
        raise DesignError("code", f"{text!r} is not a code of this {bits}-bit design; allowed: a "
                          f"whole number from 0 to {2**bits - 1}")
    return code


def run(args: argparse.Namespace) -> int:
    """Write the netlist; returns the exit code."""
    design = pick_candidate(chosen_candidates(args), args.candidate)
    code = None if args.all_codes else _code(args.code, design.bits)
    source = Path(args.design).name if args.design else "the built-in demo"
    text = spice_netlist(design, code=code, all_codes=args.all_codes,
                         version=program_version(), source=source)
    if not args.output:
        sys.stdout.write(text)
        return 0
    out = Path(args.output)
    try:
        write_atomically(out, lambda tmp: Path(tmp).write_text(text, encoding="utf-8"))
    except OSError as exc:
        raise RungwiseError(f"cannot write {out}: {exc.strerror or exc}") from None
    print(f"wrote {out}", file=sys.stderr)
    return 0
