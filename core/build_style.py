"""Build styles: how each network part is made of physical resistors (the design's ``build`` table).

``build = {binary = "per-bit" | "unit-array", two_r = "single" | "two-units",
lsb_section = "r2r" | "unit-array"}``

- ``binary = "unit-array"``: a binary-weighted network made of equal unit resistors, bit k = 2^k
  units of value R·2^(N−1) in parallel (2^N − 1 units in all; the terminating resistor is one more);
- ``two_r = "two-units"``: every 2R part of an R-2R ladder (legs and terminator) is two resistors of
  value R in series;
- ``lsb_section = "unit-array"`` (segmented designs): the L = N − M binary bits are a unit-element
  array instead of an R-2R section (``topologies/segmented_units.py``): bit k = 2^k units and each
  segment 2^L units in parallel, one unit terminating, all joined at the output.

The style changes the part count (``network.Part.units``) and what the statistics sample: each unit
is drawn on its own and the units are combined in series or parallel into the part's value.
"""

from __future__ import annotations

import dataclasses
from collections.abc import Mapping
from typing import Any, Literal, get_args

from .errors import DesignError
from .network import Network, Part, PartArray, PartList

BinaryBuild = Literal["per-bit", "unit-array"]
"""How a binary-weighted network's bit resistors are made."""

TwoRBuild = Literal["single", "two-units"]
"""How an R-2R ladder's 2R parts are made."""

LsbSection = Literal["r2r", "unit-array"]
"""What a segmented design's binary (LSB) section is made of."""

BUILD_OPTIONS: dict[str, tuple[str, ...]] = {
    "binary": get_args(BinaryBuild),
    "two_r": get_args(TwoRBuild),
    "lsb_section": get_args(LsbSection),
}
"""Build keys and their allowed values; the first value is the default."""

LADDER_TOPOLOGIES = ("r2r-voltage", "r2r-current", "segmented")
"""Topologies whose ``leg`` and ``termination`` parts are the ladder's 2R parts."""



def check_build(data: Mapping[str, Any]) -> dict[str, str]:
    """The validated ``build`` table (only the keys given).

    Raises
    ------
    DesignError
        An unknown key or value, named as ``build.<key>``.
    """
    if not isinstance(data, Mapping):
        raise DesignError("build", 'must be a table, e.g. {binary = "unit-array", two_r = "two-units"}')
    out: dict[str, str] = {}
    for key, value in data.items():
        if key not in BUILD_OPTIONS:
            raise DesignError(f"build.{key}", "unknown build key; known keys: " + ", ".join(BUILD_OPTIONS))
        allowed = BUILD_OPTIONS[key]
        if value not in allowed:
            raise DesignError(f"build.{key}", f"{value!r} is not allowed; choose one of "
                              + ", ".join(allowed))
        out[str(key)] = str(value)
    return out


def build_choice(design: Any, key: str) -> str:
    """The design's choice for build ``key`` (its default when unset)."""
    return design.build.get(key, BUILD_OPTIONS[key][0])


def unit_lsb_section(design: Any) -> bool:
    """Whether ``design`` is segmented with a unit-element binary section."""
    return design.topology == "segmented" and build_choice(design, "lsb_section") == "unit-array"


def unused_build_keys(design: Any) -> dict[str, str]:
    """Build key → why it does not change ``design`` (the window greys such keys out)."""
    out: dict[str, str] = {}
    if design.topology != "binary-weighted":
        out["binary"] = "only a binary-weighted network has one resistor per bit to choose"
    if design.topology not in LADDER_TOPOLOGIES or unit_lsb_section(design):
        out["two_r"] = "only a network with an R-2R ladder has 2R parts"
    if design.topology != "segmented":
        out["lsb_section"] = "only a segmented network has a binary section to choose"
    return out


def _units_of(design: Any, part: Part) -> tuple[int, str]:
    """(unit count, how joined) for one part under the design's build style."""
    if unit_lsb_section(design):  # bit k: 2^k units, a segment 2^L units, the terminator one
        if part.role == "segment":
            return 2 ** (design.bits - design.thermometer_bits), "parallel"
        if part.role == "bit":
            return 2 ** int(part.part_id.removeprefix("bit")), "parallel"
        return 1, "single"
    if part.role == "bit" and build_choice(design, "binary") == "unit-array":
        k = int(part.part_id.removeprefix("bit"))
        return 2**k, "parallel"
    if (design.topology in LADDER_TOPOLOGIES and part.role in {"leg", "termination"}
            and build_choice(design, "two_r") == "two-units"):
        return 2, "series"
    return 1, "single"


def apply_build(design: Any, net: Network) -> Network:
    """``net`` with every part's ``units`` and ``joined`` set from ``design.build`` (in place).

    A :class:`PartArray` block (one role) takes the style of its first part, set once for the
    whole block.
    """
    blocks = []
    for part in (net.parts.blocks if isinstance(net.parts, PartList) else net.parts):
        units, joined = _units_of(design, part.element(0) if isinstance(part, PartArray) else part)
        same = units == part.units and joined == part.joined  # skip a copy
        blocks.append(part if same else dataclasses.replace(part, units=units, joined=joined))
    net.parts = PartList(blocks) if isinstance(net.parts, PartList) else blocks
    return net


def unit_ohms(part: Part) -> float:
    """Nominal value of one unit of ``part``, ohms (series units split it, parallel units multiply)."""
    if part.joined == "series":
        return part.ohms / part.units
    if part.joined == "parallel":
        return part.ohms * part.units
    return part.ohms
