"""Segmented network: M thermometer-decoded MSB segments joined to an (N − M)-bit R-2R section.

Sizing rule: every segment leg equals the Thevenin resistance of the binary section seen at the
joining node. For the voltage-mode R-2R section that resistance is R (``unit_r``) whatever its
length, so each of the 2^M − 1 segment legs is R and carries 2^(N − M) LSB of weight: with t
segments driven and the ladder at code c, Vout = Vref·(t·2^L + c)/2^N, L = N − M.

Nodes ``n0`` (LSB) … ``n{L−1}`` (the joining node and output) as in ``r2r_voltage``; with L = 0
the binary section is only ``term`` = R from ``n0`` to ground, so 2^N − 1 segments and ``term``
make 2^N equal parts. Part ids: ``seg0 … seg{2^M−2}`` then the ladder's ``leg…``, ``series…``,
``term``. The segments are one :class:`ThermometerGroup` (legs 0 … t−1 driven at level t), so a
design with 65,535 segments costs no codes × legs work.

With the build key ``lsb_section = "unit-array"`` the binary section is a unit-element array
instead (``segmented_units.py``: its own sizing rule and part ids).
"""

from __future__ import annotations

import numpy as np

from .. import part_ids as ids
from ..build_style import build_choice
from ..design import Design
from ..network import (
    GROUND,
    Network,
    Output,
    PartArray,
    PartList,
    SwitchedLeg,
    ThermometerGroup,
    binary_decoder,
    thermometer_level,
)
from . import segmented_units
from .common import r2r_section, reference

SIZING_RULE = ("each segment leg equals the binary section's Thevenin resistance at the joining "
               "node (R for an R-2R section), so one segment weighs 2^(N−M) LSB")
"""The segment sizing rule in words, for the screen and reports."""


def _segment_ohms(design: Design, count: int, nominal: float) -> np.ndarray:
    ohms = np.full(count, nominal)
    for pid, x in design.parts.items():
        if pid.startswith(ids.SEG):
            ohms[int(pid[len(ids.SEG):])] = x
    return ohms


def build(design: Design, grouped: bool = True) -> Network:
    """The segmented network of ``design``.

    ``grouped=False`` gives the same circuit with one plain :class:`SwitchedLeg` per segment and a
    codes × segments decode (for checking the grouped form on small designs).
    """
    n, m, r = design.bits, design.thermometer_bits, design.unit_r
    lad = n - m
    n_seg = 2**m - 1
    fixed, resistors, source = reference(design)
    if build_choice(design, "lsb_section") == "unit-array":
        join = segmented_units.OUT
        seg_ohms = _segment_ohms(design, n_seg, segmented_units.segment_nominal(design))
        legs, section, parts = segmented_units.unit_section(design)
    else:
        join = f"n{max(lad, 1) - 1}"
        seg_ohms = _segment_ohms(design, n_seg, r)
        legs, section, parts = r2r_section(design, lad, "ref", 2 * r if lad else r)
    seg_parts = PartArray(ids.SEG, "segment", seg_ohms)
    resistors += section
    groups = []
    if grouped:
        if n_seg:
            groups.append(ThermometerGroup(ids.SEG, "segment", join, "ref", GROUND, seg_ohms,
                                           design.ron_high, design.ron_low))
        decode = _grouped_decoder(lad, bool(n_seg))
    else:
        legs = [SwitchedLeg(p.part_id, "segment", join, "ref", GROUND, p.ohms, design.ron_high,
                            design.ron_low) for p in PartList([seg_parts])] + legs
        decode = _plain_decoder(lad, n_seg)
    buffered = design.output == "buffer"
    output = Output("node", join, buffered=buffered, gain=design.gain if buffered else 1.0,
                    load_ohms=design.load_r)
    return Network(fixed=fixed, source=source, resistors=resistors, legs=legs, n_codes=2**n,
                   decode=decode, output=output, parts=PartList([seg_parts, *parts]),
                   counts={"switches": n_seg + lad, "amplifiers": int(buffered)},
                   ideal_lsb=design.vref / 2**n * (design.gain if buffered else 1.0),
                   groups=groups)


def _grouped_decoder(lad: int, has_group: bool):
    """Ladder bits 0 … L−1, then the segment level ``code >> L`` (a decoder the solver can lay out
    one axis per bit)."""
    return binary_decoder(list(range(lad)), [lad] if has_group else [])


def _plain_decoder(lad: int, n_seg: int):
    """Segment i driven when ``code >> L`` exceeds i, then the ladder bits."""

    def decode(codes: np.ndarray) -> np.ndarray:
        codes = np.asarray(codes, dtype=np.int64)
        seg = thermometer_level(codes, lad)[:, None] > np.arange(n_seg)[None, :]
        bits = ((codes[:, None] >> np.arange(lad)[None, :]) & 1).astype(bool)
        return np.concatenate([seg, bits], axis=1)

    return decode
