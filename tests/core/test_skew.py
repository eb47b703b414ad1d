"""The ``series_ratio`` design key and the ratio search (worked values are checked by hand)."""

from __future__ import annotations

import math

import pytest

from rungwise.core import Design, evaluate
from rungwise.core.skew import ratio_for_monotonic
from rungwise.core.topologies import build


def _ohms(design: Design) -> dict[str, float]:
    return {p.part_id: p.ohms for p in build(design).parts}


@pytest.mark.parametrize("kw", [dict(topology="r2r-voltage"), dict(topology="r2r-current"),
                                dict(topology="segmented", thermometer_bits=3)])
def test_series_resistors_are_ratio_times_r(kw):
    ohms = _ohms(Design(**kw, bits=6, unit_r=10e3, series_ratio=1.05))
    series = [v for k, v in ohms.items() if k.startswith("series")]
    assert series
    assert series == pytest.approx([10.5e3] * len(series))
    assert ohms["leg0"] == pytest.approx(20e3)  # legs and terminator stay 2R
    assert ohms["term"] == pytest.approx(20e3)


def test_binary_weighted_bits_step_by_twice_the_ratio():
    ohms = _ohms(Design(topology="binary-weighted", bits=4, unit_r=1e3, series_ratio=1.1))
    assert [ohms[f"bit{k}"] for k in range(4)] == pytest.approx([1e3 * 2.2**3, 1e3 * 2.2**2,
                                                                  2.2e3, 1e3])
    units = _ohms(Design(topology="binary-weighted", bits=4, unit_r=1e3, series_ratio=1.1,
                         build={"binary": "unit-array"}))
    assert units["bit0"] == pytest.approx(8e3)  # unit arrays are counts of equal units


def test_ratio_search_names_why_it_has_no_answer():
    string = ratio_for_monotonic(Design(topology="string", bits=4))
    assert string.ratio is None
    assert "string" in string.reason
    wide = ratio_for_monotonic(Design(bits=12, mismatch={"tolerance": 0.3}))
    assert wide.ratio is None
    assert "no series ratio up to 2" in wide.reason
    already = ratio_for_monotonic(Design(topology="binary-weighted", bits=4))
    assert already.ratio == 1.0
    assert "already monotonic" in already.reason


def test_skew_costs_inl_and_is_guaranteed_at_the_answer():
    design = Design(bits=8, mismatch={"tolerance": 0.01})
    answer = ratio_for_monotonic(design)
    assert 1.0 < answer.ratio < 1.1
    skewed = evaluate(design.replace(series_ratio=answer.ratio))
    assert skewed.summary["guaranteed_monotonic"] is True
    assert not evaluate(design).summary["guaranteed_monotonic"]
    assert skewed.summary["max_abs_inl_endpoint"] == pytest.approx(answer.max_abs_inl)
    assert answer.max_abs_inl > 0.3  # the price: a radix above 2 bends the curve
    assert math.isclose(answer.base_max_abs_inl, 0.0, abs_tol=1e-9)
