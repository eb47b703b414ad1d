"""Preferred values and snapping, checked against IEC 60063 and worked examples."""

from __future__ import annotations

import numpy as np
import pytest

from rungwise.core import Design, DesignError, evaluate
from rungwise.core.parts.eseries import mantissas, snap, values

# IEC 60063:2015, Table 1 (E24 … E3), typed from the standard's list
IEC_E24 = [1.0, 1.1, 1.2, 1.3, 1.5, 1.6, 1.8, 2.0, 2.2, 2.4, 2.7, 3.0,
           3.3, 3.6, 3.9, 4.3, 4.7, 5.1, 5.6, 6.2, 6.8, 7.5, 8.2, 9.1]
IEC_E12 = [1.0, 1.2, 1.5, 1.8, 2.2, 2.7, 3.3, 3.9, 4.7, 5.6, 6.8, 8.2]
IEC_E6 = [1.0, 1.5, 2.2, 3.3, 4.7, 6.8]
IEC_E3 = [1.0, 2.2, 4.7]
# IEC 60063:2015, Table 2 (E96), typed from the standard's list
IEC_E96 = [1.00, 1.02, 1.05, 1.07, 1.10, 1.13, 1.15, 1.18, 1.21, 1.24, 1.27, 1.30, 1.33, 1.37,
           1.40, 1.43, 1.47, 1.50, 1.54, 1.58, 1.62, 1.65, 1.69, 1.74, 1.78, 1.82, 1.87, 1.91,
           1.96, 2.00, 2.05, 2.10, 2.15, 2.21, 2.26, 2.32, 2.37, 2.43, 2.49, 2.55, 2.61, 2.67,
           2.74, 2.80, 2.87, 2.94, 3.01, 3.09, 3.16, 3.24, 3.32, 3.40, 3.48, 3.57, 3.65, 3.74,
           3.83, 3.92, 4.02, 4.12, 4.22, 4.32, 4.42, 4.53, 4.64, 4.75, 4.87, 4.99, 5.11, 5.23,
           5.36, 5.49, 5.62, 5.76, 5.90, 6.04, 6.19, 6.34, 6.49, 6.65, 6.81, 6.98, 7.15, 7.32,
           7.50, 7.68, 7.87, 8.06, 8.25, 8.45, 8.66, 8.87, 9.09, 9.31, 9.53, 9.76]


@pytest.mark.parametrize(("name", "table"), [("E24", IEC_E24), ("E12", IEC_E12), ("E6", IEC_E6),
                                             ("E3", IEC_E3), ("E96", IEC_E96)])
def test_tables_match_iec_60063(name, table):
    # IEC 60063:2015, Tables 1 and 2
    np.testing.assert_array_equal(mantissas(name), table)


def test_e24_values_that_differ_from_the_rounding_formula():
    # IEC 60063:2015 Table 1: eight E24 values are not round(10^(i/24), 1)
    formula = np.round(10.0 ** (np.arange(24) / 24), 1)
    differ = mantissas("E24")[formula != mantissas("E24")]
    np.testing.assert_array_equal(differ, [2.7, 3.0, 3.3, 3.6, 3.9, 4.3, 4.7, 8.2])


def test_e192_has_its_one_exception():
    # IEC 60063:2015 Table 2: E192 lists 9.20 where three-digit rounding gives 9.19
    e192 = mantissas("E192")
    assert 9.20 in e192
    assert 9.19 not in e192
    formula = np.round(10.0 ** (np.arange(192) / 192), 2)
    assert np.count_nonzero(formula != e192) == 1


@pytest.mark.parametrize(("coarse", "fine"), [("E3", "E6"), ("E6", "E12"), ("E12", "E24"),
                                              ("E48", "E96"), ("E96", "E192")])
def test_series_nest(coarse, fine):
    # IEC 60063:2015 clause 4: each series is every second value of the next finer one
    np.testing.assert_array_equal(mantissas(coarse), mantissas(fine)[::2])


def test_decades_span_one_ohm_to_ten_megohm():
    v = values("E24")
    assert v[0] == 1.0
    assert v[-1] == 10e6
    assert 4700.0 in v
    assert np.all(np.diff(v) > 0)


@pytest.mark.parametrize(("series", "ohms", "expected"), [
    ("E96", 9.87e3, 9.76e3), ("E96", 9.9e3, 10.0e3), ("E96", 33e3, 33.2e3), ("E96", 66e3, 66.5e3),
    ("E12", 2.44e3, 2.7e3), ("E12", 2.43e3, 2.2e3), ("E24", 1e7, 1e7), ("E24", 1.02, 1.0),
])
def test_snapping_by_ratio(series, ohms, expected):
    # worked by hand (COMP in shared reference values): nearest by log distance; E12 2.44 k lies above
    # the geometric midpoint √(2.2·2.7) = 2.4372 k, so it snaps up although 2.2 k is nearer by difference
    assert float(snap(ohms, series)) == pytest.approx(expected, rel=1e-12)


def test_snap_is_vectorised_and_exact_keeps_values():
    x = np.array([[9.87e3, 33e3], [66e3, 123.456]])
    np.testing.assert_allclose(snap(x, "E96"), [[9.76e3, 33.2e3], [66.5e3, 124.0]])
    np.testing.assert_array_equal(snap(x, "exact"), x)


def test_values_outside_the_decades_are_refused_by_name():
    with pytest.raises(DesignError, match="series"):
        snap(0.5, "E24")
    with pytest.raises(DesignError, match="bit0"):
        evaluate(Design(topology="binary-weighted", bits=16, unit_r=1e6, series="E24"))


def test_unknown_series_is_refused():
    with pytest.raises(DesignError, match="series"):
        Design(series="E7")


def test_snapped_ladder_of_33k_and_68k_is_not_monotonic_but_e96_is():
    # 8-bit voltage-mode ladder, unit 33 kΩ: E12 gives 33 k / 68 k parts (2R 3 % high) — the MSB
    # carry loses more than one LSB; E96 gives 33.2 k / 66.5 k (0.15 % high) and stays monotonic
    e12 = evaluate(Design(bits=8, unit_r=33e3, series="E12"))
    assert {p["ohms"] for p in e12.parts} == {33e3, 68e3}
    assert not e12.summary["monotonic"]
    assert e12.summary["max_abs_dnl"] > 1.0
    e96 = evaluate(Design(bits=8, unit_r=33e3, series="E96"))
    assert {p["ohms"] for p in e96.parts} == {33.2e3, 66.5e3}
    assert e96.summary["monotonic"]
    assert e96.summary["max_abs_dnl"] < 0.5


def test_as_built_parts_and_typed_feedback_stay_exact():
    d = Design(bits=4, unit_r=10e3, series="E24", parts={"leg0": 20.1e3})
    ev = evaluate(d)
    ohms = {p["id"]: p["ohms"] for p in ev.parts}
    assert ohms["leg0"] == 20.1e3
    assert ohms["leg1"] == 20e3
    sa = evaluate(Design(topology="binary-weighted", output="summing-amp", bits=4, unit_r=10e3,
                         feedback_r=4.99e3, series="E12"))
    assert {p["id"]: p["ohms"] for p in sa.parts}["feedback"] == 4.99e3
    derived = evaluate(Design(topology="binary-weighted", output="summing-amp", bits=4, unit_r=10e3,
                              series="E12"))
    # bit3 = R/… : bits 10 k, 20 k → 22 k (E12), 40 k → 39 k, 80 k → 82 k; feedback R/2 = 5 k → 4.7 k
    got = {p["id"]: p["ohms"] for p in derived.parts}
    assert got == {"bit3": 10e3, "bit2": 22e3, "bit1": 39e3, "bit0": 82e3, "feedback": 4.7e3}


def test_exact_series_changes_nothing():
    a = evaluate(Design(bits=6, unit_r=12.3e3))
    b = evaluate(Design(bits=6, unit_r=12.3e3, series="exact"))
    np.testing.assert_array_equal(a.vout, b.vout)


def test_parts_of_several_units_snap_their_unit():
    # 2R built as two units in series: 2 × snap(R) = 2 × 33 k, not snap(66 k) = 68 k — the ladder
    # stays ratio-exact and monotonic with E12 parts
    two = evaluate(Design(bits=8, unit_r=33e3, series="E12", build={"two_r": "two-units"}))
    assert {p["ohms"] for p in two.parts} == {33e3, 66e3}
    assert two.summary["max_abs_dnl"] < 1e-9
    # binary weights from a unit array: bit k = 2^k units of snap(R·2^(N−1)) in parallel
    arr = evaluate(Design(topology="binary-weighted", output="terminated-divider", bits=4,
                          unit_r=10e3, series="E12", build={"binary": "unit-array"}))
    got = {p["id"]: p["ohms"] for p in arr.parts}
    assert got == {"bit0": 82e3, "bit1": 41e3, "bit2": 20.5e3, "bit3": 10.25e3, "term": 82e3}
    assert arr.summary["max_abs_inl_endpoint"] < 1e-9
