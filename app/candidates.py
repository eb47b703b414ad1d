"""Which candidates a headless command works on: a design file, the demo, ``--set`` and
``--topology`` choices. Shared by every command so they all read inputs the same way.
"""

from __future__ import annotations

from pathlib import Path

from rungwise.core.demo import demo_candidates
from rungwise.core.design import Design
from rungwise.core.errors import DesignError, RungwiseError
from rungwise.core.types import OUTPUTS_BY_TOPOLOGY, TOPOLOGIES


def load_candidates(path: str | None) -> list[Design]:
    """Candidates from a design file, or the demo's when ``path`` is ``None``."""
    if path is None:
        return demo_candidates()
    from rungwise.core import designfile  # present once design files exist

    return designfile.load(Path(path)).candidates


def apply_choices(base: list[Design], settings: dict[str, str], topologies: list[str] | None
                  ) -> list[Design]:
    """Apply ``--set`` to every candidate; ``--topology T[:OUTPUT]`` replaces the candidate list
    with one candidate per choice built from the first candidate's values."""
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


def parse_settings(pairs: list[str] | None) -> dict[str, str]:
    """``["unit_r=4k7", "bits=10"]`` → ``{"unit_r": "4k7", "bits": "10"}``."""
    out: dict[str, str] = {}
    for item in pairs or []:
        key, sep, value = item.partition("=")
        if not sep or not key.strip():
            raise RungwiseError(f"--set expects key=value, got {item!r}")
        out[key.strip()] = value.strip()
    return out
