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
