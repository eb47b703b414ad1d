"""Reference designators of every physical part, numbered exactly as the bill of materials does.

Resistors: ``R1 …`` in the design's part order, one per physical unit (a part of four units in
parallel has four). With ``board.array_size`` = n > 0 the units of each value go into arrays of n
elements: unit e of a value line is element ``e % n + 1`` of array ``RN{first + e // n}``, written
``RN3.2``. Switches: ``S1 …`` in part order of the switched parts (thermometer segments and legs;
a string's tap switch i is ``S{i+1}``). The amplifier is ``U1``. The netlist and the schematic
read these so their names match the bill of materials (a test checks against ``bom.py``).
"""

from __future__ import annotations

from ..network import Network, PartList
from .board import board_value


def _unit_key(ohms: float, units: int, joined: str) -> float:
    unit = ohms * units if joined == "parallel" else ohms / units
    return round(unit, 9)


def resistor_designators(design, net: Network) -> dict[str, tuple[str, ...]]:
    """Part id → the designators of its units, in unit order (``R5``, or ``RN2.3`` in arrays)."""
    from .bom import tempco_of

    parts = PartList.of(net.parts)
    ohms, units = parts.ohms(), parts.units()
    ids = parts.ids()
    joined = [b.joined for b in parts.blocks for _ in range(getattr(b, "size", 1))]
    size = int(board_value(design, "array_size"))
    numbers: dict[str, list[int]] = {}
    groups: dict[tuple, list[tuple[str, int]]] = {}
    number = 0
    for i, pid in enumerate(ids):
        u = int(units[i])
        numbers[pid] = list(range(number + 1, number + 1 + u))
        number += u
        if size:
            key = (_unit_key(float(ohms[i]), u, joined[i]), tempco_of(design, pid))
            groups.setdefault(key, []).extend((pid, j) for j in range(u))
    if not size:
        return {pid: tuple(f"R{n}" for n in nums) for pid, nums in numbers.items()}
    out: dict[str, list[str]] = {pid: [] for pid in ids}
    first = 1
    for members in groups.values():  # dicts keep insertion order = order of first unit (as bom)
        for e, (pid, _) in enumerate(members):
            out[pid].append(f"RN{first + e // size}.{e % size + 1}")
        first += -(-len(members) // size)
    return {pid: tuple(v) for pid, v in out.items()}


def switched_ids(net: Network) -> list[str]:
    """Ids of the switched parts in part order (a string: ``tap0 …`` one per tap)."""
    if net.selector is not None:
        # one switch per code (the chain's top node is never selected)
        return [f"{net.selector.part_id}{i}" for i in range(net.n_codes)]
    switched = {leg.part_id for leg in net.legs}
    prefixes = [g.prefix for g in net.groups]
    out = []
    for pid in PartList.of(net.parts).ids():
        tail_ok = any(pid.startswith(p) and pid[len(p):].isdigit() for p in prefixes)
        if pid in switched or tail_ok:
            out.append(pid)
    return out


def switch_designators(net: Network) -> dict[str, str]:
    """Switched part id (leg, segment or tap) → ``S1 …``."""
    return {pid: f"S{i + 1}" for i, pid in enumerate(switched_ids(net))}


AMPLIFIER = "U1"
"""Designator of the output amplifier (one per candidate at most)."""
