"""Option sets (as ``Literal`` aliases) and physical constants shared by the whole core.

UI lists and validation are derived from these aliases with ``typing.get_args`` so that a new
option is added in exactly one place.
"""

from __future__ import annotations

from typing import Literal, get_args

Topology = Literal["binary-weighted", "r2r-voltage", "r2r-current"]
"""Network families the engine can build."""

OutputVariant = Literal[
    "divider", "terminated-divider", "summing-amp", "unbuffered", "buffer", "transimpedance"
]
"""How a network's output is taken (which variants a topology allows: ``OUTPUTS_BY_TOPOLOGY``)."""

TOPOLOGIES: tuple[str, ...] = get_args(Topology)
"""Every topology name, in display order."""

OUTPUTS_BY_TOPOLOGY: dict[str, tuple[str, ...]] = {
    "binary-weighted": ("divider", "terminated-divider", "summing-amp"),
    "r2r-voltage": ("unbuffered", "buffer"),
    "r2r-current": ("transimpedance",),
}
"""Allowed output variants per topology; the first is the default."""

BOLTZMANN = 1.380649e-23
"""Boltzmann constant, J/K (exact since the 2019 SI redefinition)."""

ZERO_CELSIUS = 273.15
"""0 °C in kelvin, K."""

MAX_BITS = 24
"""Largest resolution the engine accepts, bits."""
