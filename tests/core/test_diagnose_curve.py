"""Linearity of measured curves, with missing and repeated codes (IEEE Std 1658 DAC terms)."""

from __future__ import annotations

from fractions import Fraction

import numpy as np
import pytest

from rungwise.core.diagnose import Measurement, MeasurementError, curve_linearity, pooled_noise
from rungwise.core.metrics import linearity

# 3-bit example from shared REFERENCE-VALUES.md [COMP]; definitions IEEE Std 1658-2011 (DAC
# terminology) and IEEE Std 1241-2010 (terminal-based and independently based lines) [from memory]
V3 = np.array([0, 1.10, 1.90, 3.10, 4.30, 4.90, 6.00, 7.00])


def test_three_bit_reference_example():
    lin = curve_linearity(np.arange(8), V3, ideal_lsb=1.0, n_codes=8)
    assert lin.lsb == pytest.approx(1.0)
    np.testing.assert_allclose(lin.inl_endpoint, [0, .1, -.1, .1, .3, -.1, 0, 0], atol=1e-12)
    np.testing.assert_allclose(lin.dnl, [.1, -.2, .2, .2, -.4, .1, 0], atol=1e-12)
    expected = np.array([-14, 15, -40, 17, 74, -37, -8, -7]) / 279  # 5/93 = 15/279
    np.testing.assert_allclose(lin.inl_bestfit, expected, atol=1e-12)
    assert lin.bestfit_offset == pytest.approx(0.05)
    assert lin.bestfit_slope == pytest.approx(279 / 280)
    assert lin.monotonic
    np.testing.assert_array_equal(lin.dnl_span, 1)


def test_non_monotonic_reference_example():
    # REFERENCE-VALUES.md [COMP]: V = [0, 1, 2, 3.2, 3.1, 5, 6, 7] → DNL = [0, 0, .2, −1.1, .9, 0, 0]
    v = np.array([0, 1, 2, 3.2, 3.1, 5, 6, 7])
    lin = curve_linearity(np.arange(8), v, 1.0, 8)
    np.testing.assert_allclose(lin.dnl, [0, 0, .2, -1.1, .9, 0, 0], atol=1e-12)
    assert not lin.monotonic


def test_complete_curves_agree_with_the_project_metrics():
    rng = np.random.default_rng(7)
    for sign in (1.0, -1.0):
        v = sign * (np.arange(64) * 0.01 + rng.normal(0, 0.002, 64))
        lin = curve_linearity(np.arange(64), v, sign * 0.01, 64)
        np.testing.assert_allclose(lin.inl_endpoint, linearity.inl_endpoint(v), atol=1e-9)
        np.testing.assert_allclose(lin.inl_bestfit, linearity.inl_bestfit(v), atol=1e-9)
        np.testing.assert_allclose(lin.dnl, linearity.dnl(v), atol=1e-9)
        assert lin.monotonic == bool(linearity.monotonic(v))


def _fraction_bestfit(codes, volts):
    """Least-squares line by exact rational arithmetic (an independent hand computation)."""
    c = [Fraction(int(x)) for x in codes]
    v = [Fraction(x).limit_denominator(10**6) for x in volts]
    n = len(c)
    cm, vm = sum(c) / n, sum(v) / n
    slope = sum((a - cm) * (b - vm) for a, b in zip(c, v, strict=True)) / sum((a - cm) ** 2 for a in c)
    offset = vm - slope * cm
    return [float((b - offset - slope * a) / slope) for a, b in zip(c, v, strict=True)]


def test_missing_and_repeated_codes_by_hand():
    # the 3-bit example with code 2 never read and code 5 read twice (4.8 V and 5.0 V → 4.9 V)
    m = Measurement.from_readings([0, 1, 3, 4, 5, 5, 6, 7], [0, 1.1, 3.1, 4.3, 4.8, 5.0, 6.0, 7.0])
    np.testing.assert_array_equal(m.codes, [0, 1, 3, 4, 5, 6, 7])
    lin = curve_linearity(m.codes, m.volts, 1.0, 8)
    # endpoint line unchanged (codes 0 and 7 present): INL as in the full example without code 2
    np.testing.assert_allclose(lin.inl_endpoint, [0, .1, .1, .3, -.1, 0, 0], atol=1e-12)
    # step 1 → 3 spans two codes: (3.1 − 1.1) / (1 V · 2) − 1 = 0, the mean of DNL(1), DNL(2)
    np.testing.assert_allclose(lin.dnl, [.1, 0.0, .2, -.4, .1, 0], atol=1e-12)
    np.testing.assert_array_equal(lin.dnl_span, [1, 2, 1, 1, 1, 1])
    np.testing.assert_allclose(lin.inl_bestfit, _fraction_bestfit(m.codes, m.volts), atol=1e-12)
    # by hand: sample σ of 4.8 and 5.0 is 0.1·√2; pooled over the one repeated code the same
    assert pooled_noise(m.spread, m.count) == pytest.approx(0.1 * np.sqrt(2))


def test_endpoint_line_uses_the_lowest_measured_code():
    # code 0 missing: line through codes 1 (1.1 V) and 7 (7 V), LSB = 5.9/6 V
    codes = np.arange(1, 8)
    lin = curve_linearity(codes, V3[1:], 1.0, 8)
    lsb = 5.9 / 6
    assert lin.lsb == pytest.approx(lsb)
    np.testing.assert_allclose(lin.inl_endpoint, (V3[1:] - 1.1 - lsb * (codes - 1)) / lsb,
                               atol=1e-12)
    # offset error: the endpoint line extended to code 0, minus the ideal 0 V
    assert lin.offset_error == pytest.approx(1.1 - lsb)
    assert lin.gain_error == pytest.approx(lsb / 1.0 - 1)
    assert lin.gain_error_lsb == pytest.approx((lsb - 1) * 7)


def test_offset_and_gain_error_of_a_full_curve():
    v = 0.02 + np.arange(16) * 0.101  # ideal LSB 0.1 V
    lin = curve_linearity(np.arange(16), v, 0.1, 16)
    assert lin.offset_error == pytest.approx(0.02)
    assert lin.gain_error == pytest.approx(0.01)
    assert lin.gain_error_lsb == pytest.approx(0.15)


def test_unusable_curves():
    with pytest.raises(MeasurementError, match="two different codes"):
        curve_linearity(np.array([3]), np.array([1.0]), 1.0, 8)
    with pytest.raises(MeasurementError, match="equal"):
        curve_linearity(np.array([0, 7]), np.array([1.0, 1.0]), 1.0, 8)


def test_pooled_noise_without_repeats_is_nan():
    assert np.isnan(pooled_noise(np.array([np.nan, np.nan]), np.array([1, 1])))
