"""Networks with a code-selected tap switch (:class:`~rungwise.core.network.Selector`) or with
array-held resistor strings (:class:`~rungwise.core.network.ResistorChain`).

The network behind a selector does not depend on the code, so it is solved once: every selectable
node's open-circuit voltage ``v``, its Thevenin resistance ``r`` (a diagonal entry of the inverse
nodal matrix) and ``h``, the share of a current injected there that returns through the reference
(by reciprocity: the node's voltage with the reference at 1 V and every other fixed node at 0 V).
Each code is then a Thevenin divider::

    vout = v·RL / (RL + r + ron),   rout = r + ron,   iref = iref_open + h·vout/RL.

Two exact ways to get ``v``, ``r`` and ``h``:

* **series path** (closed form): when the resistors form one series path between two fixed nodes
  (a resistor string, with or without the reference's output resistance), with cumulative
  resistance S from one end and total T: ``v = va + (vb − va)·S/T``, ``r = S(T − S)/T``. O(n), and
  vectorised over Monte Carlo trials;
* **sparse** (any other fixed network): one sparse LU factorisation (scipy.sparse) and one solve
  per selectable node for the diagonal of the inverse; per trial. Tests compare the two.

Networks with chains but no selector are solved by the general solver on :func:`expanded` (the
solver's dispatch decides).
"""

from __future__ import annotations

import dataclasses
from collections.abc import Mapping

import numpy as np

from .element_arrays import array_values
from .errors import NetworkError
from .network import ChainNodes, Network
from .solution import Solution, check_connected


@dataclasses.dataclass
class TapTable:
    """Per selectable node (last axis, in ``Selector.nodes`` order; leading axes = trials).

    ``v`` open-circuit volts, ``r`` Thevenin ohms, ``h`` share of an injected current returning
    through the reference (0 … 1), ``iref_open`` the reference current with the output open,
    amperes (trial-shaped scalar).
    """

    v: np.ndarray
    r: np.ndarray
    h: np.ndarray
    iref_open: np.ndarray | float
    method: str


def expanded(net: Network) -> Network:
    """``net`` with every chain turned into plain resistors."""
    extra = [r for chain in net.chains for r in chain.resistors()]
    return dataclasses.replace(net, resistors=[*net.resistors, *extra], chains=[])


def solve_selected(net: Network, ohms: Mapping[str, np.ndarray | float], codes,
                   keep_nodes: bool) -> Solution:
    """Solve a network with a selector at ``codes``; see the module docstring.

    Returns a :class:`~rungwise.core.solution.Solution`; with ``keep_nodes`` only the fixed nodes
    and the output node are reported.
    """
    sel, out = net.selector, net.output
    if net.legs or net.groups:
        raise NetworkError(sel.out, "a tap selector needs a code-independent network: switched "
                           "legs cannot share a network with it")
    if out.kind != "node" or out.node != sel.out:
        raise NetworkError(sel.out, f"the output must be the selector's node '{sel.out}'")
    codes = np.arange(net.n_codes) if codes is None else np.asarray(codes, dtype=np.int64)
    table = tap_table(net, ohms)
    idx = np.asarray(sel.select(codes), dtype=np.int64)
    v, r, h = table.v[..., idx], table.r[..., idx] + sel.ron, table.h[..., idx]
    load = out.load_ohms
    if out.buffered or not np.isfinite(load):
        v_net, i_load = v, np.zeros_like(v)
    else:
        v_net = out.loaded_voltage(v, r)
        i_load = v_net / load
    iref = table.iref_open + h * i_load
    vout = v_net * (out.gain if out.buffered else 1.0)
    shape = np.shape(vout)
    nodes = {}
    if keep_nodes:
        nodes = {k: np.full(shape, float(x)) for k, x in net.fixed.items()}
        nodes[out.node] = np.array(v_net, dtype=float)
    return Solution(vout=np.array(vout, dtype=float), rout=np.array(r, dtype=float),
                    iref=np.array(np.broadcast_to(iref, shape), dtype=float),
                    method=table.method, node_voltages=nodes)


def tap_table(net: Network, ohms: Mapping[str, np.ndarray | float],
              method: str = "auto") -> TapTable:
    """Open-circuit voltage, Thevenin resistance and return share at every selectable node.

    Parameters
    ----------
    net : Network
        With a selector; the rest code-independent.
    ohms : mapping part id → ohms (float or array of shape (n_trials, 1))
    method : {"auto", "series-path", "sparse"}
        ``auto`` takes the closed form when the network is one series path.
    """
    for r in net.resistors:
        if net.selector.out in (r.a, r.b):
            raise NetworkError(net.selector.out, f"the selector's node '{net.selector.out}' must "
                               "connect only through the tap switch")
    if method in ("auto", "series-path"):
        table = _series_path(net, ohms)
        if table is not None:
            return table
        if method == "series-path":
            raise NetworkError(net.selector.out, "the network is not one series path")
    return _sparse(net, ohms)


# ------------------------------------------------------------------------------------------------
# closed form for one series path


def _series_path(net: Network, ohms) -> TapTable | None:
    sel = net.selector
    segments = []  # (node_a, node_b, ohms array trials + (k,), chain or None)
    interior: dict[str, object] = {}
    for chain in net.chains:
        segments.append((chain.start, chain.end, array_values(chain.prefix, chain.ohms, ohms), chain))
        interior[chain.node_prefix] = chain
    for res in net.resistors:
        for name in (res.a, res.b):
            for prefix, chain in interior.items():
                tail = name[len(prefix):] if name.startswith(prefix) else ""
                if tail.isdigit() and 0 < int(tail) < chain.size:
                    return None
        value = np.asarray(ohms.get(res.part_id, res.ohms), dtype=float)
        segments.append((res.a, res.b, value if value.ndim else value[None], None))
    degree: dict[str, list[int]] = {}
    for k, (a, b, _, _) in enumerate(segments):
        degree.setdefault(a, []).append(k)
        degree.setdefault(b, []).append(k)
    ends = [n for n in degree if n in net.fixed]
    if any(len(v) != 2 for n, v in degree.items() if n not in net.fixed) or len(ends) != 2 \
            or any(len(degree[n]) != 1 for n in ends):
        return None
    # walk from one fixed end to the other
    path_arrays, offsets, node_pos = [], {}, {ends[0]: 0}
    cur, prev_seg, pos = ends[0], None, 0
    used = 0
    while True:
        nxt = [k for k in degree[cur] if k != prev_seg]
        if not nxt:
            break
        k = nxt[0]
        a, b, arr, chain = segments[k]
        forward = a == cur
        path_arrays.append(arr if forward else arr[..., ::-1])
        if chain is not None:
            offsets[id(chain)] = (chain, pos, forward, chain.size)
        pos += arr.shape[-1]
        cur = b if forward else a
        node_pos[cur] = pos
        prev_seg = k
        used += 1
        if cur in net.fixed:
            break
    if used != len(segments) or cur != ends[1]:
        return None
    shape = np.broadcast_shapes(*[p.shape[:-1] for p in path_arrays])
    steps = np.concatenate([np.broadcast_to(p, (*shape, p.shape[-1])) for p in path_arrays], axis=-1)
    s = np.concatenate([np.zeros((*shape, 1)), np.cumsum(steps, axis=-1)], axis=-1)
    pos_sel = _positions(sel.nodes, offsets, node_pos)
    if pos_sel is None:
        return None
    total = s[..., -1:]
    s_sel = s[..., pos_sel]
    va, vb = net.fixed[ends[0]], net.fixed[ends[1]]
    frac = s_sel / total
    v = va + (vb - va) * frac
    r = s_sel * (total - s_sel) / total
    if net.source == ends[1]:
        h, iref_open = frac, (vb - va) / total[..., 0]
    elif net.source == ends[0]:
        h, iref_open = 1.0 - frac, (va - vb) / total[..., 0]
    else:
        h, iref_open = np.zeros_like(frac), 0.0
    if np.ndim(iref_open):
        iref_open = np.asarray(iref_open)[..., None]
    return TapTable(v, r, h, iref_open, "series-path")


def _positions(nodes, offsets, node_pos) -> np.ndarray | None:
    """Position along the path of every selectable node (vectorised for a chain's own nodes)."""
    if isinstance(nodes, ChainNodes) and id(nodes.chain) in offsets:
        _, start, forward, m = offsets[id(nodes.chain)]
        i = np.arange(m + 1)
        return start + (i if forward else m - i)
    pos = dict(node_pos)
    for chain, start, forward, m in offsets.values():
        for i, name in enumerate(chain.nodes()):
            pos[name] = start + (i if forward else m - i)
    if any(name not in pos for name in nodes):
        return None
    return np.array([pos[name] for name in nodes], dtype=np.int64)


# ------------------------------------------------------------------------------------------------
# general fixed network: sparse LU


def _sparse(net: Network, ohms) -> TapTable:
    import scipy.sparse as sp
    from scipy.sparse.linalg import splu

    flat = expanded(net)
    sel = net.selector
    nodes = [n for n in dict.fromkeys(x for r in flat.resistors for x in (r.a, r.b))
             if n not in net.fixed]
    check_connected(dataclasses.replace(flat, output=dataclasses.replace(
        flat.output, node=next(iter(net.fixed)))), nodes)
    index = {name: i for i, name in enumerate(nodes)}
    values = [np.asarray(ohms.get(r.part_id, r.ohms), dtype=float) for r in flat.resistors]
    shape = np.broadcast_shapes(*[np.shape(v) for v in values]) if values else ()
    lead = shape[:-1] if shape else ()
    n_trials = int(np.prod(lead)) if lead else 1
    conductances = 1.0 / np.stack([np.broadcast_to(v, shape).reshape(-1) for v in values])
    sel_names = list(sel.nodes)
    n = len(nodes)
    v_all, r_all, h_all, i_all = [], [], [], []
    for t in range(n_trials):
        g = conductances[:, t]
        rows, cols, data = [], [], []
        b = np.zeros(n)
        b_src = np.zeros(n)
        for res, gk in zip(flat.resistors, g, strict=True):
            ia, ib = index.get(res.a), index.get(res.b)
            for i, j, other in ((ia, ib, res.b), (ib, ia, res.a)):
                if i is None:
                    continue
                rows.append(i)
                cols.append(i)
                data.append(gk)
                if j is not None:
                    rows.append(i)
                    cols.append(j)
                    data.append(-gk)
                else:
                    b[i] += gk * net.fixed[other]
                    b_src[i] += gk * (other == net.source)
        lu = splu(sp.csc_matrix((data, (rows, cols)), shape=(n, n)))
        x, x_src = lu.solve(b), lu.solve(b_src)
        volts = {**net.fixed, **{name: x[i] for i, name in enumerate(nodes)}}
        v = np.array([volts[name] for name in sel_names])
        h = np.array([x_src[index[name]] if name in index else float(name == net.source)
                      for name in sel_names])
        r = np.zeros(len(sel_names))
        unknown = [k for k, name in enumerate(sel_names) if name in index]
        for start in range(0, len(unknown), 256):
            part = unknown[start:start + 256]
            rhs = np.zeros((n, len(part)))
            rhs[[index[sel_names[k]] for k in part], np.arange(len(part))] = 1.0
            sol = lu.solve(rhs)
            r[part] = sol[[index[sel_names[k]] for k in part], np.arange(len(part))]
        iref = sum(gk * (volts[res.a] - volts[res.b]) * ((res.a == net.source) - (res.b == net.source))
                   for res, gk in zip(flat.resistors, g, strict=True))
        v_all.append(v)
        r_all.append(r)
        h_all.append(h)
        i_all.append(iref)
    if not lead:
        return TapTable(v_all[0], r_all[0], h_all[0], float(i_all[0]), "sparse")
    k = len(sel_names)
    return TapTable(np.reshape(v_all, (*lead, k)), np.reshape(r_all, (*lead, k)),
                    np.reshape(h_all, (*lead, k)), np.reshape(i_all, (*lead, 1)), "sparse")

