"""Pieces every builder shares: the reference source and value look-ups."""

from __future__ import annotations

from ..design import Design
from ..network import GROUND, Resistor

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
    return fixed, [Resistor("ref_r", "reference", REF_SOURCE, ref_node, design.ref_r)], REF_SOURCE


def value(design: Design, part_id: str, nominal: float) -> float:
    """The as-built value of ``part_id`` if the design gives one, else ``nominal`` (ohms)."""
    return float(design.parts.get(part_id, nominal))
