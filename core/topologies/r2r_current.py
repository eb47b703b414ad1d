"""Current-mode (inverted) R-2R ladder: the reference drives the MSB end ``n{N−1}``; each 2R leg
steers its current to the summing node (bit 1) or to ground (bit 0); a transimpedance amplifier with
``feedback`` (default R) gives ideal Vout = −Vref·k/2^N. The reference sees R at every code.
"""

from __future__ import annotations

from ..design import Design
from ..network import GROUND, Network, Output, Part, Resistor, SwitchedLeg, binary_decoder
from .common import reference, value


def part_ids(output: str, bits: int) -> list[str]:
    """Part ids in display order."""
    return ([f"leg{k}" for k in range(bits)] + [f"series{k}" for k in range(bits - 1)]
            + ["term", "feedback"])


def build(design: Design) -> Network:
    """The current-mode ladder of ``design`` (see module docstring)."""
    n, r = design.bits, design.unit_r
    top = f"n{n - 1}"
    fixed, resistors, source = reference(design, ref_node=top)
    fixed["sum"] = 0.0
    legs, parts = [], []
    for k in range(n):
        ohms = value(design, f"leg{k}", 2 * r)
        legs.append(SwitchedLeg(f"leg{k}", "leg", f"n{k}", "sum", GROUND, ohms,
                                design.ron_high, design.ron_low))
        parts.append(Part(f"leg{k}", "leg", ohms))
    for k in range(n - 1):
        res = Resistor(f"series{k}", "series", f"n{k}", f"n{k + 1}", value(design, f"series{k}", r))
        resistors.append(res)
        parts.append(Part(res.part_id, "series", res.ohms))
    term = Resistor("term", "termination", "n0", GROUND, value(design, "term", 2 * r))
    resistors.append(term)
    parts.append(Part("term", "termination", term.ohms))
    rf = value(design, "feedback", design.feedback_r or r)
    parts.append(Part("feedback", "feedback", rf))
    return Network(fixed=fixed, source=source, resistors=resistors, legs=legs, n_codes=2**n,
                   decode=binary_decoder(list(range(n))),
                   output=Output("virtual-ground", "sum", feedback_ohms=rf), parts=parts,
                   counts={"switches": n, "amplifiers": 1},
                   ideal_lsb=-design.vref / 2**n * (design.feedback_r or r) / r)
