"""The sentence a yield sweep ends with: where each candidate first reaches the target yield."""

from __future__ import annotations

import math

from rungwise.core import Design
from rungwise.core.sweep import SweepPoint, SweepResult, SweepStatistics
from rungwise.core.sweep_answer import answer_lines, first_reaching

SEG = Design(topology="segmented", bits=8, name="Seg")
LAD = Design(topology="r2r-voltage", bits=8, name="Lad")


def _result(yields: dict[int, list[float]], done: int | None = None) -> SweepResult:
    r = SweepResult("thermometer_bits", [0, 1, 2, 3], [SEG, LAD], SweepStatistics(0.001, 100, 1))
    for ci, ys in yields.items():
        for m, y in zip(r.values, ys, strict=True):
            figures = {"yield_monotonic": y, "n_resistors": 10 + m, "n_switches": 8 + m}
            r.points.append(SweepPoint(ci, m, r.candidates[ci], figures))
    r.points = r.points[:done]
    return r


def test_first_point_at_or_above_the_target_in_swept_order():
    r = _result({0: [0.5, 0.991, 0.98, 1.0], 1: [0.2, 0.3, math.nan, 0.4]})
    assert first_reaching(r, 0, "yield_monotonic", 0.99).value == 1
    assert first_reaching(r, 0, "yield_monotonic", 0.995).value == 3
    assert first_reaching(r, 1, "yield_monotonic", 0.99) is None


def test_answer_names_the_point_its_part_count_or_the_best_reached():
    r = _result({0: [0.5, 0.991, 0.98, 1.0], 1: [0.2, 0.3, math.nan, 0.4]})
    seg, lad = answer_lines(r, 0.99)
    assert seg == "Seg: 99 % monotonic first reached at M = 1 (99.1 %) — 11 resistors, 9 switches"
    assert lad == "Lad: never 99 % monotonic (best 40 % at M = 3)"


def test_partial_sweeps_say_so_and_nominal_sweeps_say_nothing():
    r = _result({0: [0.5, 0.6, 0.7, 0.8], 1: [0.2, 0.3, 0.3, 0.4]}, done=6)
    assert answer_lines(r, 0.99)[1] == "Lad: never 99 % monotonic so far (best 30 % at M = 1)"
    nominal = SweepResult("bits", [4], [SEG], None, [SweepPoint(0, 4, SEG, {"n_resistors": 3})])
    assert answer_lines(nominal, 0.99) == []


def test_a_candidate_the_sweep_does_not_apply_to_says_why():
    from rungwise.core.sweep import sweep

    r = sweep([SEG.replace(bits=4), LAD], "thermometer_bits", [0, 1], SweepStatistics(0.01, 20, 1))
    assert answer_lines(r, 0.99)[1] == (
        "Lad: not swept — only segmented designs have thermometer bits (Lad is r2r-voltage)")


def _bits_result(yields: list[float], trials: int) -> SweepResult:
    values = list(range(4, 4 + len(yields)))
    r = SweepResult("bits", values, [LAD], SweepStatistics(0.001, trials, 1))
    for n, y in zip(values, yields, strict=True):
        r.points.append(SweepPoint(0, n, LAD.replace(bits=n), {"yield_monotonic": y,
                                                               "n_resistors": 2 * n}))
    return r


def test_bit_count_answer_is_the_largest_n_decided_to_meet():
    from rungwise.core.sweep_answer import largest_lines

    # 1998 of 2000 boards: exact one-sided 95 % bounds 0.9969 … 0.9998, lower ≥ 0.99 (Clopper and
    # Pearson 1934; scipy.stats.binomtest "exact" at 90 % two-sided); 1940 of 2000: 0.9629 … 0.9760.
    r = _bits_result([1.0, 1.0, 0.999, 0.97, 0.5], 2000)
    (line,) = largest_lines(r, 0.99)
    assert line.startswith("Lad: largest N still meeting 99 % monotonic: N = 6 (99.9 %")
    assert "Clopper–Pearson" in line
    assert "N = 6 (99.9 % (99.69 … 99.98 %) over 2000 boards" in line
    assert line.endswith("; N = 7 misses (97 % (96.29 … 97.6 %))")
    assert line in answer_lines(r, 0.99)
    # 99.5 % of 100 boards cannot be decided at 95 %: never called "meets"
    (undecided,) = largest_lines(_bits_result([0.995, 0.99], 100), 0.99)
    assert undecided.startswith("Lad: no N decided to meet 99 % monotonic")


def test_largest_n_of_a_real_sweep_meets_and_the_next_does_not():
    from rungwise.core import monte_carlo
    from rungwise.core.grades import with_tolerance
    from rungwise.core.sweep import sweep
    from rungwise.core.sweep_answer import largest_meeting
    from rungwise.core.yield_decision import decide_yield

    ladder = Design(topology="r2r-voltage", bits=8, mismatch={"tolerance": 0.002})
    r = sweep([ladder], "bits", list(range(6, 12)), SweepStatistics(0.002, 1500, 3))
    point, decision = largest_meeting(r, 0, "yield_monotonic", 0.99)
    assert decision.meets
    nxt = monte_carlo(with_tolerance(ladder.replace(bits=point.value + 1), 0.002), 1500, 3)
    assert not decide_yield(nxt.yield_monotonic.passed, 1500, 0.99).meets


def test_never_meeting_because_the_nominal_design_fails_says_why():
    from rungwise.core.sweep import sweep

    switched = LAD.replace(ron_high=40, ron_low=25)
    r = sweep([switched], "bits", [12], SweepStatistics(0.001, 50, 1))
    (line, *_) = answer_lines(r, 0.99)
    assert "never 99 % monotonic" in line
    assert "nominal design already fails" in line
    assert "switch resistance" in line
