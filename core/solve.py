"""The one solver: any :class:`~rungwise.core.network.Network`, every code, optionally every trial.

Two exact paths share one compilation of the network into nodal stamps:

* **general** — the nodal matrix changes with the code (unequal switch resistances, a reference with
  output resistance …): batched sparse elimination over codes × trials;
* **superposition** — the nodal matrix is the same for every code: one factorisation gives each
  leg's contribution (its *weight*), and all codes follow from one matrix product.

Both return the same :class:`Solution`; tests check them against each other and against ngspice.
"""

from __future__ import annotations

from collections.abc import Mapping
from dataclasses import dataclass, field
from typing import Literal

import numpy as np

from .errors import NetworkError
from .network import Network
from .sparse_elim import EliminationPlan, plan_elimination, solve_batched

Method = Literal["auto", "general", "superposition"]


@dataclass
class Solution:
    """Per-code results of one network.

    Attributes
    ----------
    vout : ndarray, shape batch = (n_codes,) or (n_trials, n_codes), volts
    rout : ndarray, same shape, ohms — Thevenin resistance at the output terminal, load excluded
        (for a virtual-ground output: the resistance the summing node sees).
    iref : ndarray, same shape, amperes — current delivered by the reference (positive sourcing).
    method : str
        ``"general"`` or ``"superposition"``.
    node_voltages : dict[str, ndarray]
        Every node's voltage (fixed ones included), same batch shape; filled when ``keep_nodes``.
    """

    vout: np.ndarray
    rout: np.ndarray
    iref: np.ndarray
    method: str
    node_voltages: dict[str, np.ndarray] = field(default_factory=dict)


# ------------------------------------------------------------------------------------------------
# compilation


def _conductance(ohms: np.ndarray | float) -> np.ndarray | float:
    return 1.0 / ohms


class _Stamps:
    """Nodal matrix and right-hand side, affine in the leg drives.

    ``A(code) = A0 + Σ_l drive_l · dA_l`` and ``b(code) = b0 + Σ_l drive_l · db_l``.
    Right-hand-side columns: 0 = the sources; 1 = probe (unit current into the output node, or the
    summing node's coupling conductances for a virtual-ground output).
    """

    def __init__(self, net: Network, ohms: Mapping[str, np.ndarray | float]) -> None:
        self.net = net
        self.ohms = ohms
        self.nodes = net.unknown_nodes()
        self.index = {name: i for i, name in enumerate(self.nodes)}
        n = len(self.nodes)
        self.n = n
        self.a0: dict[tuple[int, int], np.ndarray | float] = {}
        self.b0: dict[int, list] = {}
        self.leg_da: list[dict[tuple[int, int], np.ndarray | float]] = []
        self.leg_db: list[dict[int, list]] = []
        self.pairs: set[tuple[int, int]] = set()
        out = net.output
        self.virtual = out.kind == "virtual-ground"
        if self.virtual and out.node not in net.fixed:
            raise NetworkError(out.node, f"summing node '{out.node}' must be held at a fixed voltage")
        # fixed resistors (the reference's output resistance included)
        for r in net.resistors:
            g = _conductance(ohms.get(r.part_id, r.ohms))
            self._stamp(self.a0, self.b0, r.a, r.b, g)
        # legs: base = state 0, delta = state 1 − state 0
        self.leg_g: list[tuple[np.ndarray | float, np.ndarray | float | None]] = []
        for leg in net.legs:
            r_leg = ohms.get(leg.part_id, leg.ohms)
            g_hi = _conductance(r_leg + leg.ron_high)
            g_lo = None if leg.low is None else _conductance(r_leg + leg.ron_low)
            self.leg_g.append((g_hi, g_lo))
            da: dict[tuple[int, int], np.ndarray | float] = {}
            db: dict[int, list] = {}
            self._stamp(da, db, leg.node, leg.high, g_hi)
            if leg.low is not None:
                self._stamp(self.a0, self.b0, leg.node, leg.low, g_lo)
                self._stamp(da, db, leg.node, leg.low, -g_lo)
            self.leg_da.append(da)
            self.leg_db.append(db)

    def _stamp(self, a, b, na: str, nb: str, g) -> None:
        """Add conductance ``g`` between ``na`` and ``nb`` to entries ``a`` and sources/probe ``b``."""
        fixed = self.net.fixed
        out = self.net.output
        ia, ib = self.index.get(na), self.index.get(nb)
        for i, other, j in ((ia, nb, ib), (ib, na, ia)):
            if i is None:
                continue
            a[(i, i)] = a.get((i, i), 0.0) + g
            if j is not None:
                if i < j:
                    a[(i, j)] = a.get((i, j), 0.0) - g
                    self.pairs.add((i, j))
            else:
                v = fixed[other]
                col = b.setdefault(i, [0.0, 0.0])
                if v != 0.0:
                    col[0] = col[0] + g * v
                if self.virtual and other == out.node:
                    col[1] = col[1] + g

    def superposition_holds(self) -> bool:
        """True when no leg changes the nodal matrix (so outputs are affine in the drives)."""
        for da in self.leg_da:
            for value in da.values():
                if np.any(np.asarray(value) != 0.0):
                    return False
        return True


def _rhs_arrays(n: int, b: dict[int, list], probe_node: int | None, shape: tuple[int, ...]):
    """Right-hand sides per unknown as arrays of shape ``shape + (2,)``: sources, probe."""
    out = []
    for i in range(n):
        col = b.get(i, [0.0, 0.0])
        probe = col[1] + (1.0 if probe_node == i else 0.0)
        out.append(np.stack([np.broadcast_to(np.asarray(col[0], float), shape),
                             np.broadcast_to(np.asarray(probe, float), shape)], axis=-1))
    return out


_PLAN_CACHE: dict[tuple, EliminationPlan] = {}


def _plan(n: int, pairs: set[tuple[int, int]]) -> EliminationPlan:
    key = (n, frozenset(pairs))
    plan = _PLAN_CACHE.get(key)
    if plan is None:
        if len(_PLAN_CACHE) > 256:
            _PLAN_CACHE.clear()
        plan = plan_elimination(n, pairs)
        _PLAN_CACHE[key] = plan
    return plan


def _check_connected(net: Network, nodes: list[str]) -> None:
    """Raise :class:`NetworkError` naming a node with no path to a fixed node in any code."""
    links: dict[str, set[str]] = {name: set() for name in [*nodes, *net.fixed]}
    for r in net.resistors:
        links.setdefault(r.a, set()).add(r.b)
        links.setdefault(r.b, set()).add(r.a)
    for leg in net.legs:
        for rail in (leg.high, leg.low):
            if rail is not None:
                links.setdefault(leg.node, set()).add(rail)
                links.setdefault(rail, set()).add(leg.node)
    reached = set(net.fixed)
    frontier = list(net.fixed)
    while frontier:
        cur = frontier.pop()
        for nxt in links.get(cur, ()):
            if nxt not in reached:
                reached.add(nxt)
                frontier.append(nxt)
    for name in nodes:
        if name not in reached:
            raise NetworkError(name, f"node '{name}' has no DC path to ground or a source "
                               "(a floating node): the network cannot be solved")


# ------------------------------------------------------------------------------------------------
# the solver


def solve(
    net: Network,
    ohms: Mapping[str, np.ndarray | float] | None = None,
    codes: np.ndarray | None = None,
    method: Method = "auto",
    keep_nodes: bool = False,
) -> Solution:
    """Solve ``net`` exactly at every code.

    Parameters
    ----------
    net : Network
        Built by a topology builder.
    ohms : mapping part id → ohms, optional
        Overrides of resistor values; an array of shape (n_trials, 1) gives one value per Monte
        Carlo trial and makes every result shape (n_trials, n_codes).
    codes : ndarray of int, shape (n_codes,), optional
        A subset of codes (default: all rows of ``net.drive``).
    method : {"auto", "general", "superposition"}
        ``auto`` takes superposition when it is exact.
    keep_nodes : bool
        Also return every node's voltage.

    Returns
    -------
    Solution
        ``vout``, ``rout``, ``iref`` with shape (n_codes,) or (n_trials, n_codes).

    Raises
    ------
    NetworkError
        A node is floating, or superposition was asked for where it is not exact.
    """
    ohms = dict(ohms or {})
    st = _Stamps(net, ohms)
    _check_connected(net, st.nodes)
    codes = np.arange(net.n_codes) if codes is None else np.asarray(codes, dtype=np.int64)
    linear = st.superposition_holds()
    if method == "superposition" and not linear:
        raise NetworkError(net.output.node, "superposition is not exact for this network: a switch "
                           "changes the nodal matrix (unequal on-resistances or a reference with "
                           "output resistance)")
    use_super = linear and method in ("auto", "superposition")
    trial_shape = np.broadcast_shapes(*[np.shape(v) for v in ohms.values()]) if ohms else ()
    probe_node = None if st.virtual else st.index[net.output.node]
    plan = _plan(st.n, st.pairs)
    per_code = max(1, int(np.prod(trial_shape)))
    step = max(1, CHUNK_ELEMENTS // per_code)
    pieces = []
    for start in range(0, len(codes), step):
        drive = net.decode(codes[start:start + step]).astype(float)
        if st.n == 0:
            volts = {}
        elif use_super:
            volts = _solve_superposition(st, drive, trial_shape, probe_node, plan)
        else:
            volts = _solve_general(st, drive, trial_shape, probe_node, plan)
        pieces.append(_finish(st, drive, volts, trial_shape, keep_nodes, use_super))
    if len(pieces) == 1:
        return pieces[0]
    return Solution(
        vout=np.concatenate([p.vout for p in pieces], axis=-1),
        rout=np.concatenate([p.rout for p in pieces], axis=-1),
        iref=np.concatenate([p.iref for p in pieces], axis=-1),
        method=pieces[0].method,
        node_voltages={k: np.concatenate([p.node_voltages[k] for p in pieces], axis=-1)
                       for k in pieces[0].node_voltages},
    )


CHUNK_ELEMENTS = 1 << 18
"""Largest number of (trial, code) pairs solved in one numpy pass; bounds working memory."""


def _solve_general(st: _Stamps, drive, trial_shape, probe_node, plan):
    n = st.n
    entries = dict(st.a0)
    b = {i: list(v) for i, v in st.b0.items()}
    for col, (da, db) in enumerate(zip(st.leg_da, st.leg_db, strict=True)):
        d = drive[:, col]
        for key, val in da.items():
            entries[key] = entries.get(key, 0.0) + val * d
        for i, (v0, v1) in db.items():
            cur = b.setdefault(i, [0.0, 0.0])
            cur[0] = cur[0] + v0 * d
            cur[1] = cur[1] + v1 * d
    shape = np.broadcast_shapes(trial_shape, (drive.shape[0],)) if trial_shape else (drive.shape[0],)
    rhs = _rhs_arrays(n, b, probe_node, shape)
    x = solve_batched(n, entries, rhs, plan, st.nodes)
    return {name: x[i] for i, name in enumerate(st.nodes)}


def _solve_superposition(st: _Stamps, drive, trial_shape, probe_node, plan):
    """One factorisation: columns = sources, probe, and each leg's source and probe deltas."""
    n, n_legs = st.n, len(st.leg_db)
    k = 2 + 2 * n_legs
    rhs = []
    for i in range(n):
        cols = [np.zeros(trial_shape) for _ in range(k)]
        base = st.b0.get(i, [0.0, 0.0])
        cols[0] = cols[0] + base[0]
        cols[1] = cols[1] + base[1] + (1.0 if probe_node == i else 0.0)
        for leg, db in enumerate(st.leg_db):
            v = db.get(i)
            if v is not None:
                cols[2 + leg] = cols[2 + leg] + v[0]
                cols[2 + n_legs + leg] = cols[2 + n_legs + leg] + v[1]
        rhs.append(np.stack(np.broadcast_arrays(*cols), axis=-1))
    x = solve_batched(n, st.a0, rhs, plan, st.nodes)
    volts = {}
    for i, name in enumerate(st.nodes):
        xi = x[i]  # trial_shape + (k,)
        src = xi[..., 0] + _apply(drive, xi[..., 2:2 + n_legs])
        prb = xi[..., 1] + _apply(drive, xi[..., 2 + n_legs:])
        volts[name] = np.stack([src, prb], axis=-1)
    return volts


def _apply(drive: np.ndarray, per_leg: np.ndarray) -> np.ndarray:
    """Sum of per-leg contributions at every code.

    ``drive`` has shape (n_codes, n_legs); ``per_leg`` has shape (n_legs,) for a nominal solve or
    (n_trials, 1, n_legs) with trials. Returns shape (n_codes,) or (n_trials, n_codes).
    """
    if per_leg.ndim == 1:
        return drive @ per_leg
    return per_leg[..., 0, :] @ drive.T


def _finish(st: _Stamps, drive, volts, trial_shape, keep_nodes, use_super) -> Solution:
    net = st.net
    out = net.output
    n_codes = drive.shape[0]
    shape = np.broadcast_shapes(trial_shape, (n_codes,)) if trial_shape else (n_codes,)

    def col(name: str, c: int) -> np.ndarray:
        return np.broadcast_to(volts[name][..., c], shape) if name in volts else np.zeros(shape)

    src = {name: col(name, 0) for name in st.nodes}
    prb = {name: col(name, 1) for name in st.nodes}
    if out.kind == "node":
        v_oc = src[out.node]
        r_th = prb[out.node]
        load = out.load_ohms
        if out.buffered or not np.isfinite(load):
            node_v = src
            v_net = v_oc
        else:
            v_net = v_oc * load / (load + r_th)
            inj = -v_net / load
            node_v = {name: src[name] + prb[name] * inj for name in st.nodes}
        vout = v_net * (out.gain if out.buffered else 1.0)
        rout = np.array(r_th, dtype=float, copy=True)
    else:
        node_v = src
    all_v = {**{k: np.broadcast_to(np.asarray(v, float), shape) for k, v in net.fixed.items()},
             **node_v}
    currents = _edge_currents(st, drive, all_v, shape)
    iref = np.zeros(shape)
    sum_current = np.zeros(shape)
    y_ss = np.zeros(shape)
    for na, nb, g, i_ab in currents:
        if na == net.source:
            iref = iref + i_ab
        if nb == net.source:
            iref = iref - i_ab
        if out.kind == "virtual-ground":
            if nb == out.node:
                sum_current = sum_current + i_ab
                y_ss = y_ss + g
            if na == out.node:
                sum_current = sum_current - i_ab
                y_ss = y_ss + g
    if out.kind == "virtual-ground":
        vout = -out.feedback_ohms * sum_current + 0.0  # + 0.0 turns −0.0 into 0.0
        # Schur complement: Y = Y_ss − y_sᵀ G⁻¹ y_s, with G⁻¹ y_s the probe solution
        coupling = np.zeros(shape)
        for na, nb, g, _ in currents:
            if na == out.node and nb in prb:
                coupling = coupling + g * prb[nb]
            elif nb == out.node and na in prb:
                coupling = coupling + g * prb[na]
        y = y_ss - coupling
        with np.errstate(divide="ignore"):
            rout = np.where(y > 0, 1.0 / np.where(y > 0, y, 1.0), np.inf)
    return Solution(
        vout=np.array(vout, dtype=float, copy=True),
        rout=np.array(rout, dtype=float, copy=True),
        iref=np.array(iref, dtype=float, copy=True),
        method="superposition" if use_super else "general",
        node_voltages={k: np.array(v) for k, v in all_v.items()} if keep_nodes else {},
    )


def _edge_currents(st: _Stamps, drive, volts, shape):
    """Every conducting element as (a, b, conductance, current a→b), batch-shaped."""
    net = st.net
    out = []
    for r in net.resistors:
        g = _conductance(st.ohms.get(r.part_id, r.ohms))
        out.append((r.a, r.b, np.broadcast_to(g, shape), (volts[r.a] - volts[r.b]) * g))
    for col, leg in enumerate(net.legs):
        d = drive[:, col]
        g_hi, g_lo = st.leg_g[col]
        g = g_hi * d
        out.append((leg.node, leg.high, np.broadcast_to(g, shape),
                    (volts[leg.node] - volts[leg.high]) * g))
        if leg.low is not None:
            g = g_lo * (1.0 - d)
            out.append((leg.node, leg.low, np.broadcast_to(g, shape),
                        (volts[leg.node] - volts[leg.low]) * g))
    return out
