"""Resistor string: 2^N equal resistors from the reference to ground and one tap switch.

``string0`` sits at the ground end; code k joins the node above ``string{k−1}`` (code 0: the
ground end) to the output through the tap switch (on-resistance ``ron_high``). Ideal Vout =
Vref·k/2^N; monotonic by construction. The tap's Thevenin resistance is k(2^N − k)R/2^N plus the
switch, so a load bends the transfer (INL). Outputs: ``unbuffered`` and ``buffer``.

The string is one :class:`ResistorChain` and the tap a :class:`Selector`, so a 16-bit string is
solved in closed form in O(2^N) without a matrix (``selector.py``). Part count: 2^N resistors and
2^N tap switches (one per tap; a switch tree would need more switches with fewer in series).
"""

from __future__ import annotations

import numpy as np

from .. import part_ids as ids
from ..design import Design
from ..network import GROUND, Network, Output, PartArray, PartList, ResistorChain, Selector
from .common import reference


def _select(codes: np.ndarray) -> np.ndarray:
    return np.asarray(codes, dtype=np.int64)


def build(design: Design) -> Network:
    """The string network of ``design`` (see module docstring)."""
    n = design.bits
    size = 2**n
    fixed, resistors, source = reference(design)
    ohms = np.full(size, design.unit_r)
    for pid, x in design.parts.items():
        ohms[int(pid[len(ids.STRING):])] = x
    chain = ResistorChain(ids.STRING, "string", GROUND, "ref", "t", ohms)
    parts = PartList([PartArray(ids.STRING, "string", ohms)])  # Part objects only on demand
    buffered = design.output == "buffer"
    output = Output("node", "out", buffered=buffered, gain=design.gain if buffered else 1.0,
                    load_ohms=design.load_r)
    selector = Selector("tap", "tap switch", "out", chain.nodes(), design.ron_high, _select)
    return Network(fixed=fixed, source=source, resistors=resistors, legs=[], n_codes=size,
                   decode=lambda codes: np.zeros((len(codes), 0), dtype=bool), output=output,
                   parts=parts, counts={"switches": size, "amplifiers": int(buffered)},
                   ideal_lsb=design.vref / size * (design.gain if buffered else 1.0),
                   chains=[chain], selector=selector)
