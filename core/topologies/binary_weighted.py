"""Binary-weighted network: bit k has R·2^(N−1−k) (``unit_r`` is the MSB resistor); with a skew
``series_ratio`` = ρ ≠ 1 (per-bit build only) bit k has R·(2ρ)^(N−1−k).

Outputs: ``divider`` (all bit resistors meet at the output; ideal Vout = Vref·k/(2^N − 1)),
``terminated-divider`` (``term`` = R·2^(N−1) to ground; ideal Vout = Vref·k/2^N) and ``summing-amp``
(virtual ground, ``feedback`` default R/2; ideal Vout = −Vref·k/2^N).
"""

from __future__ import annotations

from .. import part_ids as ids
from ..design import Design
from ..network import GROUND, Network, Output, Part, Resistor, SwitchedLeg, binary_decoder
from .common import reference, value


def build(design: Design) -> Network:
    """The binary-weighted network of ``design`` (see module docstring)."""
    n, r = design.bits, design.unit_r
    fixed, resistors, source = reference(design)
    summing = design.output == "summing-amp"
    out_node = "sum" if summing else "out"
    if summing:
        fixed["sum"] = 0.0
    legs, parts = [], []
    for k in range(n):
        ohms = value(design, ids.bit(k), r * (2.0 * _bit_ratio(design)) ** (n - 1 - k))
        legs.append(SwitchedLeg(ids.bit(k), "bit", out_node, "ref", GROUND, ohms,
                                design.ron_high, design.ron_low))
        parts.append(Part(ids.bit(k), "bit", ohms))
    if design.output == "terminated-divider":
        term = Resistor(ids.TERM, "termination", out_node, GROUND,
                        value(design, ids.TERM, r * 2.0 ** (n - 1)))
        resistors.append(term)
        parts.append(Part(ids.TERM, "termination", term.ohms))
    if summing:
        rf = value(design, ids.FEEDBACK, design.feedback_r or r / 2.0)
        parts.append(Part(ids.FEEDBACK, "feedback", rf))
        output = Output("virtual-ground", out_node, feedback_ohms=rf)
    else:
        output = Output("node", out_node, load_ohms=design.load_r)
    return Network(fixed=fixed, source=source, resistors=resistors, legs=legs, n_codes=2**n,
                   decode=binary_decoder(list(range(n))), output=output, parts=parts,
                   counts={"switches": n, "amplifiers": int(summing)},
                   ideal_lsb=_ideal_lsb(design))


def _bit_ratio(design: Design) -> float:
    """The design's skew as it applies to the bit resistors: ``series_ratio`` for a per-bit build,
    1 for a unit-element array (whose bits are counts of equal units)."""
    if design.build.get("binary", "per-bit") == "unit-array":
        return 1.0
    return design.series_ratio


def _ideal_lsb(design: Design) -> float:
    """Vref/(2^N − 1) plain divider, Vref/2^N terminated, −Vref/2^N·(Rf/(R/2)) summing, volts."""
    n = design.bits
    if design.output == "divider":
        return design.vref / (2**n - 1)
    if design.output == "summing-amp":
        rf = design.feedback_r or design.unit_r / 2.0
        return -design.vref / 2**n * rf / (design.unit_r / 2.0)
    return design.vref / 2**n
