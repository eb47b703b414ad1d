"""Option sets (as ``Literal`` aliases) and physical constants shared by the whole core.

UI lists and validation are derived from these aliases with ``typing.get_args`` so that a new
option is added in exactly one place.
"""

from __future__ import annotations

from typing import Literal, get_args

Topology = Literal["binary-weighted", "r2r-voltage", "r2r-current", "segmented", "string"]
"""Network families the engine can build."""

TOPOLOGIES: tuple[str, ...] = get_args(Topology)
"""Every topology name, in display order."""

OUTPUTS_BY_TOPOLOGY: dict[str, tuple[str, ...]] = {
    "binary-weighted": ("divider", "terminated-divider", "summing-amp"),
    "r2r-voltage": ("unbuffered", "buffer"),
    "r2r-current": ("transimpedance",),
    "segmented": ("unbuffered", "buffer"),
    "string": ("unbuffered", "buffer"),
}
"""Allowed output variants per topology; the first is the default."""

Series = Literal["exact", "E3", "E6", "E12", "E24", "E48", "E96", "E192"]
"""Preferred-value series part values snap to (IEC 60063), or ``"exact"`` for none."""

SERIES: tuple[str, ...] = get_args(Series)
"""Every series name, ``"exact"`` (no snapping) first."""

BOLTZMANN = 1.380649e-23
"""Boltzmann constant, J/K (exact since the 2019 SI redefinition)."""

ZERO_CELSIUS = 273.15
"""0 °C in kelvin, K."""

MAX_BITS = 24
"""Largest resolution the engine accepts, bits."""

MAX_ARRAY_BITS = 16
"""Largest resolution of a resistor string and largest thermometer segment count, bits (2^N parts)."""
