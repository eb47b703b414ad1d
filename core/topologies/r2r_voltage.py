"""Voltage-mode R-2R ladder: 2R legs switched between reference and ground, 2R terminator at the
LSB end, output at the MSB end (ideal Vout = Vref·k/2^N, Thevenin resistance R at every code).

Nodes ``n0`` (LSB) … ``n{N−1}`` (output); ``series{k}`` joins ``n{k}`` and ``n{k+1}``.
Output variants: ``unbuffered`` (load on the ladder) and ``buffer`` (ideal amplifier of ``gain``).
"""

from __future__ import annotations

from ..design import Design
from ..network import Network, Output, binary_decoder
from .common import r2r_section, reference


def build(design: Design) -> Network:
    """The voltage-mode ladder of ``design`` (see module docstring)."""
    n, r = design.bits, design.unit_r
    fixed, resistors, source = reference(design)
    legs, ladder, parts = r2r_section(design, n, "ref", 2 * r)
    resistors += ladder
    buffered = design.output == "buffer"
    output = Output("node", f"n{n - 1}", buffered=buffered, gain=design.gain if buffered else 1.0,
                    load_ohms=design.load_r)
    return Network(fixed=fixed, source=source, resistors=resistors, legs=legs, n_codes=2**n,
                   decode=binary_decoder(list(range(n))), output=output, parts=parts,
                   counts={"switches": n, "amplifiers": int(buffered)},
                   ideal_lsb=design.vref / 2**n * (design.gain if buffered else 1.0))
