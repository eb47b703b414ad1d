"""Which candidates a headless command works on: a design file, the demo, ``--set`` and
``--topology`` choices. Shared by every command so they all read inputs the same way.
"""

from __future__ import annotations

import argparse
from pathlib import Path

from rungwise.core import designfile
from rungwise.core.demo import demo_candidates
from rungwise.core.design import Design
from rungwise.core.designfile import DesignFile
from rungwise.core.errors import DesignError, RungwiseError
from rungwise.core.types import OUTPUTS_BY_TOPOLOGY, TOPOLOGIES


def pick_candidate(candidates: list[Design], choice: str | None) -> Design:
    """The candidate named or numbered (from 1) by ``choice``; the first when ``None``."""
    if choice is None:
        return candidates[0]
    for d in candidates:
        if d.label == choice:
            return d
    if choice.isdigit() and 1 <= int(choice) <= len(candidates):
        return candidates[int(choice) - 1]
    names = ", ".join(f"{i}: {d.label}" for i, d in enumerate(candidates, start=1))
    raise DesignError("candidate", f"no candidate {choice!r}; choose one of {names}")


def load_candidates(path: str | None) -> list[Design]:
    """Candidates from a design file, or the demo's when ``path`` is ``None``."""
    return load_document(path).candidates


def load_document(path: str | None) -> DesignFile:
    """A whole design file (candidates, analysis settings, targets), or the demo's."""
    if path is None:
        return DesignFile(demo_candidates())
    return designfile.load(Path(path))


def apply_choices(base: list[Design], settings: dict[str, str], topologies: list[str] | None
                  ) -> list[Design]:
    """Apply ``--set`` to every candidate; ``--topology T[:OUTPUT]`` replaces the candidate list
    with one candidate per choice built from the first candidate's values, named after its
    network. ``--set topology=`` / ``output=`` are refused: a candidate's name must not
    contradict its network, so the network is chosen with ``--topology``."""
    for key in ("topology", "output"):
        if key in settings:
            raise DesignError(key, f"--set cannot change a candidate's network (its name would "
                              f"no longer match); use --topology TOPOLOGY[:OUTPUT], e.g. "
                              f"--topology {settings[key] if key == 'topology' else 'r2r-voltage'}"
                              + ("" if key == "topology" else f":{settings[key]}"))
    if topologies:
        first = base[0]
        chosen = []
        for choice in topologies:
            topo, _, output = choice.partition(":")
            if topo not in TOPOLOGIES:
                raise DesignError("topology", f"unknown topology {topo!r}; choose one of "
                                  + ", ".join(TOPOLOGIES))
            if output and output not in OUTPUTS_BY_TOPOLOGY[topo]:
                raise DesignError("output", f"{output!r} is not an output of {topo}; choose one "
                                  "of " + ", ".join(OUTPUTS_BY_TOPOLOGY[topo]))
            chosen.append(first.replace(topology=topo, output=output or None, name=""))
        base = chosen
    return [d.with_settings(settings) if settings else d for d in base]


def add_choice_arguments(p: argparse.ArgumentParser, with_design: bool = True) -> None:
    """The options every command shares: the design file (optional), ``--set`` and ``--topology``.
    Read them back with :func:`chosen_candidates`."""
    if with_design:
        p.add_argument("design", nargs="?", help="design file (default: the built-in demo)")
    p.add_argument("--set", dest="settings", action="append", metavar="KEY=VALUE",
                   help="change a design value for every candidate, e.g. unit_r=4k7 (repeatable)")
    p.add_argument("--topology", action="append", metavar="TOPOLOGY[:OUTPUT]",
                   help="compare these topologies instead of the file's candidates (repeatable)")


def chosen_candidates(args: argparse.Namespace, path: str | None = None) -> list[Design]:
    """The candidates the shared options select (``path`` overrides ``args.design``)."""
    source = path if path is not None else getattr(args, "design", None)
    return apply_choices(load_candidates(source), parse_settings(args.settings), args.topology)


def parse_settings(pairs: list[str] | None) -> dict[str, str]:
    """``["unit_r=4k7", "bits=10"]`` → ``{"unit_r": "4k7", "bits": "10"}``."""
    out: dict[str, str] = {}
    for item in pairs or []:
        key, sep, value = item.partition("=")
        if not sep or not key.strip():
            raise RungwiseError(f"--set expects key=value, got {item!r}")
        out[key.strip()] = value.strip()
    return out
