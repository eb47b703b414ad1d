"""Worst-case power of array-held elements (resistor strings, thermometer leg groups), exact and
vectorised over codes, with no element × code matrix.

*String* (one :class:`~rungwise.core.network.ResistorChain` between two fixed nodes, each end
fixed or joined to a fixed node by one resistor such as ``ref_r``, and a tap
:class:`~rungwise.core.network.Selector`): at a code whose tap is chain node j, every resistor on
the reference's side of the tap carries the reference current ``iref`` and every resistor on the
other side carries ``iref − I_L``, I_L being the current the tap switch passes to the output
(Vout/load_r on an unbuffered output, else 0) — Kirchhoff's current law along a series path
(common practice). So resistor i dissipates R_i·iref² at the codes whose tap lies on its far side
and R_i·(iref − I_L)² at the others; its worst case is a maximum over a prefix and a suffix of
the codes (taps ascending with the code), read from running maxima. The network's power at a code
is iref²·S_ref + (iref − I_L)²·S_other + (ron + load_r)·I_L².

*Thermometer group* (legs from one node, level t drives legs 0 … t−1): from the solved node
voltages, a driven leg i carries (V_high − V_node)/(R_i + ron_high) and a resting one
(V_node − V_low)/(R_i + ron_low); with levels ascending with the code, leg i is driven on a suffix
of the codes, so its worst case is again a prefix/suffix maximum. The group's power at a code is
(V_high − V_node)²·G_high(t) + (V_node − V_low)²·G_low(t) with the cumulative leg conductances G
of ``element_arrays`` (leg and switch together).

Both are checked against the per-element computation on the plain equivalent
(``tests/core/test_power_arrays.py``).
"""

from __future__ import annotations

import numpy as np

from ..element_arrays import array_values
from ..network import Network, PartArray, PartList
from ..solution import Solution
from ..solve import solve
from .power_types import ArrayPower, ElementPower, ElementPowers, totals


def running_max(x: np.ndarray, reverse: bool = False) -> tuple[np.ndarray, np.ndarray]:
    """Running maximum of ``x`` (shape (n,)) and the first index where it is reached.

    Forward: ``value[e] = max(x[0..e])``. ``reverse=True``: ``value[s] = max(x[s..n−1])``. The
    index is always the lowest one holding that maximum (as ``numpy.argmax`` would give).
    """
    n = x.shape[0]
    idx = np.arange(n)
    if not reverse:
        value = np.maximum.accumulate(x)
        prev = np.concatenate([[-np.inf], value[:-1]])
        record = np.where(x > prev, idx, 0)  # a new strict maximum starts here
        return value, np.maximum.accumulate(record)
    value = np.maximum.accumulate(x[::-1])[::-1]
    record = np.where(x == value, idx, n)  # x[k] is the maximum of its own suffix
    return value, np.minimum.accumulate(record[::-1])[::-1]


def split_worst(pre: np.ndarray, suf: np.ndarray, ends: np.ndarray, c_pre: np.ndarray,
                c_suf: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Worst case of elements that see ``c_pre·pre[k]`` at codes k < ``ends`` and
    ``c_suf·suf[k]`` at codes k ≥ ``ends``.

    Parameters
    ----------
    pre, suf : ndarray, shape (n_codes,)
    ends : ndarray of int, shape (m,) — per element, its first code of the second kind (0 … n)
    c_pre, c_suf : ndarray, shape (m,) — non-negative coefficients

    Returns
    -------
    value : ndarray, shape (m,) — the largest value over all codes
    code : ndarray of int, shape (m,) — the lowest code where it is reached
    """
    n = pre.shape[0]
    pv, pk = running_max(pre)
    sv, sk = running_max(suf, reverse=True)
    has_pre, has_suf = ends > 0, ends < n
    a = np.where(has_pre, c_pre * pv[np.clip(ends - 1, 0, n - 1)], -np.inf)
    b = np.where(has_suf, c_suf * sv[np.clip(ends, 0, n - 1)], -np.inf)
    take_pre = a >= b  # on a tie the prefix holds the lower code
    value = np.where(take_pre, a, b)
    code = np.where(take_pre, pk[np.clip(ends - 1, 0, n - 1)], sk[np.clip(ends, 0, n - 1)])
    return value, code.astype(np.int64)


def part_power_arrays(elements, parts) -> tuple[np.ndarray, np.ndarray]:
    """Each part's worst-case power (W, NaN when not worked out) and its code (−1 then), aligned
    with ``parts``; shapes (n_parts,). ``elements`` is what ``worst_case`` returned."""
    blocks = elements.blocks if isinstance(elements, ElementPowers) else list(elements)
    arrays = {b.prefix: b for b in blocks if isinstance(b, ArrayPower) and b.kind == "part"}
    plain = {e.name: e for e in blocks if not isinstance(e, ArrayPower)}
    pmax, pcode = [], []
    for b in PartList.of(parts).blocks:
        if isinstance(b, PartArray):
            got = arrays.get(b.prefix)
            if got is not None and got.size == b.size:
                pmax.append(got.power_max)
                pcode.append(got.power_code)
                continue
            pmax.append(np.full(b.size, np.nan))
            pcode.append(np.full(b.size, -1))
            for i, pid in enumerate(b.ids()):
                if pid in plain:
                    pmax[-1][i], pcode[-1][i] = plain[pid].power_max, plain[pid].power_code
            continue
        e = plain.get(b.part_id)
        pmax.append(np.array([np.nan if e is None else e.power_max]))
        pcode.append(np.array([-1 if e is None else e.power_code]))
    if not pmax:
        return np.zeros(0), np.zeros(0, dtype=np.int64)
    return np.concatenate(pmax).astype(float), np.concatenate(pcode).astype(np.int64)


def switch_maxima(elements) -> tuple[float, float, float]:
    """Largest current, sourced current and sunk current over every switch element, A."""
    blocks = elements.blocks if isinstance(elements, ElementPowers) else list(elements)
    cur, src, snk = [0.0], [0.0], [0.0]
    for b in blocks:
        if b.kind != "switch":
            continue
        if isinstance(b, ArrayPower):
            cur.append(float(np.max(b.current_max, initial=0.0)))
            src.append(float(np.max(b.source_max, initial=0.0)) if b.source_max is not None else 0.0)
            snk.append(float(np.max(b.sink_max, initial=0.0)) if b.sink_max is not None else 0.0)
        else:
            cur.append(b.current_max)
            src.append(b.source_max)
            snk.append(b.sink_max)
    return max(cur), max(src), max(snk)


# ------------------------------------------------------------------------------------------------
# strings


def _string_shape(net: Network):
    """(chain, source at the chain's end?, resistor on the source side, on the other side), or
    ``None`` when the network is not one string with a tap selector."""
    sel, out = net.selector, net.output
    if (sel is None or len(net.chains) != 1 or net.legs or net.groups or out.kind != "node"
            or out.node != sel.out):
        return None
    chain = net.chains[0]
    if getattr(sel.nodes, "chain", None) is not chain:
        return None
    ends = {}
    for end in (chain.start, chain.end):
        if end in net.fixed:
            ends[end] = (end, None)
            continue
        touching = [r for r in net.resistors if end in (r.a, r.b)]
        if len(touching) != 1:
            return None
        r = touching[0]
        far = r.b if r.a == end else r.a
        if far not in net.fixed:
            return None
        ends[end] = (far, r)
    if len(net.resistors) != sum(r is not None for _, r in ends.values()):
        return None
    (start_fixed, start_r), (end_fixed, end_r) = ends[chain.start], ends[chain.end]
    if net.source == end_fixed:
        return chain, True, end_r, start_r
    if net.source == start_fixed:
        return chain, False, start_r, end_r
    return None


def string_worst_case(net: Network, solved: Solution | None = None):
    """Worst case of a string network (see the module docstring), or ``None`` when ``net`` is not
    one. Returns ``(elements, totals)`` like ``power.worst_case``."""
    shape = _string_shape(net)
    if shape is None:
        return None
    chain, source_at_end, r_src, r_other = shape
    sel, out = net.selector, net.output
    codes = np.arange(net.n_codes)
    sol = solved if solved is not None and solved.vout.shape == (net.n_codes,) else solve(net)
    taps = np.asarray(sel.select(codes), dtype=np.int64)
    if np.any(np.diff(taps) < 0):
        return None
    iref = np.asarray(sol.iref, dtype=float)
    loaded = not out.buffered and np.isfinite(out.load_ohms)
    i_load = np.asarray(sol.vout, float) / out.load_ohms if loaded else np.zeros(net.n_codes)
    a, b = iref, iref - i_load  # source side of the tap, other side
    r = np.asarray(chain.ohms, dtype=float)
    m = r.shape[0]
    idx = np.arange(m)
    # resistor i lies on the source side of tap j when i ≥ j (source at the end) or i < j
    if source_at_end:  # codes with tap ≤ i come first: source side (a) on the prefix
        ends = np.searchsorted(taps, idx, side="right")
        power, code = split_worst(a * a, b * b, ends, r, r)
    else:  # codes with tap ≤ i: resistor i on the other side (b) first
        ends = np.searchsorted(taps, idx, side="right")
        power, code = split_worst(b * b, a * a, ends, r, r)
    with np.errstate(invalid="ignore", divide="ignore"):
        current = np.where(r > 0, np.sqrt(power / r), 0.0)
    s = np.concatenate([[0.0], np.cumsum(r)])
    below = s[taps]  # resistance between the start and the tap
    s_src = (s[-1] - below) if source_at_end else below
    s_other = s[-1] - s_src
    per_code = {}
    ron = sel.ron
    for res, cur in ((r_src, a), (r_other, b)):
        if res is not None:
            per_code[res.part_id] = ("reference" if res.role == "reference" else "part",
                                     cur * cur * res.ohms, cur)
    switch_p = i_load * i_load * ron
    per_code[f"switch:{sel.part_id}"] = ("switch", switch_p, -i_load)
    if loaded:
        per_code["load"] = ("load", i_load * i_load * out.load_ohms, i_load)
    total = a * a * s_src + b * b * s_other
    for _, p, _ in per_code.values():
        total = total + p
    plain = []
    for name, (kind, p, i) in per_code.items():
        k = int(np.argmax(p))
        src = float(max(np.max(i), 0.0)) if kind == "switch" else 0.0
        plain.append(ElementPower(name, kind, float(p[k]), k, float(np.max(np.abs(i))), src, 0.0))
    kinds = {"part": 0, "switch": 1, "reference": 2, "load": 3}
    plain.sort(key=lambda e: kinds[e.kind])
    block = ArrayPower(chain.prefix, "part", power, code, current)
    parts_first = [e for e in plain if e.kind == "part"]
    rest = [e for e in plain if e.kind != "part"]
    elements = ElementPowers([block, *parts_first, *rest] if _chain_first(net, chain)
                             else [*parts_first, block, *rest])
    return elements, totals(net, total, total, sol.iref)


def _chain_first(net: Network, chain) -> bool:
    parts = PartList.of(net.parts)
    return bool(parts.blocks) and isinstance(parts.blocks[0], PartArray) \
        and parts.blocks[0].prefix == chain.prefix


# ------------------------------------------------------------------------------------------------
# thermometer groups


def group_blocks(net: Network, volts, levels: list[np.ndarray]
                 ) -> tuple[list[ArrayPower], np.ndarray] | None:
    """Worst case of every thermometer group's legs and switches, and the groups' power at each
    code (W, shape (n_codes,)); ``None`` when a group's levels do not ascend with the code.

    ``volts``: node → volts at every code (fixed nodes included); ``levels[g]``: group g's level
    per code, shape (n_codes,).
    """
    blocks: list[ArrayPower] = []
    total = 0.0
    n = None
    for grp, level in zip(net.groups, levels, strict=True):
        t = np.asarray(level, dtype=np.int64)
        n = t.shape[0]
        if np.any(np.diff(t) < 0):
            return None
        r = array_values(grp.prefix, grp.ohms, {})
        m = r.shape[0]
        v_node = np.broadcast_to(np.asarray(volts[grp.node], float), (n,))
        dh = np.broadcast_to(np.asarray(volts[grp.high], float), (n,)) - v_node
        dl = (v_node - np.broadcast_to(np.asarray(volts[grp.low], float), (n,))
              if grp.low is not None else np.zeros(n))
        rh, rl = r + grp.ron_high, r + grp.ron_low
        ends = np.searchsorted(t, np.arange(m), side="right")  # first code driving leg i
        # prefix (resting on low) / suffix (driven to high)
        with np.errstate(divide="ignore"):
            gl = np.zeros(m) if grp.low is None else 1.0 / rl
        gh = 1.0 / rh
        p_part, k_part = split_worst(dl * dl, dh * dh, ends, r * gl * gl, r * gh * gh)
        p_sw, k_sw = split_worst(dl * dl, dh * dh, ends, grp.ron_low * gl * gl,
                                 grp.ron_high * gh * gh)
        cur, _ = split_worst(np.abs(dl), np.abs(dh), ends, gl, gh)
        src, _ = split_worst(np.zeros(n), dh, ends, np.zeros(m), gh)
        snk, _ = split_worst(dl, np.zeros(n), ends, gl, np.zeros(m))
        blocks.append(ArrayPower(grp.prefix, "part", p_part, k_part, cur))
        blocks.append(ArrayPower(f"switch:{grp.prefix}", "switch", p_sw, k_sw, cur,
                                 np.maximum(src, 0.0), np.maximum(snk, 0.0)))
        c_hi = np.concatenate([[0.0], np.cumsum(gh)])
        c_lo = np.concatenate([np.cumsum(gl[::-1])[::-1], [0.0]])  # from the far end (no total − part)
        total = total + dh * dh * c_hi[t] + dl * dl * c_lo[t]
    return blocks, np.broadcast_to(np.asarray(total, float), (n or 0,))
