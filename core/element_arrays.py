"""Solver support for the array-held element kinds of ``network.py``: thermometer leg groups.

A :class:`~rungwise.core.network.ThermometerGroup` of m legs at level t is two conductances from
its node: to ``high`` the sum of the first t legs' conductances, to ``low`` the sum of the rest.
Both are read from cumulative sums (shape ``trials + (m + 1,)``) indexed by the level, so a group
of 65,535 legs costs one cumulative sum, never a codes × legs matrix. The solver (``solve.py``)
calls :func:`compile_groups`, :func:`stamp_groups` and :func:`group_elements`.
"""

from __future__ import annotations

from collections.abc import Mapping
from dataclasses import dataclass
from functools import lru_cache

import numpy as np


@lru_cache(maxsize=32)
def _ids(prefix: str, m: int) -> tuple[str, ...]:
    return tuple(f"{prefix}{i}" for i in range(m))


def array_values(prefix: str, nominal: np.ndarray, ohms: Mapping[str, np.ndarray | float]
                 ) -> np.ndarray:
    """Values of parts ``prefix0 … prefix{m−1}`` with the overrides in ``ohms`` applied.

    Returns
    -------
    ndarray, shape (m,) or trials + (m,), ohms
        Trial-shaped when an override is an array of shape (n_trials, 1).
    """
    nominal = np.asarray(nominal, dtype=float)
    m = nominal.shape[-1]
    if not ohms:
        return nominal
    got = [ohms.get(pid) for pid in _ids(prefix, m)]
    idx = [i for i, v in enumerate(got) if v is not None]
    if not idx:
        return nominal
    values = [got[i] for i in idx]
    shapes = {getattr(v, "shape", ()) for v in values}
    if len(shapes) == 1 and all(isinstance(v, np.ndarray) for v in values):
        trial = next(iter(shapes))
        if len(trial) >= 1 and trial[-1] == 1:  # the usual trials × 1 overrides: join in C
            out = np.array(np.broadcast_to(nominal, (*trial[:-1], m)), dtype=float)
            out[..., idx] = np.concatenate(values, axis=-1)
            return out
    trial = shapes.pop() if len(shapes) == 1 else np.broadcast_shapes(*[np.shape(v) for v in values])
    if shapes or any(np.shape(v) != trial for v in values[:1]):
        values = [np.broadcast_to(v, trial) for v in values]
    stacked = np.moveaxis(np.array(values, dtype=float), 0, -1)  # trial + (k,)
    lead = trial[:-1] if trial else ()
    out = np.array(np.broadcast_to(nominal, (*lead, m)), dtype=float)
    out[..., idx] = stacked[..., 0, :] if trial else stacked
    return out


@dataclass
class CompiledGroup:
    """Cumulative conductances of one group: ``c_hi[..., t]`` = Σ of legs 0…t−1 to ``high``,
    ``c_lo[..., t]`` = Σ of legs t…m−1 to ``low`` (siemens, shape trials + (m + 1,))."""

    node: str
    high: str
    low: str | None
    c_hi: np.ndarray
    c_lo: np.ndarray


def _cumulative(g: np.ndarray) -> np.ndarray:
    zero = np.zeros((*g.shape[:-1], 1))
    return np.concatenate([zero, np.cumsum(g, axis=-1)], axis=-1)


def compile_groups(st, net, ohms: Mapping[str, np.ndarray | float]) -> list[CompiledGroup]:
    """Cumulative tables of every group of ``net``; registers the groups' matrix pattern in ``st``."""
    out = []
    for grp in net.groups:
        r = array_values(grp.prefix, grp.ohms, ohms)
        c_hi = _cumulative(1.0 / (r + grp.ron_high))
        if grp.low is None:
            c_lo = np.zeros_like(c_hi)
        else:  # summed from the far end, not total − partial sum: no round-off for unequal legs
            c_lo = np.flip(_cumulative(np.flip(1.0 / (r + grp.ron_low), axis=-1)), axis=-1)
        out.append(CompiledGroup(grp.node, grp.high, grp.low, c_hi, c_lo))
        for rail in (grp.high, grp.low):
            if rail is not None:
                st.stamp({}, {}, grp.node, rail, 0.0)  # pattern only
    return out


def _at_levels(cumulative: np.ndarray, level: np.ndarray) -> np.ndarray:
    """``cumulative`` (shape trials + (m + 1,), singleton axes allowed) read at ``level`` (int,
    any code shape): shape trials + level's shape, so trials lead and the code axes follow — the
    flat layout's (n_trials, n_chunk) or the bit-tensor layout's (n_trials, *code axes)."""
    lead = tuple(d for d in cumulative.shape[:-1] if d != 1)
    return np.take(cumulative.reshape(lead + cumulative.shape[-1:]), level, axis=-1)


def stamp_groups(st, levels: list, entries: dict, b: dict) -> None:
    """Add every group's conductances to the nodal ``entries`` and ``b``.

    ``levels[k]`` is group k's level per code (the decode columns after the legs), shape
    (n_chunk,) or the bit-tensor layout's code axes.
    """
    for grp, level in zip(st.groups, levels, strict=True):
        t = np.asarray(level).astype(np.int64)
        st.stamp(entries, b, grp.node, grp.high, _at_levels(grp.c_hi, t))
        if grp.low is not None:
            st.stamp(entries, b, grp.node, grp.low, _at_levels(grp.c_lo, t))


def group_elements(st, levels: list):
    """Every group as two conducting elements (node a, node b, conductance per code)."""
    for grp, level in zip(st.groups, levels, strict=True):
        t = np.asarray(level).astype(np.int64)
        yield grp.node, grp.high, _at_levels(grp.c_hi, t)
        if grp.low is not None:
            yield grp.node, grp.low, _at_levels(grp.c_lo, t)


def plain_equivalent(net, min_ron: float = 0.0):
    """The same circuit with only plain elements: chains as resistors, groups as one switched leg
    per member, a selector as one switched leg per selectable node (``ohms`` = the switch's
    on-resistance, at least ``min_ron``, driven when selected). For checks against the general
    solver and other simulators on small networks; the decode grows to codes × legs.
    """
    import dataclasses

    from .network import SwitchedLeg

    if not (net.chains or net.groups or net.selector is not None):
        return net
    legs = list(net.legs)
    n_legs = len(legs)
    for grp in net.groups:
        legs += grp.legs()
    sel = net.selector
    if sel is not None:
        ron = max(sel.ron, min_ron)
        legs += [SwitchedLeg(f"{sel.part_id}{i}", sel.role, name, sel.out, None, ron, 0.0, 0.0)
                 for i, name in enumerate(sel.nodes)]
    sizes = [grp.size for grp in net.groups]
    decode_groups = net.decode

    def decode(codes):
        codes = np.asarray(codes, dtype=np.int64)
        raw = np.asarray(decode_groups(codes))
        cols = [raw[:, :n_legs].astype(bool)]
        for k, m in enumerate(sizes):
            cols.append(raw[:, n_legs + k][:, None] > np.arange(m)[None, :])
        if sel is not None:
            cols.append(np.asarray(sel.select(codes))[:, None] == np.arange(len(sel.nodes))[None, :])
        return np.concatenate(cols, axis=1)

    resistors = [*net.resistors, *[r for chain in net.chains for r in chain.resistors()]]
    return dataclasses.replace(net, resistors=resistors, legs=legs, decode=decode, chains=[],
                               groups=[], selector=None)


def plain_size(net) -> int:
    """Number of plain elements :func:`plain_equivalent` would make."""
    n = len(net.resistors) + len(net.legs) + sum(c.size for c in net.chains)
    n += sum(g.size for g in net.groups)
    return n + (len(net.selector.nodes) if net.selector is not None else 0)
