"""The worst-case carry step against outside checks.

- An exhaustive corner search: every vertex of the tolerance box, every transition, each output
  from a dense nodal solve written apart from the engine (``nodal.py``: Kirchhoff's current law,
  ``numpy.linalg.solve``). The minimum of a multi-affine function over a box lies at a vertex
  (common practice, linear algebra), so this search is exact.
- Monte Carlo (numpy's generator, uniform within the tolerance) at the guaranteed ratio never
  finds a non-monotonic board.
"""

from __future__ import annotations

import itertools

import numpy as np
import pytest

from rungwise.core import Design
from rungwise.core.metrics import linearity
from rungwise.core.montecarlo import monte_carlo
from rungwise.core.skew import ratio_for_monotonic
from rungwise.core.topologies import build
from rungwise.core.worst_case import part_tolerances, worst_steps

from . import nodal

SMALL = [
    dict(topology="r2r-voltage", bits=4),
    dict(topology="r2r-voltage", bits=4, ron_high=400.0, ron_low=250.0, load_r=30e3),
    dict(topology="r2r-current", bits=3, ron_high=300.0, ron_low=300.0),
    dict(topology="binary-weighted", output="terminated-divider", bits=4),
    dict(topology="binary-weighted", output="divider", bits=3, ron_high=500.0, ron_low=100.0),
    dict(topology="segmented", bits=4, thermometer_bits=2),
    dict(topology="segmented", bits=4, thermometer_bits=1, ref_r=200.0),
]


def _corner_minimum(design: Design) -> float:
    """Smallest oriented step over every vertex and transition, in ideal LSB (dense solves)."""
    net = build(design)
    ids, tol = part_tolerances(design, net)
    base = {p.part_id: p.ohms for p in net.parts}
    codes = range(2**design.bits)
    lsb = net.ideal_lsb
    best = np.inf
    for signs in itertools.product((-1.0, 1.0), repeat=len(ids)):
        ohms = {pid: base[pid] * (1.0 + s * t) for pid, s, t in zip(ids, signs, tol, strict=True)}
        v = np.array([nodal.vout(net, c, ohms) for c in codes])
        best = min(best, float(np.min(np.diff(v) / lsb)))
    return best


@pytest.mark.parametrize("kw", SMALL, ids=lambda kw: f"{kw['topology']}-{kw['bits']}")
@pytest.mark.parametrize("ratio", [1.0, 1.12])
def test_worst_step_equals_exhaustive_corner_search(kw, ratio):
    design = Design(**kw, series_ratio=ratio, mismatch={"tolerance": 0.04})
    found = worst_steps(design)
    expected = _corner_minimum(design)  # exhaustive, independent nodal solves
    assert found.min_step == pytest.approx(expected, abs=1e-9)
    board = found.worst_board()  # the board it names really has that step
    net = build(design)
    ohms = {p.part_id: p.ohms * (1.0 + board.get(p.part_id, 0.0)) for p in net.parts}
    c = found.worst_transition
    step = (nodal.vout(net, c, ohms) - nodal.vout(net, c - 1, ohms)) / net.ideal_lsb
    assert step == pytest.approx(found.min_step, abs=1e-9)


@pytest.mark.parametrize("kw", [dict(topology="r2r-voltage", bits=8, ron_high=40.0, ron_low=25.0),
                                dict(topology="segmented", bits=8, thermometer_bits=3),
                                dict(topology="binary-weighted", output="terminated-divider",
                                     bits=8)],
                         ids=["r2r", "segmented", "binary"])
def test_monte_carlo_at_the_guaranteed_ratio_finds_no_bad_board(kw):
    design = Design(**kw, mismatch={"tolerance": 0.02, "distribution": "uniform"})
    answer = ratio_for_monotonic(design)
    assert answer.ratio is not None
    assert answer.ratio > 1.0
    skewed = design.replace(series_ratio=answer.ratio)
    assert worst_steps(skewed).guaranteed
    mc = monte_carlo(skewed, trials=4000, seed=11)  # numpy Generator, uniform within ±2 %
    assert mc.monotonic.shape == (4000,)
    assert mc.monotonic.all()
    # just below the ratio a board in the box is not monotonic: the worst board, solved densely
    below = design.replace(series_ratio=answer.ratio - 0.002)
    w = worst_steps(below)
    assert not w.guaranteed
    net = build(below)
    ohms = {p.part_id: p.ohms * (1.0 + w.worst_board().get(p.part_id, 0.0)) for p in net.parts}
    v = np.array([nodal.vout(net, c, ohms) for c in range(2**below.bits)])
    assert not linearity.monotonic(v)
