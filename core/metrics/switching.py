"""A network's elements as weighted branches, for the transient solver (``transient.py``).

Every resistor and every switch position of every leg is a *branch* k from node a to node b with
conductance g_k: a leg gives two, towards ``high`` (g = 1/(R + ron_high)) and towards ``low``
(g = 1/(R + ron_low); none when ``low`` is open). At any instant a leg conducts through exactly
one of its branches (weight 1, the other 0), and a switch in motion adds a series source e(t) to
the conducting branch (the current a → b is g·(V_a − V_b − e)). The nodal matrix, the right-hand
side and the output are then linear in the weights w (shape (batch, K)):

    G = w @ S  (S: K × n², sparse),  rhs = w @ R + (w·e) @ P,  y = (w @ Oc)·x + w @ Od + (w·e) @ Oe.

Nodes are the network's unknown nodes (fixed ones — ground, an ideal reference, a virtual-ground
summing node — have no dynamics). ``cap`` holds each node's capacitance to ground: ``node_c``
everywhere and ``load_c`` added at an unbuffered output node. The junction between a leg resistor
and its switch is not a node (the switch is part of the leg).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
import scipy.sparse as sp

from ..design import MIN_OHMS
from ..element_arrays import plain_equivalent
from ..network import Network

CAP_FLOOR = 1e-21
"""A load capacitance below 1 zF counts as none (its time constant is beyond double precision
beside any edge or other node); ``timing.node_c`` is refused below 1 aF instead."""


@dataclass
class Branches:
    """The weighted-branch form of one network (see the module docstring).

    Attributes
    ----------
    nodes : list[str]            unknown nodes, n of them
    cap : ndarray (n,)           capacitance to ground, F
    S : sparse (K, n²)           conductance stamps;  R : ndarray (K, n) fixed-voltage injections
    P : ndarray (K, n)           injection per volt of series source
    Oc : ndarray (K, n), Od : ndarray (K,), Oe : ndarray (K,)   output terms (virtual ground)
    out_gain : ndarray (n,)      output = out_gain·x + branch terms (node outputs)
    static_w : ndarray (K,)      1 for resistors, 0 for leg branches
    leg_high, leg_low : ndarray (L,) int   branch index of each leg's positions (−1: open)
    leg_bit : ndarray (L,) int   the code bit whose edge times the leg (−1: decoded from several)
    leg_shift : ndarray (L,) int lowest bit a decoded leg depends on
    ideal_high, ideal_low : ndarray (L,)   ideal rail voltages of the switch's driven end, V
        (NaN where the rail has none: an open position or a node inside the network)
    decode : callable            codes → drive states (n_codes, L) bool
    """

    nodes: list[str]
    cap: np.ndarray
    S: sp.csr_matrix
    R: np.ndarray
    P: np.ndarray
    Oc: np.ndarray
    Od: np.ndarray
    Oe: np.ndarray
    out_gain: np.ndarray
    static_w: np.ndarray
    leg_high: np.ndarray
    leg_low: np.ndarray
    leg_bit: np.ndarray
    leg_shift: np.ndarray
    ideal_high: np.ndarray
    ideal_low: np.ndarray
    decode: object

    @property
    def n(self) -> int:
        """Number of unknown nodes."""
        return len(self.nodes)

    def weights(self, drive: np.ndarray) -> np.ndarray:
        """Branch weights for drive states (..., L) bool → (..., K)."""
        drive = np.asarray(drive, dtype=bool)
        w = np.broadcast_to(self.static_w, drive.shape[:-1] + self.static_w.shape).copy()
        w[..., self.leg_high] = drive
        has_low = self.leg_low >= 0
        w[..., self.leg_low[has_low]] = ~drive[..., has_low]
        return w


def plain_node_count(net: Network) -> int:
    """Unknown nodes of the plain equivalent (what the dense transient solver must handle); a
    chain's interior nodes are counted once (``Network.unknown_count`` holds them)."""
    return net.unknown_count()


def branches(net: Network, node_c: float, load_c: float) -> Branches:
    """The weighted-branch form of ``net`` with its capacitances (F)."""
    leg_bits = getattr(net.decode, "leg_bits", None)
    shifts = getattr(net.decode, "level_shifts", ())
    bit_of = [int(b) for b in leg_bits] if leg_bits is not None else [-1] * len(net.legs)
    shift_of = list(bit_of)
    for grp, s in zip(net.groups, shifts or [0] * len(net.groups), strict=True):
        bit_of += [-1] * grp.size
        shift_of += [int(s)] * grp.size
    if net.selector is not None:
        bit_of += [-1] * len(net.selector.nodes)
        shift_of += [0] * len(net.selector.nodes)
    plain = plain_equivalent(net, min_ron=MIN_OHMS)  # an ideal tap switch as 1 mΩ
    fixed = plain.fixed
    nodes = plain.unknown_nodes()
    index = {name: i for i, name in enumerate(nodes)}
    n = len(nodes)
    out = plain.output
    virtual = out.kind == "virtual-ground"
    ref_nodes = {r.b if r.a == plain.source else r.a for r in plain.resistors
                 if plain.source in (r.a, r.b) and r.role == "reference"}

    rows, cols, vals = [], [], []
    R_rows, P_rows, Oc_rows, Od, Oe = [], [], [], [], []
    k_count = 0

    def add(a: str, b: str | None, g: float) -> int:
        nonlocal k_count
        k = k_count
        k_count += 1
        ia, ib = index.get(a, -1), index.get(b, -1) if b is not None else -1
        r_row, p_row, oc_row = np.zeros(n), np.zeros(n), np.zeros(n)
        od = oe = 0.0
        if b is not None and g > 0:
            va, vb = fixed.get(a, 0.0), fixed.get(b, 0.0)
            for i, j, s in ((ia, ia, 1), (ib, ib, 1), (ia, ib, -1), (ib, ia, -1)):
                if i >= 0 and j >= 0:
                    rows.append(k)
                    cols.append(i * n + j)
                    vals.append(s * g)
            if ia >= 0:
                r_row[ia] += g * vb
                p_row[ia] += g
            if ib >= 0:
                r_row[ib] += g * va
                p_row[ib] -= g
            if virtual and out.node in (a, b):
                sign = 1.0 if b == out.node else -1.0  # current a → b counted into the sum node
                scale = -out.feedback_ohms * sign * g
                if ia >= 0:
                    oc_row[ia] += scale
                if ib >= 0:
                    oc_row[ib] -= scale
                od = scale * (va - vb)
                oe = -scale
        R_rows.append(r_row)
        P_rows.append(p_row)
        Oc_rows.append(oc_row)
        Od.append(od)
        Oe.append(oe)
        return k

    static = []
    for r in plain.resistors:
        static.append(add(r.a, r.b, 1.0 / r.ohms))
    if out.kind == "node" and not out.buffered and np.isfinite(out.load_ohms):
        static.append(add(out.node, "gnd", 1.0 / out.load_ohms))
    leg_high, leg_low, ideal_high, ideal_low = [], [], [], []

    def ideal(node: str | None) -> float:
        if node is None:
            return np.nan
        if node in fixed:
            return fixed[node]
        return fixed[plain.source] if node in ref_nodes else np.nan

    for leg in plain.legs:
        leg_high.append(add(leg.node, leg.high, 1.0 / (leg.ohms + leg.ron_high)))
        leg_low.append(add(leg.node, leg.low, 1.0 / (leg.ohms + leg.ron_low))
                       if leg.low is not None else -1)
        ideal_high.append(ideal(leg.high))
        ideal_low.append(ideal(leg.low))
    static_w = np.zeros(k_count)
    static_w[static] = 1.0
    cap = np.full(n, float(node_c))
    load_c = load_c if load_c >= CAP_FLOOR else 0.0
    out_gain = np.zeros(n)
    if out.kind == "node":
        i = index[out.node]
        out_gain[i] = out.gain if out.buffered else 1.0
        if not out.buffered:
            cap[i] += load_c
    S = sp.csr_matrix((vals, (rows, cols)), shape=(k_count, n * n))
    shape = (k_count, n)
    return Branches(
        nodes=nodes, cap=cap, S=S,
        R=np.array(R_rows).reshape(shape), P=np.array(P_rows).reshape(shape),
        Oc=np.array(Oc_rows).reshape(shape), Od=np.array(Od, float), Oe=np.array(Oe, float),
        out_gain=out_gain, static_w=static_w,
        leg_high=np.array(leg_high, dtype=np.int64), leg_low=np.array(leg_low, dtype=np.int64),
        leg_bit=np.array(bit_of[:len(plain.legs)], dtype=np.int64),
        leg_shift=np.array(shift_of[:len(plain.legs)], dtype=np.int64),
        ideal_high=np.array(ideal_high, float), ideal_low=np.array(ideal_low, float),
        decode=plain.decode,
    )


def leg_skews(br: Branches, skew: tuple[float, ...]) -> np.ndarray:
    """When each leg's edge starts, s (shape (L,)): its bit's skew; a leg decoded from several
    bits (a thermometer segment, a string tap) waits for the latest of the bits it reads."""
    s = np.asarray(skew, float)
    out = np.empty(br.leg_bit.size)
    own = br.leg_bit >= 0
    out[own] = s[br.leg_bit[own]]
    later = np.maximum.accumulate(s[::-1])[::-1] if s.size else s  # max over bits ≥ shift
    shift = np.clip(br.leg_shift[~own], 0, max(s.size - 1, 0))
    out[~own] = later[shift] if s.size else 0.0
    return out
