"""Worst-case carry steps: the smallest step any board within the tolerance box can have.

Why a vertex is enough. For one code, the output of a linear resistive network is a ratio of two
polynomials in the part conductances that are affine in each conductance separately (a conductance
enters the nodal matrix as one rank-one stamp, so the determinant and every Cramer numerator are
affine in it). Where the nodal matrix does not depend on the code (superposition), a step
V(c) − V(c − 1) shares that denominator, which is positive: the step's sign is the sign of a
multi-affine polynomial, whose minimum over a box lies at a vertex. Along each part alone the step
is linear-fractional, hence monotone: lowering the step means taking the part to the end of its
range that its sensitivity points to. Where switches break superposition the two codes of a step have
different denominators and this argument does not hold as such; the same search is used there, and
the exhaustive check covers such networks too (unequal switch resistances, a reference resistance).

The method. (1) One batched solve gives every part's sensitivity of every examined step; the
vertex that lowers step c is picked by the signs (part at nominal·(1 ∓ tolerance)). (2) Exact
solves of those vertices give the worst steps; for the lowest of them every single-part flip is
solved too, and a vertex is replaced by a better flip until none helps (a vertex no single flip
lowers). (3) Steps screened out by the first-order figure are accepted only when their linear
worst case clears the lowest exact worst step by twice the largest first-order error seen on the
examined steps; otherwise more steps are examined. ``tests/references/test_worst_case_corners.py``
checks the result against an exhaustive search of every vertex with exact nodal solves.

Which steps. With superposition and bit-decoded legs V(c) = V0 + Σ b_i·w_i, so the step into c
depends only on how many trailing ones c − 1 has: the N carries into 2^t. A segmented network adds
one step per segment (into s·2^L). Otherwise every transition is examined (bounded by
:data:`MAX_WORK`). A resistor string is monotonic for any positive values (loaded or not: the tap
voltage Vref·A·R_L/((A + B)·R_L + A·B) rises with the resistance A below the tap at fixed A + B),
so no search is needed.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from .design import Design
from .errors import NetworkError
from .formatting import format_percent
from .mismatch import MismatchModel, area_law_sigma
from .network import Network, PartList
from .solve import solve
from .topologies import build

MAX_HALF_WIDTH = 0.9
"""Largest half-width of a part's box (fraction): wider tolerances are clipped, so no vertex
reaches 0 Ω."""

MAX_WORK = 1 << 22
"""Largest trials × codes of the sensitivity solve; a design beyond it is not decided."""

STEP = 1e-6
"""Relative change of a part for the sensitivity (fraction)."""

FIRST_CHECK = 16
"""Steps examined exactly at first (all of them when there are fewer); doubled as needed."""

FLIP_CHECK = 8
"""The lowest this many exact worst steps get the single-flip search."""

FLIP_ROUNDS = 6
"""Most rounds of the single-flip search."""

ROUND_OFF = 1e-11
"""Relative size of a step change the flip search takes for round-off (of full scale)."""


@dataclass(frozen=True, eq=False)
class WorstSteps:
    """Result of :func:`worst_steps`.

    Attributes
    ----------
    transitions : ndarray of int, shape (n_t,) — step c − 1 → c for each c examined
    nominal : ndarray, shape (n_t,) — the nominal board's steps, ideal LSB (positive = towards
        full scale)
    worst : ndarray, shape (n_t,) — the smallest step in the box, ideal LSB: exact at a vertex for
        the steps solved exactly (``exact``); elsewhere a lower bound (first-order figure less twice
        the largest first-order error seen), or the first-order figure when the search stopped at
        a board with a negative step
    exact : ndarray of bool, shape (n_t,)
    vertex : ndarray of int8, shape (n_t, n_parts) — ±1: each part's end of the box on the board
        reaching ``worst`` (0 where the step was not solved exactly)
    part_ids : list[str]
    tolerance : ndarray, shape (n_parts,) — each part's half-width of the box (fraction)
    method : str — how the steps were chosen, in words
    """

    transitions: np.ndarray
    nominal: np.ndarray
    worst: np.ndarray
    exact: np.ndarray
    vertex: np.ndarray
    part_ids: list[str]
    tolerance: np.ndarray
    method: str

    @property
    def min_step(self) -> float:
        """Smallest step of any board in the box, ideal LSB."""
        return float(np.min(self.worst)) if self.worst.size else np.inf

    @property
    def guaranteed(self) -> bool:
        """No board in the box has a negative step."""
        return self.min_step >= 0.0

    @property
    def worst_transition(self) -> int:
        """The code c of the smallest worst-case step c − 1 → c (0 when there is none)."""
        return int(self.transitions[int(np.argmin(self.worst))]) if self.worst.size else 0

    def worst_board(self) -> dict[str, float]:
        """Relative deviation of every part on the board with the smallest step (fractions)."""
        i = int(np.argmin(self.worst))
        return {pid: float(s * t) for pid, s, t in
                zip(self.part_ids, self.vertex[i], self.tolerance, strict=True)}


class Undecided(Exception):
    """No search was made (too large, or a string, monotonic by construction); the message says
    why."""


STRING_NOTE = "a resistor string is monotonic for any positive resistors (no search needed)"


def part_tolerances(design: Design, net: Network) -> tuple[list[str], np.ndarray]:
    """Each toleranced part and its half-width of the box (fraction).

    ``parts`` and ``array`` models: ±``tolerance`` (the array's shared error added, a box that
    holds every board); ``on-chip``: ±``coverage_sigma`` area-law σ of the part's unit device;
    at most :data:`MAX_HALF_WIDTH`. An amplifier's feedback resistor only scales the output and
    is left out.
    """
    model = MismatchModel.of(design)
    parts = PartList.of(net.parts)
    ids = [pid for pid in parts.ids() if pid != "feedback"]
    keep = np.array([pid != "feedback" for pid in parts.ids()], dtype=bool)
    if model.model == "on-chip":
        unit = parts.unit_ohms()[keep]
        sigma = np.array([area_law_sigma(model.area_coefficient, model.unit_width,
                                         model.unit_length * (u / design.unit_r)) for u in unit])
        return ids, np.minimum(model.coverage_sigma * sigma, MAX_HALF_WIDTH)
    extra = model.shared_tolerance if model.model == "array" else 0.0
    return ids, np.full(len(ids), min(model.tolerance + extra, MAX_HALF_WIDTH))


def superposition(design: Design) -> bool:
    """The nodal matrix is the same at every code: equal switch resistances in both states and an
    ideal reference (each leg then always meets a fixed node through the same resistance)."""
    return design.ron_high == design.ron_low and design.ref_r == 0


def candidate_transitions(design: Design, net: Network, superposition: bool) -> tuple[np.ndarray, str]:
    """Codes c whose step c − 1 → c must be examined, and why (see the module docstring)."""
    n = design.bits
    if superposition and design.topology != "segmented":
        return 2 ** np.arange(n, dtype=np.int64), "the N carries (superposition: a step depends " \
                                                  "only on the trailing ones)"
    if superposition:
        low = n - design.thermometer_bits
        segs = np.arange(1, 2 ** design.thermometer_bits, dtype=np.int64) << low
        return (np.unique(np.concatenate([2 ** np.arange(low, dtype=np.int64), segs])),
                "the section's carries and every segment step (superposition)")
    return np.arange(1, 2**n, dtype=np.int64), "every transition (switches break superposition)"


def worst_steps(design: Design, tolerance: np.ndarray | float | None = None,
                max_work: int = MAX_WORK, net: Network | None = None) -> WorstSteps:
    """The smallest step of every examined transition over the tolerance box.

    Parameters
    ----------
    design : Design — the board's nominal values (as-built ``parts`` count as nominal)
    tolerance : float or ndarray (n_parts,), optional — half-widths (fraction); default from
        the design's ``mismatch`` table (:func:`part_tolerances`)
    max_work : int — largest trials × codes of the sensitivity solve
    net : Network, optional — ``build(design)`` when the caller already has it

    Raises
    ------
    Undecided
        The network is too large for the exact search (``MAX_WORK``).
    """
    net = build(design) if net is None else net
    ids, tol = part_tolerances(design, net)
    if tolerance is not None:
        tol = np.broadcast_to(np.asarray(tolerance, dtype=float), (len(ids),)).copy()
    lsb = abs(net.ideal_lsb)
    sign = 1.0 if net.ideal_lsb > 0 else -1.0
    if design.topology == "string":
        raise Undecided(STRING_NOTE)
    linear = superposition(design)
    trans, method = candidate_transitions(design, net, linear)
    # the codes solved number at least len(trans) + 1: refuse on that bound before forming them
    if (len(ids) + 1) * (trans.size + 1) > max_work:
        raise Undecided(f"not decided: at least {trans.size + 1} codes × {len(ids) + 1} boards "
                        f"exceed the worst-case search's limit of {max_work} solved outputs")
    codes = np.unique(np.concatenate([trans - 1, trans]))
    if (len(ids) + 1) * codes.size > max_work:
        raise Undecided(f"not decided: {codes.size} codes × {len(ids) + 1} boards exceed the "
                        f"worst-case search's limit of {max_work} solved outputs")
    nominal_ohms = {p.part_id: p.ohms for p in net.parts}
    base = np.array([nominal_ohms[p] for p in ids])
    idx_hi = np.searchsorted(codes, trans)
    idx_lo = np.searchsorted(codes, trans - 1)

    def steps_of(v: np.ndarray) -> np.ndarray:  # (boards, codes) → (boards, n_t), ideal LSB
        return sign * (v[:, idx_hi] - v[:, idx_lo]) / lsb

    def pair(v: np.ndarray) -> np.ndarray:  # (boards, 2) outputs before/after → steps, LSB
        return sign * (v[:, 1] - v[:, 0]) / lsb

    factors = np.ones((len(ids) + 1, len(ids)))
    factors[np.arange(1, len(ids) + 1), np.arange(len(ids))] += STEP
    s = steps_of(_solve_boards(net, ids, base, factors, codes))
    nominal = s[0]
    sens = (s[1:] - nominal) / STEP  # (parts, n_t): d step / d (relative change)
    direction = np.where(sens > 0, -1, 1).astype(np.int8).T  # (n_t, parts): the lowering end
    first_order = nominal - np.abs(sens).T @ tol
    worst = first_order.copy()
    exact = np.zeros(trans.size, dtype=bool)
    vertex = np.zeros((trans.size, len(ids)), dtype=np.int8)
    order = np.argsort(first_order, kind="stable")
    count = min(FIRST_CHECK, trans.size)
    while True:
        todo = order[:count][~exact[order[:count]]]
        if todo.size:
            vals, verts = _exact_vertices(net, ids, base, tol, direction[todo], trans[todo], pair)
            worst[todo], vertex[todo], exact[todo] = vals, verts, True
        low = order[:count][np.argsort(worst[order[:count]], kind="stable")[:FLIP_CHECK]]
        # a flip can only help where the part's first-order effect is within reach of the
        # second-order terms, whose size the exact solve just showed (|exact − first order|)
        reach = 4.0 * np.abs(worst[low] - first_order[low]) + ROUND_OFF * net.n_codes
        movable = 2.0 * np.abs(sens[:, low]).T * tol[None, :] <= reach[:, None]
        vals, verts = _flip_search(net, ids, base, tol, vertex[low], trans[low], worst[low], pair,
                                   movable)
        worst[low], vertex[low] = vals, verts
        if count >= trans.size or np.min(worst[exact]) < 0.0:
            break  # every step solved, or a board in the box is surely not monotonic
        error = float(np.max(np.abs(worst[exact] - first_order[exact])))
        rest = order[count:]
        bound = first_order[rest] - 2.0 * error
        if np.all(bound >= 0.0):
            worst[rest] = bound
            break
        count = min(2 * count, trans.size)
    return WorstSteps(trans, nominal, worst, exact, vertex, ids, tol, method)


def _solve_boards(net: Network, ids: list[str], base: np.ndarray, factors: np.ndarray,
                  codes: np.ndarray) -> np.ndarray:
    """Output at ``codes`` of boards whose part p is ``base[p]·factors[b, p]``; (boards, codes)."""
    ohms = {pid: (base[j] * factors[:, j])[:, None] for j, pid in enumerate(ids)}
    v = solve(net, ohms=ohms, codes=codes).vout
    return np.broadcast_to(v, (factors.shape[0], codes.size))


def _board_steps(net, ids, base, tol, verts, trans, steps_at) -> np.ndarray:
    """Step into ``trans[i]`` of the board at vertex ``verts[i]``; shape (len(trans),)."""
    codes = np.unique(np.concatenate([trans - 1, trans]))
    v = _solve_boards(net, ids, base, 1.0 + verts * tol[None, :], codes)
    rows = np.arange(trans.size)
    pair = np.stack([v[rows, np.searchsorted(codes, trans - 1)],
                     v[rows, np.searchsorted(codes, trans)]], axis=1)
    return steps_at(pair)


def _exact_vertices(net, ids, base, tol, verts, trans, steps_at):
    """Exact steps at the sign-picked vertices (in blocks that bound trials × codes)."""
    out = np.empty(trans.size)
    block = max(1, int(np.sqrt(MAX_WORK / 2)))
    for start in range(0, trans.size, block):
        sl = slice(start, start + block)
        out[sl] = _board_steps(net, ids, base, tol, verts[sl], trans[sl], steps_at)
    return out, verts.astype(np.int8)


def _flip_search(net, ids, base, tol, verts, trans, values, steps_of, movable):
    """Move each vertex to a single-part flip that lowers its step until none does (by more than
    the solver's round-off, :data:`ROUND_OFF` of full scale); only moved vertices search again.
    ``movable`` (n_t, n_parts) says which parts may flip: one whose first-order effect (2·tol·|s|)
    exceeds the reach of the second-order terms always raises the step when flipped."""
    verts = verts.astype(np.int8).copy()
    values = values.copy()
    least = ROUND_OFF * net.n_codes  # ideal LSB per full scale
    active = np.arange(trans.size)
    for _ in range(FLIP_ROUNDS):
        rows_i, parts_i = np.nonzero(movable[active])
        if not rows_i.size:
            break
        flipped = verts[active][rows_i].copy()
        flipped[np.arange(rows_i.size), parts_i] *= -1
        vals = _board_steps(net, ids, base, tol, flipped, trans[active][rows_i], steps_of)
        grid = np.full(movable[active].shape, np.inf)
        grid[rows_i, parts_i] = vals
        best = np.argmin(grid, axis=1)
        lowest = grid[np.arange(active.size), best]
        better = lowest < values[active] - least
        rows = active[better]
        verts[rows, best[better]] *= -1
        values[rows] = lowest[better]
        active = rows
    return values, verts


SUMMARY_WORK = 1 << 17
"""Largest sensitivity solve ``evaluate`` spends on the guarantee (a bigger network is reported
as not decided; :func:`worst_steps` itself goes to :data:`MAX_WORK`)."""


def summary(design: Design, max_work: int = SUMMARY_WORK, net: Network | None = None
            ) -> tuple[dict, str]:
    """The guarantee's summary entries (labels in :mod:`.figure_registry`) and how it was decided, in
    words. ``guaranteed_monotonic`` is True only when decided so: an undecided design reads False
    (with NaN figures) and the words say why. ``net``: ``build(design)`` when the caller has it."""
    undecided = {"guaranteed_monotonic": False, "worst_case_min_step": float("nan"),
                 "worst_case_transition": float("nan")}
    if design.topology == "string":
        return {**undecided, "guaranteed_monotonic": True}, STRING_NOTE
    try:
        w = worst_steps(design, max_work=max_work, net=net)
    except Undecided as exc:
        return undecided, str(exc)
    except NetworkError as exc:  # a board at a corner of the box the solver cannot take
        return undecided, f"not decided: a board at a corner of the box cannot be solved ({exc})"
    tol = float(np.max(w.tolerance)) if w.tolerance.size else 0.0
    return ({"guaranteed_monotonic": w.guaranteed, "worst_case_min_step": w.min_step,
             "worst_case_transition": w.worst_transition},
            f"every part anywhere within ±{format_percent(tol)}; examined {w.method}")
