"""Voltage-mode R-2R ladder: 2R legs switched between reference and ground, 2R terminator at the
LSB end, output at the MSB end (ideal Vout = Vref·k/2^N, Thevenin resistance R at every code).

Nodes ``n0`` (LSB) … ``n{N−1}`` (output); ``series{k}`` joins ``n{k}`` and ``n{k+1}``.
Output variants: ``unbuffered`` (load on the ladder) and ``buffer`` (ideal amplifier of ``gain``).
"""

from __future__ import annotations

from ..design import Design
from ..network import GROUND, Network, Output, Part, Resistor, SwitchedLeg, binary_decoder
from .common import reference, value


def part_ids(output: str, bits: int) -> list[str]:
    """Part ids in display order."""
    return ([f"leg{k}" for k in range(bits)] + [f"series{k}" for k in range(bits - 1)]
            + ["term"])


def build(design: Design) -> Network:
    """The voltage-mode ladder of ``design`` (see module docstring)."""
    n, r = design.bits, design.unit_r
    fixed, resistors, source = reference(design)
    legs, parts = [], []
    for k in range(n):
        ohms = value(design, f"leg{k}", 2 * r)
        legs.append(SwitchedLeg(f"leg{k}", "leg", f"n{k}", "ref", GROUND, ohms,
                                design.ron_high, design.ron_low))
        parts.append(Part(f"leg{k}", "leg", ohms))
    for k in range(n - 1):
        res = Resistor(f"series{k}", "series", f"n{k}", f"n{k + 1}", value(design, f"series{k}", r))
        resistors.append(res)
        parts.append(Part(res.part_id, "series", res.ohms))
    term = Resistor("term", "termination", "n0", GROUND, value(design, "term", 2 * r))
    resistors.append(term)
    parts.append(Part("term", "termination", term.ohms))
    buffered = design.output == "buffer"
    output = Output("node", f"n{n - 1}", buffered=buffered, gain=design.gain if buffered else 1.0,
                    load_ohms=design.load_r)
    return Network(fixed=fixed, source=source, resistors=resistors, legs=legs, n_codes=2**n,
                   decode=binary_decoder(list(range(n))), output=output, parts=parts,
                   counts={"switches": n, "amplifiers": int(buffered)},
                   ideal_lsb=design.vref / 2**n * (design.gain if buffered else 1.0))
