"""Snap a built network's part values to the design's preferred-value series.

One shared place for every topology: :func:`snap_network` runs after the builder (and after the
build style has said how many equal units make each part). Every part value derived from
``unit_r`` snaps by ratio; as-built ``parts`` overrides and a ``feedback_r`` the user typed stay
exact. A part made of several units snaps its *unit*, then recombines: a 2R of two units in series
becomes 2 × snap(R), not snap(2R).
"""

from __future__ import annotations

import dataclasses

import numpy as np

from ..errors import DesignError
from ..network import Network, PartArray, PartList
from .eseries import snap


def compose(unit_ohms, units: int, joined: str):
    """The value of ``units`` equal resistors of ``unit_ohms`` (float or ndarray) joined as
    ``joined``, ohms."""
    if joined == "series":
        return unit_ohms * units
    if joined == "parallel":
        return unit_ohms / units
    return unit_ohms


def snapped_keep(design) -> set[str]:
    """Ids of the parts whose value is given (as-built ``parts``, a typed ``feedback_r``): never
    snapped."""
    keep = set(design.parts)
    if getattr(design, "feedback_r", None) is not None:
        keep.add("feedback")
    return keep


def snapped_ids(design, net: Network) -> list[str]:
    """Ids of the parts whose value the series sets (derived from ``unit_r``)."""
    keep = snapped_keep(design)
    return [pid for pid in PartList.of(net.parts).ids() if pid not in keep]


def snap_network(design, net: Network) -> Network:
    """``net`` with its derived part values snapped to ``design.series`` (in place; returned).

    :class:`PartArray` blocks (strings, segments) are snapped as arrays, with no object per part.

    Raises
    ------
    DesignError
        A part's unit value lies outside the 1 Ω … 10 MΩ preferred values (``series`` named).
    """
    if design.series == "exact":
        return net
    parts = PartList.of(net.parts)
    keep = set(snapped_keep(design))
    derived = (np.array([pid not in keep for pid in parts.ids()], dtype=bool) if keep
               else np.ones(len(parts), dtype=bool))
    nominal = parts.unit_ohms()
    snapped = np.array(nominal, dtype=float)
    try:
        if derived.any():
            snapped[derived] = snap(nominal[derived], design.series)
    except DesignError:  # say which part
        for p, x, d in zip(parts, nominal, derived, strict=True):
            if d:
                snap(x, design.series, field=f"series ({p.part_id})")
        raise
    start, blocks, new, arrays = 0, [], {}, {}
    for b in parts.blocks:
        if isinstance(b, PartArray):
            k = slice(start, start + b.size)
            arrays[b.prefix] = np.where(derived[k], compose(snapped[k], b.units, b.joined), b.ohms)
            blocks.append(dataclasses.replace(b, ohms=arrays[b.prefix]))
            start += b.size
            continue
        if derived[start]:
            new[b.part_id] = compose(float(snapped[start]), b.units, b.joined)
            b = dataclasses.replace(b, ohms=new[b.part_id])
        blocks.append(b)
        start += 1
    net.parts = PartList(blocks) if isinstance(net.parts, PartList) else blocks
    net.resistors = [dataclasses.replace(r, ohms=new.get(r.part_id, r.ohms)) for r in net.resistors]
    net.legs = [dataclasses.replace(g, ohms=new.get(g.part_id, g.ohms)) for g in net.legs]
    old_chains = net.chains
    net.chains = [dataclasses.replace(c, ohms=_array_snapped(c.prefix, c.ohms, new, arrays))
                  for c in net.chains]
    for old, chain in zip(old_chains, net.chains, strict=True):  # a tap selects the new chain's nodes
        if net.selector is not None and getattr(net.selector.nodes, "chain", None) is old:
            net.selector = dataclasses.replace(net.selector, nodes=chain.nodes())
    net.groups = [dataclasses.replace(g, ohms=_array_snapped(g.prefix, g.ohms, new, arrays))
                  for g in net.groups]
    if net.output.kind == "virtual-ground" and "feedback" in new:
        net.output = dataclasses.replace(net.output, feedback_ohms=new["feedback"])
    return net


def _array_snapped(prefix: str, ohms, new: dict[str, float], arrays: dict[str, np.ndarray]):
    """An array-held element's values (parts ``prefix0 …``): the snapped :class:`PartArray` of the
    same prefix when there is one, else each part's snapped value by id."""
    if prefix in arrays:
        return arrays[prefix]
    return np.array([new.get(f"{prefix}{i}", x) for i, x in enumerate(np.asarray(ohms).tolist())])
