"""Current-mode (inverted) R-2R ladder: the reference drives the MSB end ``n{N−1}``; each 2R leg
steers its current to the summing node (bit 1) or to ground (bit 0); a transimpedance amplifier with
``feedback`` (default R) gives ideal Vout = −Vref·k/2^N. The reference sees R at every code.
"""

from __future__ import annotations

from .. import part_ids as ids
from ..design import Design
from ..network import Network, Output, Part, binary_decoder
from .common import r2r_section, reference, value


def build(design: Design) -> Network:
    """The current-mode ladder of ``design`` (see module docstring)."""
    n, r = design.bits, design.unit_r
    top = f"n{n - 1}"
    fixed, resistors, source = reference(design, ref_node=top)
    fixed["sum"] = 0.0
    legs, ladder, parts = r2r_section(design, n, "sum", 2 * r)
    resistors += ladder
    rf = value(design, ids.FEEDBACK, design.feedback_r or r)
    parts.append(Part(ids.FEEDBACK, "feedback", rf))
    return Network(fixed=fixed, source=source, resistors=resistors, legs=legs, n_codes=2**n,
                   decode=binary_decoder(list(range(n))),
                   output=Output("virtual-ground", "sum", feedback_ohms=rf), parts=parts,
                   counts={"switches": n, "amplifiers": 1},
                   ideal_lsb=-design.vref / 2**n * (design.feedback_r or r) / r)
