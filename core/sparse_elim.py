"""Batched sparse symmetric elimination: one small network pattern, many numeric instances.

Every code (and every Monte Carlo trial) shares the sparsity pattern of the nodal matrix, so the
elimination order and fill are found once (minimum degree) and the numeric work is a short,
fixed sequence of numpy operations over the whole batch — no Python loop over codes.

The matrix is a nodal conductance matrix (off-diagonals −g ≤ 0, each row summing to its shunt
conductance to fixed nodes ≥ 0), given by its off-diagonals and its *shunts*, not its diagonal.
Each pivot is formed as shunt + Σ conductances to the remaining nodes and each elimination step
only adds terms of one sign (the Grassmann–Taksar–Heyman form of Gaussian elimination), so no
difference of large numbers ever occurs: parts from 1 mΩ to 1 TΩ in one network solve without a
pivot vanishing in round-off.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np


@dataclass(frozen=True)
class EliminationPlan:
    """Pivot order and, per pivot, the not-yet-eliminated neighbours (fill included)."""

    order: tuple[int, ...]
    later_neighbours: tuple[tuple[int, ...], ...]  # indexed by pivot position


def plan_elimination(n: int, pairs: set[tuple[int, int]], last: int | None = None
                     ) -> EliminationPlan:
    """Minimum-degree order for an ``n``-node symmetric pattern given by off-diagonal ``pairs``;
    node ``last`` (the output, when given) is eliminated last, so its value needs no back
    substitution."""
    adj: list[set[int]] = [set() for _ in range(n)]
    for i, j in pairs:
        if i != j:
            adj[i].add(j)
            adj[j].add(i)
    remaining = set(range(n))
    order: list[int] = []
    later: list[tuple[int, ...]] = []
    while remaining:
        pool = remaining - {last} if len(remaining) > 1 else remaining
        k = min(pool, key=lambda v: (len(adj[v]), v))
        nb = adj[k]
        for a in nb:
            adj[a].discard(k)
            adj[a] |= nb - {a}
        order.append(k)
        later.append(tuple(sorted(nb)))
        remaining.discard(k)
        adj[k] = set()
    return EliminationPlan(tuple(order), tuple(later))


def _key(i: int, j: int) -> tuple[int, int]:
    return (i, j) if i <= j else (j, i)


def solve_batched(
    n: int,
    entries: dict[tuple[int, int], np.ndarray | float],
    rhs: list[np.ndarray],
    plan: EliminationPlan,
    node_names: list[str] | None = None,
    wanted: set[int] | None = None,
) -> list[np.ndarray | None]:
    """Solve ``A x = b`` for a batch of nodal conductance matrices sharing one pattern.

    Parameters
    ----------
    n : int
        Number of unknowns.
    entries : dict[(i, j) with i <= j, array or float]
        Off-diagonal entries ``(i, j)``, i < j: −(conductance between i and j), ≤ 0; diagonal
        keys ``(i, i)``: node i's *shunt*, the conductance from i to fixed nodes, ≥ 0 (the
        diagonal itself is the shunt plus the conductances to the other nodes). Each value
        broadcasts to the batch shape. Missing entries are zero.
    rhs : list of n arrays, each shape batch + (n_rhs,)
        Right-hand sides per unknown.
    plan : EliminationPlan
        From :func:`plan_elimination` on the same pattern.
    node_names : list[str], optional
        Used to name a floating node in the error.
    wanted : set of int, optional
        Unknowns whose solution is needed (default: all). Back substitution then forms only these
        and the later pivots they depend on; the others are ``None``. A node eliminated last needs
        no back substitution at all.

    Returns
    -------
    list of n arrays (or None where not wanted), each shape batch + (n_rhs,)
        The solution per unknown.

    Raises
    ------
    NetworkError
        A pivot vanishes: the node has no DC path to a fixed node in some batch element.
    """
    from .errors import NetworkError

    a = dict(entries)
    # right-hand sides with their columns first, (n_rhs,) + batch, so every update below runs
    # over the batch's long contiguous axes (columns last would make numpy's inner loops 2 long)
    depth = max([np.ndim(v) for v in entries.values()] + [np.ndim(r) - 1 for r in rhs] + [0])
    b = [np.moveaxis(np.reshape(r, (1,) * (depth + 1 - np.ndim(r)) + np.shape(r)), -1, 0).copy()
         for r in rhs]
    pivots: list[np.ndarray | float] = [0.0] * n
    for k, nb in zip(plan.order, plan.later_neighbours, strict=True):
        shunt = a.get((k, k), 0.0)
        d = shunt
        for i in nb:
            d = d - a.get(_key(i, k), 0.0)
        if not (np.min(d) > 0 and np.max(d) < np.inf):  # NaN fails both
            name = node_names[k] if node_names else str(k)
            raise NetworkError(name, f"node '{name}' has no DC path to ground or a source "
                               "(a floating node): the network cannot be solved")
        pivots[k] = d
        factors = {i: a.get(_key(i, k), 0.0) / d for i in nb}
        for idx, i in enumerate(nb):
            li = factors[i]
            b[i] = b[i] - li * b[k]
            a[(i, i)] = a.get((i, i), 0.0) - li * shunt  # li ≤ 0: the shunt only grows
            for j in nb[idx + 1:]:
                a[_key(i, j)] = a.get(_key(i, j), 0.0) - li * a.get(_key(k, j), 0.0)
    x: list[np.ndarray | None] = [None] * n
    needed = _needed(plan, wanted)
    for k, nb in zip(reversed(plan.order), reversed(plan.later_neighbours), strict=True):
        if needed is not None and k not in needed:
            continue
        acc = b[k]
        for i in nb:
            acc = acc - a.get(_key(k, i), 0.0) * x[i]
        x[k] = acc / pivots[k]
    return [None if v is None else np.moveaxis(v, 0, -1) for v in x]


def _needed(plan: EliminationPlan, wanted: set[int] | None) -> set[int] | None:
    """``wanted`` and every later pivot its back substitution reads (``None``: all)."""
    if wanted is None:
        return None
    later = dict(zip(plan.order, plan.later_neighbours, strict=True))
    needed: set[int] = set()
    stack = list(wanted)
    while stack:
        k = stack.pop()
        if k not in needed:
            needed.add(k)
            stack.extend(later[k])
    return needed
