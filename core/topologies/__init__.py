"""Topology builders: each turns a :class:`Design` into a neutral :class:`Network`.

A builder never solves anything. ``BUILDERS`` maps a topology name to its module; a new topology
registers here and in ``types.Topology``.
"""

from __future__ import annotations

from collections.abc import Mapping
from types import ModuleType

from ..build_style import apply_build
from ..design import Design
from ..network import Network
from ..parts.snapping import snap_network
from . import binary_weighted, r2r_current, r2r_voltage, segmented, string

BUILDERS: dict[str, ModuleType] = {
    "binary-weighted": binary_weighted,
    "r2r-voltage": r2r_voltage,
    "r2r-current": r2r_current,
    "segmented": segmented,
    "string": string,
}
"""Topology name → builder module (with ``build(design)`` and ``part_ids(output, bits)``)."""


def build(design: Design) -> Network:
    """The neutral network of ``design``: parts made up as its build style says, then derived
    values snapped to ``design.series`` (a part of several units snaps its unit)."""
    return snap_network(design, apply_build(design, BUILDERS[design.topology].build(design)))


def part_ids(topology: str, output: str, bits: int, thermometer_bits: int = 0,
             build: Mapping[str, str] | None = None) -> list[str]:
    """Every part id a design of this topology, output and resolution has, in display order
    (``thermometer_bits`` and the ``build`` table's ``lsb_section`` matter to segmented designs
    only)."""
    if topology == "segmented":
        return segmented.part_ids(output, bits, thermometer_bits,
                                  (build or {}).get("lsb_section", "r2r"))
    return BUILDERS[topology].part_ids(output, bits)
