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

import numpy as np

from ..design import Design
from ..network import (
    GROUND,
    Network,
    Output,
    Part,
    PartArray,
    PartList,
    Resistor,
    SwitchedLeg,
    ThermometerGroup,
)
from .common import reference, value

SIZING_RULE = ("unit-element LSB section: one unit is R·2^(N−1), bit k is 2^k units and each "
               "segment 2^(N−M) units in parallel, plus one terminating unit (2^N units in all)")
"""The unit-array sizing rule in words, for the screen and reports."""

OUT = "out"
"""The node every leg joins (the output)."""


def part_ids(bits: int, thermometer_bits: int) -> list[str]:
    """Part ids in display order: segments, bits, terminator."""
    lad = bits - thermometer_bits
    return ([f"seg{i}" for i in range(2**thermometer_bits - 1)] + [f"bit{k}" for k in range(lad)]
            + ["term"])


def build(design: Design, decode, segment_ohms: np.ndarray, grouped: bool = True) -> Network:
    """The unit-array segmented network of ``design``.

    ``decode`` is the segmented decoder (bits 0 … L−1, then the segment level when ``grouped``,
    else one column per segment first); ``segment_ohms`` the segments' values, shape (2^M − 1,),
    ohms. ``grouped=False`` gives one plain :class:`SwitchedLeg` per segment.
    """
    n, m = design.bits, design.thermometer_bits
    lad = n - m
    unit = design.unit_r * 2.0 ** (n - 1)
    fixed, resistors, source = reference(design)
    n_seg = 2**m - 1
    segments = PartArray("seg", "segment", np.asarray(segment_ohms, dtype=float))
    parts: list = []
    legs, groups = [], []
    for k in range(lad):
        ohms = value(design, f"bit{k}", unit / 2**k)
        legs.append(SwitchedLeg(f"bit{k}", "bit", OUT, "ref", GROUND, ohms, design.ron_high,
                                design.ron_low))
        parts.append(Part(f"bit{k}", "bit", ohms))
    term = Resistor("term", "termination", OUT, GROUND, value(design, "term", unit))
    resistors.append(term)
    parts.append(Part("term", "termination", term.ohms))
    if not grouped:
        legs = [SwitchedLeg(p.part_id, "segment", OUT, "ref", GROUND, p.ohms, design.ron_high,
                            design.ron_low) for p in PartList([segments])] + legs
    elif n_seg:
        groups.append(ThermometerGroup("seg", "segment", OUT, "ref", GROUND, segment_ohms,
                                       design.ron_high, design.ron_low))
    buffered = design.output == "buffer"
    output = Output("node", OUT, buffered=buffered, gain=design.gain if buffered else 1.0,
                    load_ohms=design.load_r)
    return Network(fixed=fixed, source=source, resistors=resistors, legs=legs, n_codes=2**n,
                   decode=decode, output=output, parts=PartList([segments, *parts]),
                   counts={"switches": n_seg + lad, "amplifiers": int(buffered)},
                   ideal_lsb=design.vref / 2**n * (design.gain if buffered else 1.0),
                   groups=groups)


def segment_nominal(design: Design) -> float:
    """Nominal value of one segment, R·2^(M−1) ohms (2^L units of R·2^(N−1) in parallel)."""
    return design.unit_r * 2.0 ** (design.thermometer_bits - 1)
