"""Part ids: the one spelling of every part's id, used by the builders that make the parts and by
the design checks that validate ``parts`` and ``tempco_parts`` (a leaf: it imports nothing).

Ids per topology, in display order (N = bits, M = thermometer bits, L = N − M):

- R-2R (voltage and current mode): ``leg0 … leg{N−1}``, ``series0 … series{N−2}``, ``term``
  (current mode adds ``feedback``);
- binary-weighted: ``bit0 … bit{N−1}`` (plus ``term`` for the terminated divider, ``feedback`` for
  the summing amplifier);
- segmented: ``seg0 … seg{2^M−2}``, then the R-2R section's ids for L bits — or, built as a unit
  array, ``bit0 … bit{L−1}``, ``term``;
- string: ``string0 … string{2^N−1}`` from the ground end.
"""

from __future__ import annotations

from collections.abc import Mapping

TERM = "term"
"""The terminating resistor."""

FEEDBACK = "feedback"
"""The amplifier's feedback resistor."""

REF_R = "ref_r"
"""The reference's output resistance (not a board part)."""

SEG, STRING = "seg", "string"
"""Prefixes of array-held parts: thermometer segments, string resistors."""


def leg(k: int) -> str:
    """The 2R leg of ladder bit ``k``."""
    return f"leg{k}"


def series(k: int) -> str:
    """The series resistor joining ladder nodes ``k`` and ``k + 1``."""
    return f"series{k}"


def bit(k: int) -> str:
    """The resistor of binary bit ``k``."""
    return f"bit{k}"


def seg(i: int) -> str:
    """Thermometer segment ``i``."""
    return f"{SEG}{i}"


def r2r_ids(bits: int) -> list[str]:
    """An R-2R section of ``bits`` legs."""
    return [leg(k) for k in range(bits)] + [series(k) for k in range(bits - 1)] + [TERM]


def binary_ids(output: str, bits: int) -> list[str]:
    """A binary-weighted network with ``output``."""
    ids = [bit(k) for k in range(bits)]
    if output == "terminated-divider":
        ids.append(TERM)
    if output == "summing-amp":
        ids.append(FEEDBACK)
    return ids


def unit_array_ids(bits: int) -> list[str]:
    """A unit-element binary section of ``bits`` bits and its terminator."""
    return [bit(k) for k in range(bits)] + [TERM]


def segmented_ids(bits: int, thermometer_bits: int, lsb_section: str = "r2r") -> list[str]:
    """A segmented network: segments, then its binary section's ids."""
    lad = bits - thermometer_bits
    section = unit_array_ids(lad) if lsb_section == "unit-array" else r2r_ids(lad)
    return [seg(i) for i in range(2**thermometer_bits - 1)] + section


def string_ids(bits: int) -> list[str]:
    """A resistor string of 2^bits resistors, from the ground end."""
    return [f"{STRING}{i}" for i in range(2**bits)]


def part_ids(topology: str, output: str, bits: int, thermometer_bits: int = 0,
             build: Mapping[str, str] | None = None) -> list[str]:
    """Every part id a design of this topology, output and resolution has, in display order
    (``thermometer_bits`` and the ``build`` table's ``lsb_section`` matter to segmented designs
    only)."""
    if topology in ("r2r-voltage", "r2r-current"):
        return r2r_ids(bits) + ([FEEDBACK] if topology == "r2r-current" else [])
    if topology == "binary-weighted":
        return binary_ids(output, bits)
    if topology == "segmented":
        return segmented_ids(bits, thermometer_bits, (build or {}).get("lsb_section", "r2r"))
    if topology == "string":
        return string_ids(bits)
    raise ValueError(f"unknown topology {topology!r}")
