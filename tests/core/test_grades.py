"""Decision helpers: yield against grade and bit count, loosest passing grade."""

from __future__ import annotations

import threading

import numpy as np
import pytest

from rungwise.core import Design, DesignError
from rungwise.core.grades import (
    STANDARD_GRADES,
    grade_vs_bits,
    iter_yield_vs_tolerance,
    loosest_grade,
    with_tolerance,
    yield_vs_bits,
)
from rungwise.core.targets import Targets

LADDER = Design(topology="r2r-voltage", bits=8)
BINARY = Design(topology="binary-weighted", output="terminated-divider", bits=8)


def test_yield_falls_as_the_grade_loosens_and_the_loosest_passing_grade_is_found():
    grade, curve = loosest_grade(LADDER, 0.99, trials=1500, seed=4, criterion="monotonic")
    assert curve.steps.tolist() == list(STANDARD_GRADES)
    assert curve.values[0] == 1.0
    assert curve.values[-1] < 0.5  # ±5 % parts: an 8-bit ladder is rarely monotonic
    assert np.all(np.diff(curve.values) <= 0.01)
    i = STANDARD_GRADES.index(grade)
    assert curve.values[i] >= 0.99
    assert np.all(curve.values[i + 1:] < 0.99)


def test_a_unit_array_allows_a_looser_grade_than_one_part_per_bit():
    # common practice: a unit-element array's midscale step has σ·√(2^N − 1), far below one part
    # per bit's ≈ σ·2^(N−1)
    per_bit, _ = loosest_grade(BINARY, trials=1000, seed=2, criterion="monotonic")
    units, _ = loosest_grade(BINARY.replace(build={"binary": "unit-array"}), trials=1000, seed=2,
                             criterion="monotonic")
    assert units >= 4 * per_bit


def test_default_target_is_the_review_target_and_none_when_nothing_passes():
    grade, curve = loosest_grade(Design(bits=16), trials=300, seed=1,
                                 targets=Targets(min_yield=0.999), criterion="all")
    assert grade is None
    assert max(curve.values) < 0.999


def test_fewer_bits_allow_looser_grades():
    grades = grade_vs_bits(LADDER, [6, 10], target_yield=0.99, trials=800, seed=3, criterion="dnl")
    assert grades[6] > grades[10]
    curve = yield_vs_bits(with_tolerance(LADDER, 0.01), [4, 8, 12], trials=800, seed=3,
                          criterion="monotonic")
    assert curve.values[0] >= curve.values[1] >= curve.values[2]
    assert curve.values[0] == 1.0


def test_on_chip_has_no_grade_and_bad_criterion_is_named():
    with pytest.raises(DesignError, match=r"mismatch\.model"):
        with_tolerance(Design(mismatch={"model": "on-chip"}), 0.01)
    with pytest.raises(DesignError, match="criterion"):
        loosest_grade(LADDER, trials=10, criterion="pretty")


def test_curve_stops_between_grades_when_cancelled():
    cancel = threading.Event()
    seen = []
    for curve in iter_yield_vs_tolerance(LADDER, trials=100, seed=1, cancel=cancel):
        seen.append(len(curve.yields))
        cancel.set()
    assert seen == [1]


def test_a_cancel_stops_the_yield_curve_inside_a_grade_run():
    class SetAfterFirstGrade:  # a cancel event set while the second grade's run is going
        calls = 0

        def is_set(self) -> bool:
            self.calls += 1
            return self.calls > 3

    d = Design(topology="r2r-voltage", bits=6, ron_high=40.0, ron_low=25.0)
    curves = list(iter_yield_vs_tolerance(d, [0.001, 0.01, 0.05], trials=200, seed=1,
                                          cancel=SetAfterFirstGrade()))
    assert len(curves) == 1
    assert len(curves[-1].yields) == 1


def test_a_run_stops_once_its_yield_is_decided_by_the_shared_rule():
    from rungwise.core.grades import iter_until_decided
    from rungwise.core.montecarlo import monte_carlo
    from rungwise.core.yield_decision import SequentialYield

    # ±5 % parts: a clear miss, decided at the first look (100 boards of a 2000 budget)
    *_, (run, decision) = iter_until_decided(with_tolerance(LADDER, 0.05), 2000, 3, None,
                                             "monotonic", 0.99)
    assert decision.verdict == "fails"
    assert decision.trials == 100
    assert run.done < 2000
    # the same boards as a full run, judged by yield_decision's sequential rule
    full = monte_carlo(with_tolerance(LADDER, 0.05), 2000, seed=3)
    assert np.array_equal(run.monotonic, full.monotonic[:run.done])
    assert SequentialYield(0.99, 2000).update(full.monotonic) == decision
    # ±0.01 % parts: every board passes; "meets" needs enough boards for the one-sided bound
    *_, (run, decision) = iter_until_decided(with_tolerance(LADDER, 0.0001), 2000, 3, None,
                                             "monotonic", 0.99)
    assert decision.verdict == "meets"
    assert decision.lower >= 0.99
    assert decision.trials < 2000


def test_early_stopped_curve_counts_only_grades_decided_to_meet():
    grade, curve = loosest_grade(LADDER, 0.99, trials=1500, seed=4, criterion="monotonic",
                                 early_stop=True)
    assert len(curve.decisions) == len(STANDARD_GRADES)
    meets = [float(s) for s, d in zip(curve.steps, curve.decisions, strict=True) if d.meets]
    assert grade == max(meets)
    plain, _ = loosest_grade(LADDER, 0.99, trials=1500, seed=4, criterion="monotonic")
    assert grade <= plain  # a decided "meets" is never looser than the plain estimate's pick
