"""Pieces every builder shares: the reference source and value look-ups."""

from __future__ import annotations

from .. import part_ids as ids
from ..design import Design
from ..network import GROUND, Part, Resistor, SwitchedLeg

REF_SOURCE = "vsrc"
"""Node of the ideal reference source when it has an output resistance."""


def reference(design: Design, ref_node: str = "ref") -> tuple[dict[str, float], list[Resistor], str]:
    """Fixed nodes, resistors and source node for an ideal ``vref`` behind ``ref_r``.

    With ``ref_r = 0`` the node ``ref_node`` itself is held at ``vref``; otherwise an ideal source
    node ``vsrc`` drives ``ref_node`` through ``ref_r`` (role ``reference``, not a board part).
    """
    fixed = {GROUND: 0.0}
    if design.ref_r == 0:
        fixed[ref_node] = design.vref
        return fixed, [], ref_node
    fixed[REF_SOURCE] = design.vref
    return fixed, [Resistor(ids.REF_R, "reference", REF_SOURCE, ref_node, design.ref_r)], REF_SOURCE


def value(design: Design, part_id: str, nominal: float) -> float:
    """The as-built value of ``part_id`` if the design gives one, else ``nominal`` (ohms)."""
    return float(design.parts.get(part_id, nominal))


def r2r_section(design: Design, bits: int, high: str, term_ohms: float
                ) -> tuple[list[SwitchedLeg], list[Resistor], list[Part]]:
    """An R-2R ladder of ``bits`` legs on nodes ``n0`` (LSB) … ``n{bits−1}``.

    Legs ``leg{k}`` (2R) switch between ``high`` and ground; ``series{k}`` (R) joins ``n{k}`` and
    ``n{k+1}``; ``term`` (``term_ohms`` nominal) goes from ``n0`` to ground. As-built values from
    the design replace the nominal ones. Returns legs, resistors and parts in display order.
    """
    r = design.unit_r
    legs, resistors, parts = [], [], []
    for k in range(bits):
        ohms = value(design, ids.leg(k), 2 * r)
        legs.append(SwitchedLeg(ids.leg(k), "leg", f"n{k}", high, GROUND, ohms,
                                design.ron_high, design.ron_low))
        parts.append(Part(ids.leg(k), "leg", ohms))
    for k in range(bits - 1):
        res = Resistor(ids.series(k), "series", f"n{k}", f"n{k + 1}",
                       value(design, ids.series(k), design.series_ratio * r))
        resistors.append(res)
        parts.append(Part(res.part_id, "series", res.ohms))
    term = Resistor(ids.TERM, "termination", "n0", GROUND, value(design, ids.TERM, term_ohms))
    resistors.append(term)
    parts.append(Part(ids.TERM, "termination", term.ohms))
    return legs, resistors, parts
