"""``rungwise new``: write a design file — the demo's candidates with the changes asked for."""

from __future__ import annotations

import argparse
import secrets
import sys
from pathlib import Path

from rungwise.core import designfile
from rungwise.core.designfile import DesignFile
from rungwise.core.errors import RungwiseError
from rungwise.core.targets import AnalysisSettings

from .candidates import add_choice_arguments, chosen_candidates

NAME = "new"
HELP = "Write a new design file: the demo's candidates with --set/--topology changes applied."


def add_arguments(p: argparse.ArgumentParser) -> None:
    """Options of ``new``."""
    p.add_argument("path", metavar="DESIGN.toml", help="design file to write ('-': standard output)")
    add_choice_arguments(p, with_design=False)
    p.add_argument("--seed", type=int, help="Monte Carlo seed to save (default: a fresh random one)")
    p.add_argument("--trials", type=int, default=AnalysisSettings().trials,
                   help="Monte Carlo trial count to save (default %(default)s)")
    p.add_argument("--force", action="store_true", help="replace the file if it exists")


def run(args: argparse.Namespace) -> int:
    """Build the candidates, write the file atomically; returns the exit code."""
    path = Path(args.path)
    to_stdout = args.path == "-"
    if not to_stdout and path.exists() and not args.force:
        raise RungwiseError(f"{path} exists; choose another name or add --force to replace it")
    if not to_stdout and not path.parent.is_dir():
        raise RungwiseError(f"folder {path.parent} does not exist")
    designs = chosen_candidates(args)  # no design argument: the demo
    seed = secrets.randbelow(2**31) if args.seed is None else args.seed
    analysis = AnalysisSettings.from_dict({"trials": args.trials, "seed": seed})
    doc = DesignFile(designs, analysis=analysis)
    if to_stdout:
        sys.stdout.write(designfile.dumps(doc))
        return 0
    try:
        designfile.save(path, doc)
    except OSError as exc:
        raise RungwiseError(f"cannot write {path}: {exc.strerror or exc}") from None
    print(f"wrote {path}: {len(designs)} candidates, Monte Carlo seed {seed}", file=sys.stderr)
    return 0
