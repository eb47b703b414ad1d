"""Reference designators of every physical part, numbered exactly as the bill of materials does.

Resistors: ``R1 …`` in the design's part order, one per physical unit (a part of four units in
parallel has four). With ``board.array_size`` = n > 0 the units of each value go into arrays of n
elements: unit e of a value line is element ``e % n + 1`` of array ``RN{first + e // n}``, written
``RN3.2``. Switches: ``S1 …`` in part order of the switched parts (thermometer segments and legs;
a string's tap switch i is ``S{i+1}``). The amplifier is ``U1``. The netlist and the schematic
read these so their names match the bill of materials (a test checks against ``bom.py``).
"""

from __future__ import annotations

from collections.abc import Iterator, Mapping

import numpy as np

from ..network import Network, PartArray, PartList
from .board import board_value


class _Numbered(Mapping):
    """Part id → ``R{n} …`` read from the cumulative unit counts (no string per part until
    asked: a 16-bit string has 65,536 parts and a schematic names a dozen)."""

    def __init__(self, parts: PartList) -> None:
        self.parts = parts
        units = parts.units().astype(np.int64)
        self.units = units
        self.first = np.cumsum(units) - units + 1

    def __getitem__(self, pid: str) -> tuple[str, ...]:
        i = self.parts.index_of(pid)
        if i is None:
            raise KeyError(pid)
        start = int(self.first[i])
        return tuple(f"R{n}" for n in range(start, start + int(self.units[i])))

    def __iter__(self) -> Iterator[str]:
        return iter(self.parts.ids())

    def __len__(self) -> int:
        return len(self.parts)


def _unit_key(ohms: float, units: int, joined: str) -> float:
    unit = ohms * units if joined == "parallel" else ohms / units
    return round(unit, 9)


def resistor_designators(design, net: Network) -> Mapping[str, tuple[str, ...]]:
    """Part id → the designators of its units, in unit order (``R5``, or ``RN2.3`` in arrays)."""
    from .bom import tempco_of

    parts = PartList.of(net.parts)
    size = int(board_value(design, "array_size"))
    if not size:
        return _Numbered(parts)
    ohms, units = parts.ohms(), parts.units()
    ids = parts.ids()
    joined = [b.joined for b in parts.blocks for _ in range(getattr(b, "size", 1))]
    groups: dict[tuple, list[tuple[str, int]]] = {}
    for i, pid in enumerate(ids):
        u = int(units[i])
        key = (_unit_key(float(ohms[i]), u, joined[i]), tempco_of(design, pid))
        groups.setdefault(key, []).extend((pid, j) for j in range(u))
    out: dict[str, list[str]] = {pid: [] for pid in ids}
    first = 1
    for members in groups.values():  # dicts keep insertion order = order of first unit (as bom)
        for e, (pid, _) in enumerate(members):
            out[pid].append(f"RN{first + e // size}.{e % size + 1}")
        first += -(-len(members) // size)
    return {pid: tuple(v) for pid, v in out.items()}


class _Switches(Mapping):
    """Switched part id (leg, segment or tap) → ``S{n}``, counted over the part list's blocks
    (a block of segments is switched as a whole), so nothing is made per part until asked."""

    def __init__(self, net: Network) -> None:
        self.n_taps = net.n_codes if net.selector is not None else 0
        self.tap = net.selector.part_id if net.selector is not None else ""
        legs = {leg.part_id for leg in net.legs}
        groups = {g.prefix for g in net.groups}
        self.blocks: list[tuple[object, int]] = []  # (block, S number of its first member)
        count = 0
        for b in PartList.of(net.parts).blocks:
            if isinstance(b, PartArray) and b.prefix in groups:
                self.blocks.append((b, count + 1))
                count += b.size
            elif not isinstance(b, PartArray) and b.part_id in legs:
                self.blocks.append((b, count + 1))
                count += 1
        self.count = count + self.n_taps

    def __getitem__(self, pid: str) -> str:
        if self.n_taps:
            tail = pid[len(self.tap):] if pid.startswith(self.tap) else ""
            if tail.isdigit() and int(tail) < self.n_taps:
                return f"S{int(tail) + 1}"
            raise KeyError(pid)
        for b, first in self.blocks:
            if isinstance(b, PartArray):
                i = b.index_of(pid)
                if i is not None:
                    return f"S{first + i}"
            elif b.part_id == pid:
                return f"S{first}"
        raise KeyError(pid)

    def __iter__(self) -> Iterator[str]:
        if self.n_taps:
            return (f"{self.tap}{i}" for i in range(self.n_taps))
        return (pid for b, _ in self.blocks
                for pid in (b.ids() if isinstance(b, PartArray) else (b.part_id,)))

    def __len__(self) -> int:
        return self.count


def switched_ids(net: Network) -> list[str]:
    """Ids of the switched parts in part order (a string: ``tap0 …`` one per tap)."""
    return list(_Switches(net))


def switch_designators(net: Network) -> Mapping[str, str]:
    """Switched part id (leg, segment or tap) → ``S1 …``."""
    return _Switches(net)


AMPLIFIER = "U1"
"""Designator of the output amplifier (one per candidate at most)."""
