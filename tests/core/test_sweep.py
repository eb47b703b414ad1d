"""The explorer's sweep engine: every point equals a direct evaluation; cache, cancel, ranges."""

from __future__ import annotations

import math
import threading

import numpy as np
import pytest

from rungwise.core import Design, RungwiseError, evaluate
from rungwise.core import sweep as sw
from rungwise.core.grades import with_tolerance
from rungwise.core.montecarlo import monte_carlo


def _same(a, b) -> bool:
    if isinstance(a, float) and isinstance(b, float) and math.isnan(a):
        return math.isnan(b)
    return a == b


CANDIDATES = [
    Design(topology="r2r-voltage", bits=8, ron_high=40.0, ron_low=25.0, load_r=1e5, name="ladder"),
    Design(topology="segmented", bits=8, thermometer_bits=3, ron_high=40.0, ron_low=25.0,
           name="segmented"),
    Design(topology="string", bits=8, ron_high=300.0, load_r=1e6, name="string"),
]


def test_every_bits_point_equals_a_direct_evaluation():
    result = sw.sweep(CANDIDATES, "bits", sw.sweep_values("bits", 2, 6))
    assert result.done == result.total == 15
    for p in result.points:
        base = CANDIDATES[p.candidate]
        direct = evaluate(base.replace(bits=p.value)).summary
        assert set(p.figures) == set(direct)
        assert all(_same(p.figures[k], direct[k]) for k in direct), (base.label, p.value)
    # M is clipped to N where it does not fit (segmented at N = 2 has M = 2)
    assert result.point(1, 2).design.thermometer_bits == 2
    x, y = result.series(2, "n_resistors")
    np.testing.assert_array_equal(x, [2, 3, 4, 5, 6])
    np.testing.assert_array_equal(y, 2.0 ** x)


def test_thermometer_sweep_only_for_segmented_designs():
    result = sw.sweep(CANDIDATES[:2], "thermometer_bits", sw.sweep_values("thermometer_bits", 0, 8))
    ladder = [p for p in result.points if p.candidate == 0]
    assert all(p.design is None and "only segmented" in p.note for p in ladder)
    seg = [p for p in result.points if p.candidate == 1]
    for p in seg:
        direct = evaluate(CANDIDATES[1].replace(thermometer_bits=p.value)).summary
        assert p.figures["max_abs_dnl"] == direct["max_abs_dnl"]
        assert p.figures["n_resistors"] == 2**p.value - 1 + max(2 * (8 - p.value), 1)  # + ladder
    # more segments in parallel at the output: lower output resistance (R / 2^M plus switches)
    _, rout = result.series(1, "rout_max")
    assert np.all(np.diff(rout) < 0)
    assert 39.0 < rout[-1] < 40.0


def test_cached_points_are_reused_and_copied():
    design = Design(topology="segmented", bits=5, thermometer_bits=2)
    first = sw.point_figures(design)
    size = len(sw._CACHE)
    first["lsb"] = -1.0
    again = sw.point_figures(design.replace(name="renamed"))
    assert len(sw._CACHE) == size
    assert again["lsb"] == evaluate(design).summary["lsb"]


def test_cancel_between_points():
    cancel = threading.Event()
    seen = []
    for partial in sw.iter_sweep(CANDIDATES, "bits", [2, 3, 4], cancel=cancel):
        seen.append(partial.done)
        cancel.set()
    assert partial.cancelled
    assert seen == [1, 1]


def test_statistics_points_equal_a_direct_monte_carlo():
    stats = sw.SweepStatistics(tolerance=0.002, trials=200, seed=5)
    base = Design(topology="segmented", bits=6, thermometer_bits=2)
    result = sw.sweep([base], "thermometer_bits", [0, 3], stats)
    for p in result.points:
        direct = monte_carlo(with_tolerance(p.design, 0.002), 200, 5)
        assert p.figures["yield_monotonic"] == direct.yield_monotonic.value
        assert p.figures["yield_all"] == direct.yield_all.value
    assert "yield_monotonic" in result.metrics()


@pytest.mark.parametrize(("over", "a", "b", "match"), [
    ("bits", 1, 4, "from 2 to 16"), ("bits", 5, 17, "from 2 to 16"),
    ("thermometer_bits", 3, 2, "first not above"), ("width", 1, 2, "cannot be swept")])
def test_bad_ranges_are_named(over, a, b, match):
    with pytest.raises(RungwiseError, match=match):
        sw.sweep_values(over, a, b)
