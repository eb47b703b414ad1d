"""Segmented network built as one unit-element array (build key ``lsb_section = "unit-array"``).

Every leg joins the output node ``out`` and is switched between the reference and ground: the
2^M − 1 thermometer segments (2^L units in parallel each, L = N − M), the L binary bits (bit k =
2^k units in parallel) and one terminating unit always to ground. That is 2^N equal units in all,
so with ideal switches Vout = Vref·(units on)/2^N = Vref·k/2^N exactly (a conductance divider, the
terminated binary-weighted divider built of units, with the upper bits thermometer-decoded).

Sizing rule: the unit is R·2^(N−1) (R = ``unit_r``), so the units carrying half of full scale
in parallel make R — bit k is R·2^(N−1−k) as in the binary-weighted network, each segment
R·2^(M−1), ``term`` R·2^(N−1); the output resistance is R/2 with ideal switches. Every leg has its
own switch of ``ron_high``/``ron_low`` (switches are not scaled with the leg). Part ids:
``seg0 … seg{2^M−2}``, ``bit0 … bit{L−1}``, ``term``; each part's ``units`` is its unit count
(``build_style``), so the statistics draw every unit on its own.
"""

from __future__ import annotations

from .. import part_ids as ids
from ..design import Design
from ..network import GROUND, Part, Resistor, SwitchedLeg
from .common import value

SIZING_RULE = ("unit-element LSB section: one unit is R·2^(N−1), bit k is 2^k units and each "
               "segment 2^(N−M) units in parallel, plus one terminating unit (2^N units in all)")
"""The unit-array sizing rule in words, for the screen and reports."""

OUT = "out"
"""The node every leg joins (the output)."""


def unit_section(design: Design) -> tuple[list, list, list]:
    """The L-bit unit-element binary section at node :data:`OUT` (the counterpart of
    ``common.r2r_section``): bit k = R·2^(N−1−k) switched between reference and ground, and the
    terminating unit R·2^(N−1) to ground.

    Returns
    -------
    legs : list[SwitchedLeg], resistors : list[Resistor], parts : list[Part]
    """
    n, lad = design.bits, design.bits - design.thermometer_bits
    unit = design.unit_r * 2.0 ** (n - 1)
    legs, parts = [], []
    for k in range(lad):
        ohms = value(design, ids.bit(k), unit / 2**k)
        legs.append(SwitchedLeg(ids.bit(k), "bit", OUT, "ref", GROUND, ohms, design.ron_high,
                                design.ron_low))
        parts.append(Part(ids.bit(k), "bit", ohms))
    term = Resistor(ids.TERM, "termination", OUT, GROUND, value(design, ids.TERM, unit))
    parts.append(Part(ids.TERM, "termination", term.ohms))
    return legs, [term], parts


def segment_nominal(design: Design) -> float:
    """Nominal value of one segment, R·2^(M−1) ohms (2^L units of R·2^(N−1) in parallel)."""
    return design.unit_r * 2.0 ** (design.thermometer_bits - 1)
