"""Topology builders: each turns a :class:`Design` into a neutral :class:`Network`.

A builder never solves anything. ``BUILDERS`` maps a topology name to its module; a new topology
registers here and in ``types.Topology``.
"""

from __future__ import annotations

from types import ModuleType

from ..build_style import apply_build
from ..design import Design
from ..network import Network
from ..part_ids import part_ids  # noqa: F401  (the one source, re-exported for callers)
from ..parts.snapping import snap_network
from . import binary_weighted, r2r_current, r2r_voltage, segmented, string

BUILDERS: dict[str, ModuleType] = {
    "binary-weighted": binary_weighted,
    "r2r-voltage": r2r_voltage,
    "r2r-current": r2r_current,
    "segmented": segmented,
    "string": string,
}
"""Topology name → builder module (with ``build(design)``; its part ids are spelled by
:mod:`rungwise.core.part_ids`)."""


def build(design: Design) -> Network:
    """The neutral network of ``design``: parts made up as its build style says, then derived
    values snapped to ``design.series`` (a part of several units snaps its unit)."""
    return snap_network(design, apply_build(design, BUILDERS[design.topology].build(design)))
