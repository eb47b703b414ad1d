"""Human names for networks and outputs, shown in the window, tables and legends.

The ids (``r2r-voltage``, ``terminated-divider``) stay in design files, JSON and ``--topology``;
only what a person reads uses these names.
"""

from __future__ import annotations

TOPOLOGY_NAMES: dict[str, str] = {
    "binary-weighted": "Binary-weighted",
    "r2r-voltage": "R-2R ladder, voltage out",
    "r2r-current": "R-2R ladder, current out",
    "segmented": "Segmented ladder",
    "string": "Resistor string",
}
"""Topology id → name shown."""

OUTPUT_NAMES: dict[str, str] = {
    "divider": "divider, open",
    "terminated-divider": "divider, terminated",
    "summing-amp": "summing amplifier",
    "unbuffered": "unbuffered",
    "buffer": "buffered",
    "transimpedance": "into an amplifier",
}
"""Output id → name shown."""


def topology_name(topology: str) -> str:
    """The network's human name (the id itself when unknown)."""
    return TOPOLOGY_NAMES.get(topology, topology)


def output_name(output: str | None) -> str:
    """The output's human name (the id itself when unknown)."""
    return OUTPUT_NAMES.get(output or "", output or "")


def network_name(topology: str, output: str | None) -> str:
    """``"R-2R ladder, voltage out (unbuffered)"``."""
    return f"{topology_name(topology)} ({output_name(output)})"
