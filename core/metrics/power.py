"""Power in every resistive element and current through every switch, worst case over all codes.

From the solver's node voltages (``solve(net, keep_nodes=True)``), vectorised over codes and worked
in chunks of codes so memory stays bounded at high resolution. Elements:

- each part (``net.parts``: resistors, legs, the feedback resistor of a virtual-ground output);
- each switch, as ``switch:<leg id>`` (the leg's current through ``ron_high`` or ``ron_low``;
  an ideal switch carries the current and dissipates nothing);
- the reference's output resistance ``ref_r`` and a resistive ``load`` on an unbuffered output.

Conservation (common practice): the reference delivers Vref·Iref, which equals the sum over every
element above *except* the feedback resistor (fed by the amplifier, not the reference).
"""

from __future__ import annotations

import math

import numpy as np

from ..element_arrays import plain_equivalent, plain_size
from ..network import Network, PartList
from ..solution import Solution
from ..solve import solve
from .power_arrays import group_blocks, string_worst_case
from .power_types import ElementPower, ElementPowers, totals

CODE_CHUNK = 1 << 15
"""Codes solved per pass when node voltages are kept; bounds working memory."""

WHOLE_CODES = 1 << 16
"""Up to this many codes are solved in one pass (the solver's fastest path), above in chunks."""

PLAIN_ELEMENTS = 1 << 21
"""Largest (element × code) count for which a network with array-held elements (strings, leg
groups, a tap selector) gets power figures, from its plain equivalent; above it they are NaN
(not computed)."""

FROM_AMPLIFIER = ("feedback",)
"""Elements the amplifier feeds, left out of the reference's power balance."""


def element_powers(net: Network, drive: np.ndarray, volts: dict[str, np.ndarray],
                   vout: np.ndarray) -> dict[str, tuple[str, np.ndarray, np.ndarray]]:
    """Power and signed current of every element at the given codes.

    Parameters
    ----------
    net : Network
    drive : ndarray of bool, shape (n, n_legs) — ``net.decode(codes)``
    volts : dict node → ndarray, shape (n,), volts — every node (fixed ones included)
    vout : ndarray, shape (n,), volts — the output (gives the feedback resistor's current)

    Returns
    -------
    dict name → (kind, power (n,) W, current (n,) A)
        A switch's current is positive when it sources from its high rail into the leg or sinks
        from the leg into its low rail.
    """
    out: dict[str, tuple[str, np.ndarray, np.ndarray]] = {}
    zero = np.zeros(drive.shape[0])
    for r in net.resistors:
        i = (volts[r.a] - volts[r.b]) / r.ohms
        out[r.part_id] = ("reference" if r.role == "reference" else "part", i * i * r.ohms, i)
    for col, leg in enumerate(net.legs):
        d = drive[:, col]
        i_hi = (volts[leg.high] - volts[leg.node]) / (leg.ohms + leg.ron_high)
        i_lo = zero if leg.low is None else (volts[leg.node] - volts[leg.low]) / (leg.ohms + leg.ron_low)
        i = np.where(d, i_hi, i_lo)
        ron = np.where(d, leg.ron_high, leg.ron_low if leg.low is not None else 0.0)
        out[leg.part_id] = ("part", i * i * leg.ohms, i)
        out[f"switch:{leg.part_id}"] = ("switch", i * i * ron, i)
    for name, kind, i, ohms in _output_elements(net, volts, vout):
        out[name] = (kind, i * i * ohms, i)
    return out


def worst_case(net: Network, solved: Solution | None = None
               ) -> tuple[list[ElementPower], dict[str, float]]:
    """Every element's worst-case power and current, and the network's totals.

    Parameters
    ----------
    net : Network
        Nominal values (no Monte Carlo trials).
    solved : Solution, optional
        ``solve(net, keep_nodes=True)`` at every code, when the caller already has it (saves a
        solve; used only for networks of plain resistors and legs).

    Returns
    -------
    elements : list[ElementPower]
        Parts in display order, then switches, ``ref_r`` and ``load``.
    totals : dict
        ``power_total_max`` (W, largest over codes of the sum over every element, feedback
        included) and its code ``power_total_max_code``; ``ref_power_max`` (W, largest
        |Vref·Iref|) and its code ``ref_power_max_code``; ``balance_error_max`` (W, largest
        |Vref·Iref − Σ reference-fed elements|, a check that should be round-off).
    """
    if net.chains or net.groups or net.selector is not None:
        # array-held elements: exact vectorised forms (power_arrays.py) where they apply, else
        # their plain equivalent while that stays small
        fast = _array_worst_case(net, solved)
        if fast is not None:
            return fast
        solved = None  # its node voltages are not those of the plain equivalent
        if plain_size(net) * net.n_codes > PLAIN_ELEMENTS:
            return [], {k: math.nan for k in ("power_total_max", "power_total_max_code",
                                              "ref_power_max", "ref_power_max_code",
                                              "balance_error_max")}
        # an ideal tap switch (0 Ω) becomes 1e-6 of the smallest array resistor it connects to (its
        # power stays 0); not of a tiny reference resistance, which would leave the solve singular
        arrays = ([float(np.min(c.ohms)) for c in net.chains]
                  + [float(np.min(g.ohms)) for g in net.groups if g.size])
        smallest = min(arrays or [r.ohms for r in net.resistors])
        net = plain_equivalent(net, min_ron=1e-6 * smallest)
    fold = PowerFold(net)
    whole = net.n_codes <= WHOLE_CODES
    step = net.n_codes if whole else CODE_CHUNK
    reuse = (solved is not None and whole and solved.node_voltages
             and solved.vout.shape == (net.n_codes,))
    for start in range(0, net.n_codes, step):
        codes = np.arange(start, min(start + step, net.n_codes))
        fold.add(codes, solved if reuse else solve(net, codes=None if whole else codes,
                                                   keep_nodes=True))
    return fold.result()


class PowerFold:
    """Worst-case power of a network of plain resistors and legs, folded over pieces of codes.

    Feed it each piece's ``Solution`` with node voltages (:meth:`add`, in any order; the solver
    can stream them to it, ``solve(…, node_sink=fold.add)``, so no more than a piece is held),
    then read :meth:`result` — the same as :func:`worst_case`.
    """

    def __init__(self, net: Network) -> None:
        self.net = net
        self.best: dict[str, list] = {}
        self.total_best = [-1.0, 0]
        self.ref_best = [-1.0, 0]
        self.balance = 0.0

    def add(self, codes: np.ndarray, sol: Solution) -> None:
        """Fold the solution at ``codes`` (shape (n,)) into the worst cases."""
        net = self.net
        volts = {k: np.broadcast_to(v, codes.shape) for k, v in sol.node_voltages.items()}
        total, fed = _track(self.best, net, codes, _drive_rows(net, codes), volts, sol.vout)
        p_ref = net.fixed[net.source] * sol.iref
        self.balance = max(self.balance, float(np.max(np.abs(p_ref - fed))))
        k = int(np.argmax(total))
        if total[k] > self.total_best[0]:
            self.total_best = [float(total[k]), int(codes[k])]
        k = int(np.argmax(np.abs(p_ref)))
        if abs(p_ref[k]) > self.ref_best[0]:
            self.ref_best = [float(abs(p_ref[k])), int(codes[k])]

    def result(self) -> tuple[list[ElementPower], dict[str, float]]:
        """``(elements, totals)`` as :func:`worst_case` returns them."""
        totals = {"power_total_max": self.total_best[0], "power_total_max_code": self.total_best[1],
                  "ref_power_max": self.ref_best[0], "ref_power_max_code": self.ref_best[1],
                  "balance_error_max": self.balance}
        return _ordered(self.best, self.net), totals


KIND_ORDER = {"part": 0, "switch": 1, "reference": 2, "load": 3}
"""Display order of element kinds."""


def _drive_rows(net: Network, codes: np.ndarray) -> np.ndarray:
    """Whether each leg is driven at each code, shape (n_legs, n_codes), one contiguous row per
    leg (read from the code bits directly for a bit decoder)."""
    bits = getattr(net.decode, "leg_bits", None)
    if bits is not None:
        return ((codes[None, :] >> np.asarray(bits, dtype=np.int64)[:, None]) & 1).astype(bool)
    raw = np.asarray(net.decode(codes))[:, :len(net.legs)]
    return np.ascontiguousarray(raw.astype(bool).T)


def _levels(net: Network, codes: np.ndarray) -> list[np.ndarray]:
    """Each thermometer group's level at each code, shape (n_codes,) each."""
    shifts = getattr(net.decode, "level_shifts", ())
    if len(shifts) == len(net.groups):
        return [np.asarray(codes, dtype=np.int64) >> s for s in shifts]
    raw = np.asarray(net.decode(codes))
    return [raw[:, len(net.legs) + g] for g in range(len(net.groups))]


def _track(best: dict[str, list], net: Network, codes: np.ndarray, driven: np.ndarray,
           volts: dict[str, np.ndarray], vout: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Fold one chunk of codes into ``best`` (name → [kind, power, code, |current|, sourced,
    sunk]); returns the chunk's total and reference-fed power per code. ``driven``: shape
    (n_legs, n_chunk), from :func:`_drive_rows`.

    The same figures as :func:`element_powers` (tests compare them) in fewer passes over the
    codes: |current| is read back from the worst power (R fixed), a switch's worst case from its
    leg's when both on-resistances are equal, sourced/sunk currents by masked maxima.
    """
    n = len(codes)
    total = np.zeros(n)

    def fold(name: str, kind: str, p_max: float, k: int, current_max: float, src=0.0,
             snk=0.0) -> None:
        """Fold one element's worst power (at chunk index ``k``), |current|, sourced, sunk."""
        row = best.setdefault(name, [kind, -1.0, 0, 0.0, 0.0, 0.0])
        if p_max > row[1]:
            row[1], row[2] = p_max, int(codes[k])
        row[3] = max(row[3], current_max)
        row[4], row[5] = max(row[4], src), max(row[5], snk)

    def value(node: str):
        """A node's volts: a scalar for a fixed node (no pass over the codes)."""
        return net.fixed[node] if node in net.fixed else volts[node]

    for r in net.resistors:
        dv = value(r.a) - value(r.b)
        p = np.broadcast_to(dv * dv * (1.0 / r.ohms), (n,))
        total += p
        k = int(np.argmax(p))
        fold(r.part_id, "reference" if r.role == "reference" else "part", float(p[k]), k,
             math.sqrt(float(p[k]) / r.ohms))
    resting = ~driven
    for col, leg in enumerate(net.legs):
        d = driven[col]
        v_node = value(leg.node)
        i = np.broadcast_to((value(leg.high) - v_node) / (leg.ohms + leg.ron_high), (n,))
        low = 0.0 if leg.low is None else (v_node - value(leg.low)) / (leg.ohms + leg.ron_low)
        i = np.where(d, i, low)
        i2 = i * i
        k = int(np.argmax(i2))  # the leg's and (equal on-resistances) its switch's worst code
        current = math.sqrt(float(i2[k]))
        fold(leg.part_id, "part", float(i2[k]) * leg.ohms, k, current)
        ron_low = leg.ron_low if leg.low is not None else 0.0
        if leg.ron_high == ron_low:
            p_sw, k_sw = float(i2[k]) * leg.ron_high, k
            total += i2 * (leg.ohms + leg.ron_high)
        else:
            p = i2 * np.where(d, leg.ron_high, ron_low)
            k_sw = int(np.argmax(p))
            p_sw = float(p[k_sw])
            total += i2 * leg.ohms + p
        # largest current sourced (driven) and sunk (resting), 0 at least: i·mask keeps the
        # current where the mask holds and 0 elsewhere (a masked ``max(where=…)`` is far slower)
        fold(f"switch:{leg.part_id}", "switch", p_sw, k_sw, current,
             max(float(np.max(i * d)), 0.0), max(float(np.max(i * resting[col])), 0.0))
    fed = total.copy()
    for name, kind, i, ohms in _output_elements(net, volts, vout):
        p = i * i * ohms
        total += p
        if name not in FROM_AMPLIFIER:
            fed += p
        k = int(np.argmax(p))
        fold(name, kind, float(p[k]), k, float(np.max(np.abs(i))))
    return total, fed


def _output_elements(net: Network, volts, vout):
    """(name, kind, current per code, ohms) of the feedback resistor or the resistive load."""
    o = net.output
    if o.kind == "virtual-ground" and o.feedback_ohms > 0:
        yield "feedback", "part", vout / o.feedback_ohms, o.feedback_ohms
    elif o.kind == "node" and not o.buffered and np.isfinite(o.load_ohms):
        yield "load", "load", volts[o.node] / o.load_ohms, o.load_ohms


def _ordered(best: dict[str, list], net: Network) -> list[ElementPower]:
    """``best`` rows as elements: parts in display order, then switches, ``ref_r``, ``load``."""
    position = _positions(net)
    names = sorted(best, key=lambda n: (KIND_ORDER[best[n][0]], position(n)))
    return [ElementPower(n, *best[n]) for n in names]


def _positions(net: Network):
    """Display position of the part an element name refers to (``switch:<id>`` → ``<id>``; 0
    when it is no part), without a table of every part id (strings have 65,536)."""
    parts = PartList.of(net.parts)

    def position(name: str) -> int:
        i = parts.index_of(name.split(":")[-1])
        return 0 if i is None else i

    return position


def _array_worst_case(net: Network, solved: Solution | None):
    """Worst case of a network with array-held elements in exact vectorised form: a string with a
    tap switch, or plain elements with thermometer groups (``power_arrays.py``); ``None`` when
    neither applies (then the plain equivalent is used)."""

    if net.selector is not None:
        return string_worst_case(net, solved)
    if net.chains or net.n_codes > WHOLE_CODES:
        return None
    codes = np.arange(net.n_codes)
    reuse = solved is not None and solved.node_voltages and solved.vout.shape == (net.n_codes,)
    sol = solved if reuse else solve(net, keep_nodes=True)
    volts = {k: np.broadcast_to(v, codes.shape) for k, v in sol.node_voltages.items()}
    got = group_blocks(net, volts, _levels(net, codes))
    if got is None:
        return None
    blocks, group_total = got
    best: dict[str, list] = {}
    total, fed = _track(best, net, codes, _drive_rows(net, codes), volts, sol.vout)
    plain = _ordered(best, net)
    # group legs go where their parts are listed; the rest keep the plain order
    position = _positions(net)
    parts = [(position(e.name), e) for e in plain if e.kind == "part"]
    parts += [(position(f"{b.prefix}0"), b) for b in blocks if b.kind == "part"]
    switches = [(position(e.name), e) for e in plain if e.kind == "switch"]
    switches += [(position(f"{b.prefix}0"), b) for b in blocks if b.kind == "switch"]
    rest = [e for e in plain if e.kind not in ("part", "switch")]
    ordered = ([x for _, x in sorted(parts, key=lambda t: t[0])]
               + [x for _, x in sorted(switches, key=lambda t: t[0])] + rest)
    return ElementPowers(ordered), totals(net, total + group_total, fed + group_total, sol.iref)
