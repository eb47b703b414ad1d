"""The one solver: any :class:`~rungwise.core.network.Network`, every code, optionally every trial.

Two exact paths share one compilation of the network into nodal stamps:

* **general** — the nodal matrix changes with the code (unequal switch resistances, a reference with
  output resistance …): batched sparse elimination over codes × trials;
* **superposition** — the nodal matrix is the same for every code: one factorisation gives each
  leg's contribution (its *weight*), and all codes follow from one matrix product.

Both return the same :class:`Solution`; tests check them against each other and against ngspice.
"""

from __future__ import annotations

import dataclasses
from collections.abc import Callable, Mapping
from dataclasses import dataclass
from typing import Literal

import numpy as np

from . import element_arrays
from .errors import NetworkError
from .network import Network
from .selector import expanded, solve_selected
from .solution import Solution, check_connected
from .sparse_elim import EliminationPlan, plan_elimination, solve_batched

Method = Literal["auto", "general", "superposition"]


# ------------------------------------------------------------------------------------------------
# compilation


def _conductance(ohms: np.ndarray | float) -> np.ndarray | float:
    return 1.0 / ohms


class _Stamps:
    """The network compiled into nodal stamps, affine in the leg drives.

    Matrix entries are dicts ``{(i, j): value}`` in ``sparse_elim``'s form (off-diagonal
    −conductance, diagonal = the shunt to fixed nodes); right-hand sides are dicts
    ``{i: [sources, probe]}``. Right-hand-side columns: 0 = the sources; 1 = probe (unit current
    into the output node, or the summing node's coupling conductances for a virtual-ground output).

    Attributes
    ----------
    matrix_fixed : the fixed resistors' entries (no leg)
    matrix_resting, rhs_resting : every leg in its resting state (bit 0)
    leg_states : per leg, (entries when driven, entries when resting) — the general path stamps
        each leg in one of its two states, never as a difference
    leg_matrix_change, leg_rhs_change : per leg, driven minus resting — superposition holds when
        no leg changes the matrix; its right-hand-side change is the leg's source
    leg_conductances : per leg, (to ``high``, to ``low`` or None), siemens
    pattern : off-diagonal pairs (i < j) that are ever non-zero, for the elimination plan
    groups : thermometer groups (``element_arrays.CompiledGroup``)
    """

    def __init__(self, net: Network, ohms: Mapping[str, np.ndarray | float]) -> None:
        self.net = net
        self.ohms = ohms
        self.nodes = net.unknown_nodes()
        self.index = {name: i for i, name in enumerate(self.nodes)}
        n = len(self.nodes)
        self.n_unknown = n
        self.matrix_resting: dict[tuple[int, int], np.ndarray | float] = {}
        self.rhs_resting: dict[int, list] = {}
        self.leg_matrix_change: list[dict[tuple[int, int], np.ndarray | float]] = []
        self.leg_states: list[tuple[dict, dict]] = []
        self.leg_rhs_change: list[dict[int, list]] = []
        self.pattern: set[tuple[int, int]] = set()
        out = net.output
        self.virtual = out.kind == "virtual-ground"
        if self.virtual and out.node not in net.fixed:
            raise NetworkError(out.node, f"summing node '{out.node}' must be held at a fixed voltage")
        # fixed resistors (the reference's output resistance included)
        for r in net.resistors:
            g = _conductance(ohms.get(r.part_id, r.ohms))
            self.stamp(self.matrix_resting, self.rhs_resting, r.a, r.b, g)
        self.matrix_fixed = dict(self.matrix_resting)
        # legs: resting = state 0, change = state 1 − state 0
        self.leg_conductances: list[tuple[np.ndarray | float, np.ndarray | float | None]] = []
        for leg in net.legs:
            r_leg = ohms.get(leg.part_id, leg.ohms)
            g_hi = _conductance(r_leg + leg.ron_high)
            g_lo = None if leg.low is None else _conductance(r_leg + leg.ron_low)
            self.leg_conductances.append((g_hi, g_lo))
            da: dict[tuple[int, int], np.ndarray | float] = {}
            db: dict[int, list] = {}
            self.stamp(da, db, leg.node, leg.high, g_hi)
            on: dict[tuple[int, int], np.ndarray | float] = {}
            off: dict[tuple[int, int], np.ndarray | float] = {}
            self.stamp(on, {}, leg.node, leg.high, g_hi)
            if leg.low is not None:
                self.stamp(self.matrix_resting, self.rhs_resting, leg.node, leg.low, g_lo)
                self.stamp(da, db, leg.node, leg.low, -g_lo)
                self.stamp(off, {}, leg.node, leg.low, g_lo)
            self.leg_states.append((on, off))
            self.leg_matrix_change.append(da)
            self.leg_rhs_change.append(db)
        self.groups = element_arrays.compile_groups(self, net, ohms)

    def stamp(self, a, b, na: str, nb: str, g) -> None:
        """Add conductance ``g`` between ``na`` and ``nb`` to entries ``a`` and sources/probe ``b``."""
        fixed = self.net.fixed
        out = self.net.output
        ia, ib = self.index.get(na), self.index.get(nb)
        for i, other, j in ((ia, nb, ib), (ib, na, ia)):
            if i is None:
                continue
            if j is not None:
                if i < j:
                    a[(i, j)] = a.get((i, j), 0.0) - g
                    self.pattern.add((i, j))
            else:
                a[(i, i)] = a.get((i, i), 0.0) + g  # the shunt to fixed nodes (sparse_elim)
                v = fixed[other]
                col = b.setdefault(i, [0.0, 0.0])
                if v != 0.0:
                    col[0] = col[0] + g * v
                if self.virtual and other == out.node:
                    col[1] = col[1] + g

    def superposition_holds(self) -> bool:
        """True when no leg changes the nodal matrix (so outputs are affine in the drives)."""
        if self.groups:
            return False
        for da in self.leg_matrix_change:
            for value in da.values():
                if np.any(np.asarray(value) != 0.0):
                    return False
        return True


def _rhs_arrays(n: int, b: dict[int, list], probe_node: int | None):
    """Right-hand sides per unknown, each of shape ``value_shape + (2,)``: sources, probe."""
    out = []
    for i in range(n):
        col = b.get(i, [0.0, 0.0])
        probe = col[1] + (1.0 if probe_node == i else 0.0)
        out.append(np.stack(np.broadcast_arrays(np.asarray(col[0], float),
                                                np.asarray(probe, float)), axis=-1))
    return out


_PLAN_CACHE: dict[tuple, EliminationPlan] = {}


def _plan(n: int, pairs: set[tuple[int, int]], last: int | None) -> EliminationPlan:
    key = (n, frozenset(pairs), last)
    plan = _PLAN_CACHE.get(key)
    if plan is None:
        if len(_PLAN_CACHE) > 256:
            _PLAN_CACHE.clear()
        plan = plan_elimination(n, pairs, last)
        _PLAN_CACHE[key] = plan
    return plan


# ------------------------------------------------------------------------------------------------
# the solver


def solve(
    net: Network,
    ohms: Mapping[str, np.ndarray | float] | None = None,
    codes: np.ndarray | None = None,
    method: Method = "auto",
    keep_nodes: bool = False,
    vout_only: bool = False,
    node_sink: Callable[[np.ndarray, Solution], None] | None = None,
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
    vout_only : bool
        Only ``vout`` is wanted (Monte Carlo): the elimination forms no other node voltage than
        those the output needs, and ``iref`` is NaN (not computed).
    node_sink : callable (codes, Solution) → None, optional
        With ``keep_nodes`` (nominal solves): receives each piece of codes solved with its node
        voltages, which the returned solution then leaves out — one pass over the codes whose
        node voltages are never all held at once (the power figures at any resolution).

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
    if net.selector is not None:  # a code-selected tap: one fixed network, solved once
        return solve_selected(net, ohms, codes, keep_nodes)
    if net.chains:  # array-held resistor strings: solved as plain resistors
        return solve(expanded(net), ohms, codes, method, keep_nodes)
    codes = np.arange(net.n_codes) if codes is None else np.asarray(codes, dtype=np.int64)
    trial_shape = np.broadcast_shapes(*{np.shape(v) for v in ohms.values()}) if ohms else ()
    per_code = max(1, int(np.prod(trial_shape)))
    layout = _BitLayout.fitting(net, codes, trial_shape)
    st = _Stamps(net, layout.lay_ohms(ohms) if layout else ohms)
    check_connected(net, st.nodes)
    linear = st.superposition_holds()
    if method == "superposition" and not linear:
        raise NetworkError(net.output.node, "superposition is not exact for this network: a switch "
                           "changes the nodal matrix (unequal on-resistances or a reference with "
                           "output resistance)")
    use_super = linear and method in ("auto", "superposition")
    probe_node = None if st.virtual else st.index[net.output.node]
    plan = _plan(st.n_unknown, st.pattern, probe_node)
    wanted = _output_nodes(st) if vout_only and not keep_nodes else None
    if layout is not None:
        sol = _solve_bit_tensor(st, probe_node, plan, keep_nodes, use_super, wanted, layout=layout)
        return _to_sink(node_sink, codes, sol)
    step = max(1, CHUNK_ELEMENTS // per_code)
    pieces = []
    for start in range(0, len(codes), step):
        drive = net.decode(codes[start:start + step]).astype(float)
        cols = [drive[:, col] for col in range(drive.shape[1])]
        shape = np.broadcast_shapes(trial_shape, (drive.shape[0],))
        if st.n_unknown == 0:
            volts = {}
        elif use_super:
            volts = _solve_superposition(st, drive, trial_shape, probe_node, plan)
        else:
            volts = _solve_general(st, cols, probe_node, plan, wanted)
        piece = _finish(st, cols, volts, shape, keep_nodes, use_super, wanted is not None)
        pieces.append(_to_sink(node_sink, codes[start:start + step], piece))
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


def _to_sink(node_sink, codes: np.ndarray, sol: Solution) -> Solution:
    """Hand ``sol`` (at ``codes``) to ``node_sink`` and keep it without node voltages; unchanged
    without a sink."""
    if node_sink is None:
        return sol
    node_sink(codes, sol)
    return dataclasses.replace(sol, node_voltages={})


def _aligned_block(codes: np.ndarray) -> bool:
    """True when ``codes`` are 2^k consecutive codes starting at a multiple of 2^k (all codes, or
    one aligned piece of them: the bit-tensor layout applies, its high bits constant)."""
    n = codes.size
    return (n > 1 and n & (n - 1) == 0 and int(codes[0]) % n == 0
            and int(codes[-1]) - int(codes[0]) == n - 1 and bool(np.all(np.diff(codes) == 1)))


PACKED_BITS = 6
"""The lowest code bits share one array axis of 2^6 codes in the bit-tensor layout (so numpy's
innermost loops run over 64 contiguous values, not 2); each higher bit has an axis of its own."""


@dataclass(frozen=True)
class _BitLayout:
    """The bit-tensor layout of an aligned block of ``2^n_bits`` codes starting at ``first``.

    Codes lie on the axes ``(2,) * (n_bits − packed) + (2^packed,)`` after any trial axes: bit b ≥
    ``packed`` is axis ``n_bits − 1 − b``, the ``packed`` lowest bits are the last axis, so a
    C-order reshape gives code order. A value that depends on few bits stays small.
    """

    n_bits: int
    first: int
    trial_prefix: tuple[int, ...]

    @classmethod
    def fitting(cls, net: Network, codes: np.ndarray, trial_shape: tuple[int, ...]
                ) -> _BitLayout | None:
        """The layout for ``codes`` of ``net``, or ``None`` when it does not apply: codes not an
        aligned block, legs not one bit each, a network with no unknown node, too many
        (trial, code) pairs, or thermometer groups whose levels are no shifted code."""
        leg_bits = getattr(net.decode, "leg_bits", None)
        shifts = getattr(net.decode, "level_shifts", ())
        per_code = max(1, int(np.prod(trial_shape)))
        groups_fit = len(shifts) == len(net.groups)
        if not (_aligned_block(codes) and leg_bits is not None and groups_fit
                and per_code * codes.size <= TENSOR_ELEMENTS and net.unknown_nodes()):
            return None
        return cls(codes.size.bit_length() - 1, int(codes[0]), tuple(trial_shape[:-1]))

    @property
    def packed(self) -> int:
        return min(self.n_bits, PACKED_BITS)

    @property
    def code_axes(self) -> tuple[int, ...]:
        return (2,) * (self.n_bits - self.packed) + (2**self.packed,)

    def lay_ohms(self, ohms: Mapping[str, np.ndarray | float]) -> dict[str, np.ndarray | float]:
        """Per-trial values of shape (…, n_trials, 1) reshaped to broadcast over the code axes."""
        ones = (1,) * len(self.code_axes)
        return {k: np.reshape(v, np.shape(v)[:-1] + ones) if np.ndim(v) else v
                for k, v in ohms.items()}

    def _axis_values(self, values: np.ndarray, axis: int) -> np.ndarray:
        shape = [1] * len(self.code_axes)
        shape[axis] = values.size
        return values.reshape(shape)

    def bit(self, b: int) -> np.ndarray:
        """Code bit ``b`` (0/1 as float) on the layout; a bit above the block is constant."""
        if b >= self.n_bits:
            return np.full([1] * len(self.code_axes), float((self.first >> b) & 1))
        if b < self.packed:
            return self._axis_values(((np.arange(2**self.packed) >> b) & 1).astype(float), -1)
        return self._axis_values(np.array([0.0, 1.0]), self.n_bits - 1 - b)

    def level(self, shift: int) -> np.ndarray:
        """``code >> shift`` on the layout (a thermometer group's level), as int64."""
        base = self.first >> shift  # the block is aligned: (first + c) >> s = base + (c >> s)
        if shift >= self.n_bits:
            return np.full([1] * len(self.code_axes), base, dtype=np.int64)
        high = self.n_bits - self.packed
        upper = (np.arange(2**high, dtype=np.int64) << self.packed).reshape((2,) * high + (1,))
        if shift >= self.packed:
            return base + (upper >> shift)
        return base + ((upper + self._axis_values(np.arange(2**self.packed), -1)) >> shift)

    def to_codes(self, values: np.ndarray) -> np.ndarray:
        """A value on the layout as shape (…trials, n_codes) in code order."""
        full = self.trial_prefix + self.code_axes
        return np.broadcast_to(values, full).reshape((*self.trial_prefix, 2**self.n_bits))


def _solve_bit_tensor(st: _Stamps, probe_node, plan, keep_nodes, use_super=False, wanted=None, *,
                      layout: _BitLayout) -> Solution:
    """All codes (or one aligned block of them) on the bit-tensor layout (see :class:`_BitLayout`;
    ``st`` is compiled with values laid out by :meth:`_BitLayout.lay_ohms`).

    Early pivots of the elimination touch only the bits of the legs eliminated so far, so most of
    the work is on small arrays and only the last pivots and the back substitution run at full
    size; a leg's drive is small wherever it enters. Exact; the same arithmetic as the flat layout.
    The superposition path forms its node voltages leg by leg on the same layout. A thermometer
    group's level ``code >> shift`` lies on the axes of the bits above the shift.
    """
    net = st.net
    cols = [layout.bit(b) for b in net.decode.leg_bits]
    cols += [layout.level(s) for s in getattr(net.decode, "level_shifts", ())]  # after the legs
    full = layout.trial_prefix + layout.code_axes
    if use_super:
        volts = _solve_superposition(st, None, (), probe_node, plan, tensor_cols=cols)
    else:
        volts = _solve_general(st, cols, probe_node, plan, wanted)
    sol = _finish(st, cols, volts, full, keep_nodes, use_super, wanted is not None)
    return Solution(vout=layout.to_codes(sol.vout), rout=layout.to_codes(sol.rout),
                    iref=layout.to_codes(sol.iref), method=sol.method,
                    node_voltages={k: layout.to_codes(v) for k, v in sol.node_voltages.items()})


CHUNK_ELEMENTS = 1 << 18
"""Largest number of (trial, code) pairs solved in one numpy pass; bounds working memory."""

TENSOR_ELEMENTS = 1 << 20
"""Largest (trial × code) count solved on the bit-tensor layout in one pass."""


def _output_nodes(st: _Stamps) -> set[int]:
    """The unknowns the output voltage is read from: the output node, or for a virtual-ground
    output every unknown node joined to the summing node."""
    net = st.net
    out = net.output.node
    if not st.virtual:
        return {st.index[out]}
    ends = [(r.a, r.b) for r in net.resistors]
    ends += [(leg.node, rail) for leg in [*net.legs, *net.groups] for rail in (leg.high, leg.low)]
    return {st.index[a if b == out else b] for a, b in ends
            if out in (a, b) and (a if b == out else b) in st.index}


def _solve_general(st: _Stamps, cols, probe_node, plan, wanted=None):
    """Batched sparse elimination; ``cols[l]`` is leg l's drive (0/1), broadcastable to the batch;
    ``wanted``: the unknowns to form (default all)."""
    n = st.n_unknown
    entries = dict(st.matrix_fixed)
    b = {i: list(v) for i, v in st.rhs_resting.items()}
    n_legs = len(st.leg_states)
    cols, levels = cols[:n_legs], cols[n_legs:]  # group levels follow the legs
    element_arrays.stamp_groups(st, levels, entries, b)
    # each leg's entries in its driven or its resting state (not a delta: no round-off when the
    # two conductances differ by many orders of magnitude)
    for d, (on, off), db in zip(cols, st.leg_states, st.leg_rhs_change, strict=True):
        for key, val in on.items():
            entries[key] = entries.get(key, 0.0) + val * d
        rest = 1.0 - np.asarray(d) if off else None
        for key, val in off.items():
            entries[key] = entries.get(key, 0.0) + val * rest
        for i, (v0, v1) in db.items():
            cur = b.setdefault(i, [0.0, 0.0])
            cur[0] = cur[0] + v0 * d
            cur[1] = cur[1] + v1 * d
    rhs = _rhs_arrays(n, b, probe_node)
    x = solve_batched(n, entries, rhs, plan, st.nodes, wanted)
    return {name: x[i] for i, name in enumerate(st.nodes) if x[i] is not None}


def _solve_superposition(st: _Stamps, drive, trial_shape, probe_node, plan, tensor_cols=None):
    """One factorisation: columns = sources, probe, and each leg's source and probe deltas."""
    n, n_legs = st.n_unknown, len(st.leg_rhs_change)
    k = 2 + 2 * n_legs
    rhs = []
    for i in range(n):
        cols = [np.zeros(trial_shape) for _ in range(k)]
        base = st.rhs_resting.get(i, [0.0, 0.0])
        cols[0] = cols[0] + base[0]
        cols[1] = cols[1] + base[1] + (1.0 if probe_node == i else 0.0)
        for leg, db in enumerate(st.leg_rhs_change):
            v = db.get(i)
            if v is not None:
                cols[2 + leg] = cols[2 + leg] + v[0]
                cols[2 + n_legs + leg] = cols[2 + n_legs + leg] + v[1]
        rhs.append(np.stack(np.broadcast_arrays(*cols), axis=-1))
    x = solve_batched(n, st.matrix_resting, rhs, plan, st.nodes)
    if tensor_cols is not None:
        return _TensorLegSums(st.nodes, x, tensor_cols)
    return _LegSums(st.nodes, x, drive, n_legs)


class _LegSums(Mapping):
    """Node voltages (sources, probe) of the superposition path, formed only when asked for.

    ``x[i]`` holds node i's response to the base sources, the probe and each leg's drive; a node's
    voltage at every code is the base plus ``drive @ per-leg responses``.
    """

    def __init__(self, nodes, x, drive, n_legs) -> None:
        self._index = {name: i for i, name in enumerate(nodes)}
        self._x, self._drive, self._n_legs = x, drive, n_legs
        self._all: np.ndarray | None = None

    def __getitem__(self, name: str) -> np.ndarray:
        if self._all is None:
            # one matrix product for every node and both columns: (…, n, 2, L) @ (L, C)
            n_legs = self._n_legs
            xs = np.stack(self._x, axis=-2)  # trial_shape + (n, k)
            base = xs[..., :2]
            per_leg = np.stack([xs[..., 2:2 + n_legs], xs[..., 2 + n_legs:]], axis=-2)
            if per_leg.ndim > 3:  # trials: drop the code axis of size 1
                per_leg, base = per_leg[..., 0, :, :, :], base[..., 0, :, :]
            flat = per_leg.reshape(-1, n_legs) @ self._drive.T  # one 2-D product (BLAS)
            self._all = flat.reshape((*per_leg.shape[:-1], -1)) + base[..., None]  # (…, n, 2, C)
        v = self._all[..., self._index[name], :, :]
        return np.moveaxis(v, -2, -1)

    def __iter__(self):
        return iter(self._index)

    def __len__(self) -> int:
        return len(self._index)


class _TensorLegSums(_LegSums):
    """The same node voltages on the nominal bit-tensor layout (see :func:`_solve_bit_tensor`).

    ``base + Σ_l drive_l · response_l`` is summed leg by leg; each leg's drive is a 2-element array
    on its own axis, so the partial sums grow 2, 4, 8 … and the whole costs about 2·2^N per node
    and column instead of a product over all legs.
    """

    def __init__(self, nodes, x, cols) -> None:
        self._index = {name: i for i, name in enumerate(nodes)}
        self._x, self._cols = x, cols
        self._done: dict[str, np.ndarray] = {}

    def __getitem__(self, name: str) -> np.ndarray:
        v = self._done.get(name)
        if v is None:
            xi, n_legs = self._x[self._index[name]], len(self._cols)
            order = sorted(range(n_legs), key=lambda leg: -int(np.argmax(self._cols[leg].shape)))
            parts = []
            for c in (0, 1):
                acc = np.asarray(xi[..., c])
                for leg in order:
                    acc = acc + self._cols[leg] * xi[..., 2 + c * n_legs + leg]
                parts.append(acc)
            v = self._done[name] = np.stack(np.broadcast_arrays(*parts), axis=-1)
        return v


class _NodeVoltages:
    """Solved node voltages by name: the sources column with the output load's current applied
    (``load_current`` per unit probe, when the output carries a finite load), fixed nodes at
    their value, absent nodes 0; :meth:`probe` reads the probe column."""

    def __init__(self, net: Network, volts, load_current=None) -> None:
        self.net, self.volts, self.load_current = net, volts, load_current
        self._seen: dict[str, np.ndarray] = {}

    def probe(self, name: str) -> np.ndarray:
        return self.volts[name][..., 1] if name in self.volts else np.zeros(())

    def __call__(self, name: str) -> np.ndarray:
        if name in self.net.fixed:
            return np.asarray(self.net.fixed[name], float)
        v = self._seen.get(name)
        if v is None:
            v = self.volts[name][..., 0] if name in self.volts else np.zeros(())
            if self.load_current is not None:
                v = v + self.probe(name) * self.load_current
            self._seen[name] = v
        return v


def _node_output(net: Network, volts):
    """``(vout, rout, load current per unit probe or None)`` of an output at a node: Thevenin
    voltage and resistance from the sources and probe columns, then the load (exact) or the
    buffer's gain."""
    out = net.output
    v_open = volts[out.node][..., 0]
    r_th = volts[out.node][..., 1]
    if out.buffered:
        return v_open * out.gain, r_th, None
    if not np.isfinite(out.load_ohms):
        return v_open, r_th, None
    v_loaded = v_open * out.load_ohms / (out.load_ohms + r_th)
    return v_loaded, r_th, -v_loaded / out.load_ohms


def _virtual_ground_output(st: _Stamps, cols, voltage: _NodeVoltages, shape):
    """``(vout, rout)`` behind a virtual ground: −feedback × the current into the summing node,
    and the resistance the summing node sees (Schur complement Y = Y_ss − y_sᵀ G⁻¹ y_s, with
    G⁻¹ y_s the probe solution)."""
    out = st.net.output
    current, y_ss, coupling = np.zeros(()), np.zeros(()), np.zeros(())
    for na, nb, g in _elements(st, cols):
        if out.node not in (na, nb):
            continue
        other = nb if na == out.node else na
        i_ab = (voltage(na) - voltage(nb)) * g
        current = current + (i_ab if nb == out.node else -i_ab)
        y_ss = y_ss + g
        if other in voltage.volts:
            coupling = coupling + g * voltage.probe(other)
    y = np.broadcast_to(y_ss - coupling, shape)
    with np.errstate(divide="ignore"):
        rout = np.where(y > 0, 1.0 / np.where(y > 0, y, 1.0), np.inf)
    return -out.feedback_ohms * current + 0.0, rout  # + 0.0 turns −0.0 into 0.0


def _reference_current(st: _Stamps, cols, voltage: _NodeVoltages) -> np.ndarray:
    """Current the source node delivers: the sum over every element touching it — or, when the
    source feeds one node through ``ref_r`` only, the sum of the currents leaving that node
    (KCL there keeps its digits where (vsrc − v)/ref_r over a sub-ohm ``ref_r`` would not)."""
    source = st.net.source
    feed = _fed_node(st.net)
    iref = np.zeros(())
    leaving_feed = np.zeros(())
    for na, nb, g in _elements(st, cols):
        if source in (na, nb):
            iref = iref + (voltage(na) - voltage(nb)) * g * (1 if source == na else -1)
            if feed not in (na, nb):
                feed = None  # the source also drives something else: no single node to sum at
        elif feed in (na, nb):
            leaving_feed = leaving_feed + (voltage(na) - voltage(nb)) * g * (1 if feed == na else -1)
    return leaving_feed if feed is not None else iref


def _finish(st: _Stamps, cols, volts, shape, keep_nodes, use_super, vout_only=False) -> Solution:
    """Output voltage, Thevenin resistance and reference current from the solved node voltages.

    Only the node voltages these need are formed (those of the output and of every node touching
    the source or the summing node), unless ``keep_nodes`` asks for all of them. ``vout_only``:
    ``volts`` holds only what the output needs and ``iref`` is NaN.
    """
    net = st.net
    if st.virtual:
        voltage = _NodeVoltages(net, volts)
        vout, rout = _virtual_ground_output(st, cols, voltage, shape)
    else:
        vout, rout, load_current = _node_output(net, volts)
        voltage = _NodeVoltages(net, volts, load_current)
    iref = np.nan if vout_only else _reference_current(st, cols, voltage)
    nodes = {}
    if keep_nodes:
        nodes = {k: np.array(np.broadcast_to(voltage(k), shape)) for k in [*net.fixed, *st.nodes]}
    return Solution(
        vout=np.array(np.broadcast_to(vout, shape), dtype=float),
        rout=np.array(np.broadcast_to(rout, shape), dtype=float),
        iref=np.array(np.broadcast_to(iref, shape), dtype=float),
        method="superposition" if use_super else "general",
        node_voltages=nodes,
    )


def _fed_node(net: Network) -> str | None:
    """The one solved node the reference source reaches through resistors only (its ``ref_r``),
    or None (no ``ref_r``, a leg on the source, or the node is the loaded output)."""
    if any(net.source in (leg.high, leg.low) for leg in net.legs):
        return None
    others = {r.b if r.a == net.source else r.a for r in net.resistors if net.source in (r.a, r.b)}
    if len(others) != 1:
        return None
    (node,) = others
    return None if node in net.fixed or node == net.output.node else node


def _elements(st: _Stamps, cols):
    """Every conducting element as (node a, node b, conductance), conductance batch-broadcastable.

    A leg appears twice: towards ``high`` with ``g_high·drive`` and towards ``low`` with
    ``g_low·(1 − drive)``.
    """
    net = st.net
    for r in net.resistors:
        yield r.a, r.b, _conductance(st.ohms.get(r.part_id, r.ohms))
    for col, leg in enumerate(net.legs):
        d = cols[col]
        g_hi, g_lo = st.leg_conductances[col]
        yield leg.node, leg.high, g_hi * d
        if leg.low is not None:
            yield leg.node, leg.low, g_lo * (1.0 - d)
    yield from element_arrays.group_elements(st, cols[len(net.legs):])
