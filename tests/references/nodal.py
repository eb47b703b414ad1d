"""A plain dense nodal solver for outside checks: Kirchhoff's current law per node, one
``numpy.linalg.solve`` per code and board, written apart from ``core/solve.py``.

Works on any network after ``element_arrays.plain_equivalent`` (resistors and switched legs only).
"""

from __future__ import annotations

import numpy as np

from rungwise.core.element_arrays import plain_equivalent
from rungwise.core.network import GROUND


def vout(net, code: int, ohms: dict[str, float] | None = None) -> float:
    """Output of ``net`` at ``code`` with part values ``ohms`` (id → Ω) replacing the built ones."""
    net = plain_equivalent(net)
    ohms = ohms or {}
    fixed = dict(net.fixed)
    fixed.setdefault(GROUND, 0.0)
    elements = []  # (a, b, conductance)
    for r in net.resistors:
        elements.append((r.a, r.b, 1.0 / ohms.get(r.part_id, r.ohms)))
    drive = np.asarray(net.decode(np.array([code])))[0].astype(bool)
    for leg, on in zip(net.legs, drive, strict=True):
        far = leg.high if on else leg.low
        if far is None:
            continue
        r = ohms.get(leg.part_id, leg.ohms) + (leg.ron_high if on else leg.ron_low)
        elements.append((leg.node, far, 1.0 / r))
    out = net.output
    if out.kind == "node" and not out.buffered and np.isfinite(out.load_ohms):
        elements.append((out.node, GROUND, 1.0 / out.load_ohms))
    nodes = sorted({n for a, b, _ in elements for n in (a, b)} - set(fixed))
    index = {n: i for i, n in enumerate(nodes)}
    y = np.zeros((len(nodes), len(nodes)))
    rhs = np.zeros(len(nodes))
    for a, b, g in elements:
        for p, q in ((a, b), (b, a)):
            if p in index:
                y[index[p], index[p]] += g
                if q in index:
                    y[index[p], index[q]] -= g
                else:
                    rhs[index[p]] += g * fixed[q]
    v = dict(fixed)
    if nodes:
        v.update(zip(nodes, np.linalg.solve(y, rhs), strict=True))
    if out.kind == "virtual-ground":
        current = sum(g * (v[a] - v[b]) if b == out.node else g * (v[b] - v[a])
                      for a, b, g in elements if out.node in (a, b))
        rf = ohms.get("feedback", out.feedback_ohms)
        return -rf * current
    return v[out.node] * (out.gain if out.buffered else 1.0)
