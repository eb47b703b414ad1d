"""A topology-neutral description of a switched resistor network.

A topology builder produces a :class:`Network`; the solver (``solve.py``) knows nothing else.

Nodes are named by strings. ``GROUND`` is always present at 0 V. Fixed nodes hold an ideal voltage
(the reference source, a virtual-ground summing node). Every other node is solved for.
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass, field
from typing import Literal

import numpy as np

GROUND = "gnd"
"""Name of the ground node (0 V)."""

OutputKind = Literal["node", "virtual-ground"]


@dataclass(frozen=True)
class Resistor:
    """A fixed resistor between nodes ``a`` and ``b``; ``ohms`` > 0."""

    part_id: str
    role: str
    a: str
    b: str
    ohms: float


@dataclass(frozen=True)
class SwitchedLeg:
    """A resistor from ``node`` to a change-over switch.

    The switch joins the resistor's far end to ``high`` through ``ron_high`` when the leg is driven
    (its bit is 1) and to ``low`` through ``ron_low`` otherwise. ``low=None`` leaves it open.
    """

    part_id: str
    role: str
    node: str
    high: str
    low: str | None
    ohms: float
    ron_high: float
    ron_low: float


@dataclass(frozen=True)
class Output:
    """Where and how the output is taken.

    ``kind="node"``: the voltage of ``node`` (loaded by ``load_r`` to ground unless ``buffered``),
    times ``gain`` when buffered. ``kind="virtual-ground"``: ``node`` is a summing node held at 0 V by
    an ideal amplifier; the output is ``−feedback_ohms × (current into the node)``.
    """

    kind: OutputKind
    node: str
    buffered: bool = False
    gain: float = 1.0
    feedback_ohms: float = 0.0
    load_ohms: float = np.inf


@dataclass(frozen=True)
class Part:
    """One part of the design, for part lists, as-built values and bills of materials.

    ``units`` physical resistors of equal value make it, joined ``"single"``, ``"series"`` or
    ``"parallel"`` (set from the design's build style by ``build_style.apply_build``).
    """

    part_id: str
    role: str
    ohms: float
    kind: Literal["resistor", "switch", "amplifier"] = "resistor"
    units: int = 1
    joined: Literal["single", "series", "parallel"] = "single"


@dataclass
class Network:
    """The neutral description a builder returns and the solver consumes.

    Attributes
    ----------
    fixed : dict[str, float]
        Nodes held at an ideal voltage, volts (always contains ``GROUND``).
    source : str
        The fixed node that is the ideal reference source; ``iref`` is the current it delivers.
    resistors : list[Resistor]
        Code-independent resistors, including the reference's output resistance when non-zero.
    legs : list[SwitchedLeg]
        Switched legs, in the column order of ``decode``'s result.
    n_codes : int
        Number of input codes, 2^N.
    decode : callable, codes (n,) int → ndarray of bool, shape (n, n_legs)
        Whether each leg is driven (switched to ``high``) at each code.
    output : Output
    parts : list[Part]
        The resistors with their ids and roles (the feedback resistor included), in display order.
    counts : dict[str, int]
        Active parts: ``{"switches": …, "amplifiers": …}``.
    ideal_lsb : float
        The ideal output step of this topology and output variant, volts (negative when inverting).
    """

    fixed: dict[str, float]
    source: str
    resistors: list[Resistor]
    legs: list[SwitchedLeg]
    n_codes: int
    decode: Callable[[np.ndarray], np.ndarray]
    output: Output
    parts: list[Part] = field(default_factory=list)
    counts: dict[str, int] = field(default_factory=dict)
    ideal_lsb: float = 0.0

    def unknown_nodes(self) -> list[str]:
        """Nodes the solver must find, in order of first appearance."""
        seen: dict[str, None] = {}
        for r in self.resistors:
            seen.setdefault(r.a)
            seen.setdefault(r.b)
        for leg in self.legs:
            seen.setdefault(leg.node)
            seen.setdefault(leg.high)
            if leg.low is not None:
                seen.setdefault(leg.low)
        seen.setdefault(self.output.node)
        return [n for n in seen if n not in self.fixed]


class BinaryDecoder:
    """Decoder for legs driven by one code bit each (``leg_bits[l]`` is leg l's bit, 0 = LSB).

    The solver reads ``leg_bits`` to lay codes out as one array axis per bit (see ``solve.py``).
    """

    def __init__(self, leg_bits: list[int]) -> None:
        self.leg_bits = tuple(int(b) for b in leg_bits)
        self._bits = np.asarray(self.leg_bits, dtype=np.int64)

    def __call__(self, codes: np.ndarray) -> np.ndarray:
        """Drive states, shape (n_codes, n_legs), bool."""
        return ((np.asarray(codes, dtype=np.int64)[:, None] >> self._bits[None, :]) & 1).astype(bool)


def binary_decoder(leg_bits: list[int]) -> BinaryDecoder:
    """A :class:`BinaryDecoder` for ``leg_bits``."""
    return BinaryDecoder(leg_bits)
