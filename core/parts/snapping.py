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

from ..build_style import unit_ohms
from ..errors import DesignError
from ..network import Network
from .eseries import snap


def compose(unit_ohms, units: int, joined: str):
    """The value of ``units`` equal resistors of ``unit_ohms`` (float or ndarray) joined as
    ``joined``, ohms."""
    if joined == "series":
        return unit_ohms * units
    if joined == "parallel":
        return unit_ohms / units
    return unit_ohms


def snapped_ids(design, net: Network) -> list[str]:
    """Ids of the parts whose value the series sets (derived from ``unit_r``)."""
    keep = set(design.parts)
    if getattr(design, "feedback_r", None) is not None:
        keep.add("feedback")
    return [p.part_id for p in net.parts if p.part_id not in keep]


def snap_network(design, net: Network) -> Network:
    """``net`` with its derived part values snapped to ``design.series`` (in place; returned).

    Raises
    ------
    DesignError
        A part's unit value lies outside the 1 Ω … 10 MΩ preferred values (``series`` named).
    """
    if design.series == "exact":
        return net
    targets = set(snapped_ids(design, net))
    chosen = [p for p in net.parts if p.part_id in targets]
    nominal = np.array([unit_ohms(p) for p in chosen])
    try:
        units = snap(nominal, design.series)
    except DesignError:  # say which part
        for p, x in zip(chosen, nominal, strict=True):
            snap(x, design.series, field=f"series ({p.part_id})")
        raise
    new = {p.part_id: compose(float(u), p.units, p.joined) for p, u in zip(chosen, units, strict=True)}
    net.parts = [dataclasses.replace(p, ohms=new.get(p.part_id, p.ohms)) for p in net.parts]
    net.resistors = [dataclasses.replace(r, ohms=new.get(r.part_id, r.ohms)) for r in net.resistors]
    net.legs = [dataclasses.replace(g, ohms=new.get(g.part_id, g.ohms)) for g in net.legs]
    net.chains = [dataclasses.replace(c, ohms=_array_snapped(c.prefix, c.ohms, new))
                  for c in net.chains]
    net.groups = [dataclasses.replace(g, ohms=_array_snapped(g.prefix, g.ohms, new))
                  for g in net.groups]
    if net.output.kind == "virtual-ground" and "feedback" in new:
        net.output = dataclasses.replace(net.output, feedback_ohms=new["feedback"])
    return net


def _array_snapped(prefix: str, ohms, new: dict[str, float]):
    """An array-held element's values (parts ``prefix0 …``) with the snapped values applied."""
    import numpy as np

    return np.array([new.get(f"{prefix}{i}", x) for i, x in enumerate(np.asarray(ohms).tolist())])
