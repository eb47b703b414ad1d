"""A topology-neutral description of a switched resistor network.

A topology builder produces a :class:`Network`; the solver (``solve.py``) knows nothing else.

Nodes are named by strings. ``GROUND`` is always present at 0 V. Fixed nodes hold an ideal voltage
(the reference source, a virtual-ground summing node). Every other node is solved for.
"""

from __future__ import annotations

import dataclasses
from collections.abc import Callable, Sequence
from dataclasses import dataclass, field
from functools import lru_cache
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


@dataclass(frozen=True, eq=False)
class ResistorChain:
    """Resistors in series, held as one array (for strings of thousands of parts).

    Resistor ``i`` (part id ``f"{prefix}{i}"``) joins chain node ``i`` and chain node ``i + 1``;
    node 0 is ``start``, node ``m`` is ``end`` and node ``i`` in between is ``f"{node_prefix}{i}"``.
    ``ohms`` has shape (m,). No other element may touch an interior node except a
    :class:`Selector` (the solver checks).
    """

    prefix: str
    role: str
    start: str
    end: str
    node_prefix: str
    ohms: np.ndarray

    @property
    def size(self) -> int:
        """Number of resistors m."""
        return int(np.shape(self.ohms)[0])

    def nodes(self) -> ChainNodes:
        """The m + 1 node names, ``start`` first, as a lazy sequence."""
        return ChainNodes(self)

    def resistors(self) -> list[Resistor]:
        """The chain as plain :class:`Resistor` elements (for small chains and the general path)."""
        names = list(self.nodes())
        return [Resistor(f"{self.prefix}{i}", self.role, names[i], names[i + 1], float(r))
                for i, r in enumerate(np.asarray(self.ohms, float))]


class ChainNodes(Sequence):
    """Node names of a :class:`ResistorChain`, made on demand (no list of 65,537 strings)."""

    def __init__(self, chain: ResistorChain) -> None:
        self.chain = chain

    def __len__(self) -> int:
        return self.chain.size + 1

    def __getitem__(self, i):  # type: ignore[override]
        if isinstance(i, slice):
            return [self[j] for j in range(*i.indices(len(self)))]
        m = self.chain.size
        if i < 0:
            i += m + 1
        if not 0 <= i <= m:
            raise IndexError(i)
        if i == 0:
            return self.chain.start
        if i == m:
            return self.chain.end
        return f"{self.chain.node_prefix}{i}"

    def __iter__(self):
        """The names in order, without a bounds-checked lookup per name (65,537 for a string)."""
        m, prefix = self.chain.size, self.chain.node_prefix
        yield self.chain.start
        for i in range(1, m):
            yield f"{prefix}{i}"
        if m > 0:
            yield self.chain.end


@dataclass(frozen=True, eq=False)
class ThermometerGroup:
    """Many switched legs from one ``node``, driven in order (thermometer decoding).

    Leg ``i`` (part id ``f"{prefix}{i}"``, ``ohms[i]``) is switched like a :class:`SwitchedLeg`.
    At a code whose *level* is t (a column of the network's ``decode``), legs 0 … t−1 are driven
    (to ``high`` through ``ron_high``) and the others rest on ``low`` through ``ron_low``. The
    solver sees only two code-dependent conductances, node–high and node–low, read from cumulative
    sums of the legs' conductances, so unequal as-built legs stay exact and nothing grows with
    codes × legs. ``ohms`` has shape (m,).
    """

    prefix: str
    role: str
    node: str
    high: str
    low: str | None
    ohms: np.ndarray
    ron_high: float
    ron_low: float

    @property
    def size(self) -> int:
        """Number of legs m."""
        return int(np.shape(self.ohms)[0])

    def legs(self) -> list[SwitchedLeg]:
        """The group as plain :class:`SwitchedLeg` elements (for tests and small groups)."""
        return [SwitchedLeg(f"{self.prefix}{i}", self.role, self.node, self.high, self.low,
                            float(r), self.ron_high, self.ron_low)
                for i, r in enumerate(np.asarray(self.ohms, float))]


@dataclass(frozen=True, eq=False)
class Selector:
    """A switch of on-resistance ``ron`` from ``out`` to one of ``nodes``, chosen by the code.

    ``select(codes)`` returns, per code, the index into ``nodes`` of the node joined to ``out``.
    The rest of the network must not depend on the code (no switched legs or groups); ``out``
    connects only through this switch (and the output's load). The solver then needs one solve of
    the fixed network for every node's open-circuit voltage and Thevenin resistance, and each code
    is a Thevenin divider (``selector.py``).
    """

    part_id: str
    role: str
    out: str
    nodes: Sequence[str]
    ron: float
    select: Callable[[np.ndarray], np.ndarray]


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

    def with_load(self, r_th: np.ndarray | float) -> np.ndarray:
        """The Thevenin resistance ``r_th`` (ohms) in parallel with the load: what the output node
        sees; ``r_th`` itself with the output open."""
        r = np.asarray(r_th, dtype=float)
        if not np.isfinite(self.load_ohms):
            return r
        return r * self.load_ohms / (r + self.load_ohms)

    def loaded_voltage(self, v_open: np.ndarray | float, r_th: np.ndarray | float) -> np.ndarray:
        """The node voltage with the load on a source of open-circuit ``v_open`` (V) behind
        ``r_th`` (ohms): the divider v·RL/(RL + r); ``v_open`` itself with the output open."""
        v = np.asarray(v_open, dtype=float)
        if not np.isfinite(self.load_ohms):
            return v
        return v * self.load_ohms / (self.load_ohms + np.asarray(r_th, dtype=float))


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


@lru_cache(maxsize=64)
def array_ids(prefix: str, m: int) -> tuple[str, ...]:
    """Part ids ``prefix0 … prefix{m−1}`` (cached: strings of 65,536 parts reuse them)."""
    return tuple(f"{prefix}{i}" for i in range(m))


@dataclass(frozen=True, eq=False)
class PartArray:
    """Many parts of one role held as arrays (a string's resistors, a group's segments).

    Part ``i`` has id ``f"{prefix}{i}"`` and value ``ohms[i]``; every one is made of ``units`` equal
    resistors joined as ``joined`` (the build style sets both from the role). :class:`Part`
    objects are made only when asked for (``element(i)``, iteration of :class:`PartList`).
    """

    prefix: str
    role: str
    ohms: np.ndarray
    units: int = 1
    joined: Literal["single", "series", "parallel"] = "single"

    @property
    def size(self) -> int:
        """Number of parts m."""
        return int(np.shape(self.ohms)[0])

    def ids(self) -> tuple[str, ...]:
        """Every part id, in order."""
        return array_ids(self.prefix, self.size)

    def element(self, i: int) -> Part:
        """Part ``i`` as a :class:`Part`."""
        return Part(f"{self.prefix}{i}", self.role, float(self.ohms[i]), units=self.units,
                    joined=self.joined)

    def index_of(self, part_id: str) -> int | None:
        """Position of ``part_id`` in this array, or ``None``."""
        tail = part_id[len(self.prefix):] if part_id.startswith(self.prefix) else ""
        if tail.isdigit() and (tail == "0" or not tail.startswith("0")) and int(tail) < self.size:
            return int(tail)
        return None


class BlockSequence(Sequence):
    """A sequence read from blocks: single items and array blocks (anything with ``size`` and
    ``element(i)``) whose items are made on demand."""

    def __init__(self, blocks) -> None:
        self.blocks = [b for b in blocks if not (self._is_array(b) and b.size == 0)]
        sizes = [b.size if self._is_array(b) else 1 for b in self.blocks]
        self._starts = np.concatenate([[0], np.cumsum(sizes, dtype=np.int64)])
        self._items: tuple | None = None  # every item, kept once a caller has read them all

    @staticmethod
    def _is_array(block) -> bool:
        return hasattr(block, "element")

    def __len__(self) -> int:
        return int(self._starts[-1])

    def __getitem__(self, i):  # type: ignore[override]
        if isinstance(i, slice):
            return [self[j] for j in range(*i.indices(len(self)))]
        i = i + len(self) if i < 0 else i
        if not 0 <= i < len(self):
            raise IndexError(i)
        if self._items is not None:
            return self._items[i]
        k = int(np.searchsorted(self._starts, i, side="right")) - 1
        block = self.blocks[k]
        return block.element(i - int(self._starts[k])) if self._is_array(block) else block

    def __iter__(self):
        # made once and kept: callers that walk every item (sampling, bills of materials) do so
        # repeatedly; the array accessors never need them
        if self._items is None:
            self._items = tuple(block.element(i) if self._is_array(block) else block
                                for block in self.blocks
                                for i in range(block.size if self._is_array(block) else 1))
        return iter(self._items)


class PartList(BlockSequence):
    """A network's parts in display order: plain :class:`Part` entries and :class:`PartArray`
    blocks, read as one sequence of :class:`Part` (made on demand for the blocks).

    The array accessors (``ohms``, ``units``, ``unit_ohms``) cost O(parts) in numpy, never a
    Python object per part.
    """

    @classmethod
    def of(cls, parts: Sequence[Part | PartArray]) -> PartList:
        """``parts`` as a :class:`PartList` (itself when it already is one)."""
        return parts if isinstance(parts, PartList) else cls(list(parts))

    def __eq__(self, other) -> bool:
        return isinstance(other, Sequence) and list(self) == list(other)

    __hash__ = None  # type: ignore[assignment]

    def __repr__(self) -> str:
        return f"PartList({len(self)} parts in {len(self.blocks)} blocks)"

    def _per_block(self, plain, array) -> np.ndarray:
        pieces = [np.broadcast_to(np.asarray(array(b), dtype=float), (b.size,))
                  if isinstance(b, PartArray) else np.array([plain(b)], dtype=float)
                  for b in self.blocks]
        return np.concatenate(pieces) if pieces else np.zeros(0)

    def ohms(self) -> np.ndarray:
        """Every part's value, shape (n_parts,), ohms."""
        return self._per_block(lambda p: p.ohms, lambda b: b.ohms)

    def units(self) -> np.ndarray:
        """Every part's unit count, shape (n_parts,)."""
        return self._per_block(lambda p: p.units, lambda b: b.units)

    def unit_ohms(self) -> np.ndarray:
        """Every part's unit value (series units split it, parallel units multiply), ohms."""
        scale = {"series": lambda x, u: x / u, "parallel": lambda x, u: x * u,
                 "single": lambda x, u: x}
        return self._per_block(lambda p: scale[p.joined](p.ohms, p.units),
                               lambda b: scale[b.joined](np.asarray(b.ohms, float), b.units))

    def ids(self) -> list[str]:
        """Every part id, in order."""
        out: list[str] = []
        for b in self.blocks:
            out.extend(b.ids() if isinstance(b, PartArray) else (b.part_id,))
        return out

    def index_of(self, part_id: str) -> int | None:
        """Position of ``part_id``, or ``None`` (no list of ids is made for the blocks)."""
        for k, b in enumerate(self.blocks):
            i = b.index_of(part_id) if isinstance(b, PartArray) else (0 if b.part_id == part_id
                                                                      else None)
            if i is not None:
                return int(self._starts[k]) + i
        return None


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
    decode : callable, codes (n,) int → ndarray, shape (n, n_legs + n_groups)
        Whether each leg is driven (switched to ``high``) at each code, then each thermometer
        group's level (how many of its legs are driven).
    output : Output
    parts : list[Part] or PartList
        The resistors with their ids and roles (the feedback resistor included), in display order.
        Builders of array-held elements give a :class:`PartList` with :class:`PartArray` blocks;
        ``PartList.of(net.parts)`` reads either kind with the array accessors.
    counts : dict[str, int]
        Active parts: ``{"switches": …, "amplifiers": …}``.
    ideal_lsb : float
        The ideal output step of this topology and output variant, volts (negative when inverting).
    chains : list[ResistorChain]
        Series strings held as arrays (code-independent, like ``resistors``).
    groups : list[ThermometerGroup]
        Thermometer-decoded leg groups; their levels follow the legs in ``decode``'s columns.
    selector : Selector or None
        A code-selected tap switch to the output (see :class:`Selector`).
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
    chains: list[ResistorChain] = field(default_factory=list)
    groups: list[ThermometerGroup] = field(default_factory=list)
    selector: Selector | None = None

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
        for grp in self.groups:
            for name in (grp.node, grp.high, grp.low):
                if name is not None:
                    seen.setdefault(name)
        for chain in self.chains:
            seen.update(dict.fromkeys(chain.nodes()))
        seen.setdefault(self.output.node)
        return [n for n in seen if n not in self.fixed]

    def unknown_count(self) -> int:
        """``len(unknown_nodes())`` without naming a chain's interior nodes one by one (a 16-bit
        string has 65,535 of them); falls back to the names when another element uses one."""
        if not self.chains:
            return len(self.unknown_nodes())
        plain = dataclasses.replace(self, chains=[])
        names = set(plain.unknown_nodes()) | {n for c in self.chains for n in (c.start, c.end)}
        interior = 0
        for c in self.chains:
            if any(n.startswith(c.node_prefix) and n not in (c.start, c.end) for n in names):
                return len(self.unknown_nodes())
            interior += max(c.size - 1, 0)
        return len(names - set(self.fixed)) + interior


class BinaryDecoder:
    """Decoder for legs driven by one code bit each (``leg_bits[l]`` is leg l's bit, 0 = LSB),
    then one level column per thermometer group, ``code >> level_shifts[g]``.

    The solver reads ``leg_bits`` and ``level_shifts`` to lay codes out as one array axis per bit
    (see ``solve.py``): a group's level then depends only on the bits above its shift.
    """

    def __init__(self, leg_bits: list[int], level_shifts: Sequence[int] = ()) -> None:
        self.leg_bits = tuple(int(b) for b in leg_bits)
        self.level_shifts = tuple(int(s) for s in level_shifts)
        self._bits = np.asarray(self.leg_bits, dtype=np.int64)

    def __call__(self, codes: np.ndarray) -> np.ndarray:
        """Drive states, shape (n_codes, n_legs), bool; with level columns, shape
        (n_codes, n_legs + n_groups), int."""
        codes = np.asarray(codes, dtype=np.int64)
        bits = (codes[:, None] >> self._bits[None, :]) & 1
        if not self.level_shifts:
            return bits.astype(bool)
        levels = [thermometer_level(codes, s)[:, None] for s in self.level_shifts]
        return np.concatenate([bits, *levels], axis=1)


def binary_decoder(leg_bits: list[int], level_shifts: Sequence[int] = ()) -> BinaryDecoder:
    """A :class:`BinaryDecoder` for ``leg_bits`` (and thermometer levels ``code >> shift``)."""
    return BinaryDecoder(leg_bits, level_shifts)


def thermometer_level(codes: np.ndarray, shift: int) -> np.ndarray:
    """Level of a thermometer group decoded from the bits above ``shift``: ``codes >> shift``."""
    return np.asarray(codes, dtype=np.int64) >> shift
