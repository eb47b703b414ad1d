"""Correction tables: nearest measured level per wanted level, its stated bound, CSV and C exports."""

from __future__ import annotations

import re

import numpy as np
import pytest

from rungwise.core.diagnose import MeasurementError, correction_table, to_c_header, to_csv
from rungwise.core.diagnose.correction import c_identifier

V3 = np.array([0, 1.10, 1.90, 3.10, 4.30, 4.90, 6.00, 7.00])  # REFERENCE-VALUES.md 3-bit example


def test_a_good_curve_maps_every_code_to_itself():
    t = correction_table(np.arange(8), V3)
    np.testing.assert_array_equal(t.code, np.arange(8))
    np.testing.assert_allclose(t.inl_lsb, [0, .1, -.1, .1, .3, -.1, 0, 0], atol=1e-12)
    assert t.skip.size == 0
    assert not t.estimated.any()


def test_non_monotonic_curve_by_hand():
    # V = [0, 1, 2, 3.2, 3.1, 5, 6, 7]: wanted 3 V → code 4 (3.1 V); wanted 4 V → code 3 (3.2 V,
    # 0.8 V low, nearer than 5 V); the largest gap between sorted levels is 3.2 → 5, so the bound
    # is 0.9 LSB (by hand)
    v = np.array([0, 1, 2, 3.2, 3.1, 5, 6, 7])
    t = correction_table(np.arange(8), v)
    np.testing.assert_array_equal(t.code, [0, 1, 2, 4, 3, 5, 6, 7])
    np.testing.assert_allclose(t.inl_lsb, [0, 0, 0, .1, -.8, 0, 0, 0], atol=1e-12)
    assert t.bound_lsb == pytest.approx(0.9)


def test_fewer_levels_by_hand():
    # four levels 0, 7/3, 14/3, 7 V: nearest codes 0, 2 (1.9 V), 5 (4.9 V), 7
    t = correction_table(np.arange(8), V3, n_levels=4)
    np.testing.assert_array_equal(t.code, [0, 2, 5, 7])
    lsb = 7 / 3
    np.testing.assert_allclose(t.inl_lsb, [0, (1.9 - lsb) / lsb, (4.9 - 2 * lsb) / lsb, 0],
                               atol=1e-12)
    np.testing.assert_array_equal(t.skip, [1, 3, 4, 6])


def test_corrected_inl_never_exceeds_the_stated_bound():
    rng = np.random.default_rng(3)
    for trial in range(40):
        n = int(rng.integers(3, 300))
        codes = np.sort(rng.choice(np.arange(2 * n), n, replace=False))
        v = codes * 0.01 + rng.normal(0, 0.01 * rng.uniform(0, 1.5), n)
        if trial % 2:
            v = -v
        levels = None if trial % 3 else int(rng.integers(2, 2 * n))
        try:
            t = correction_table(codes, v, levels)
        except MeasurementError:
            continue
        assert t.max_abs_inl <= t.bound_lsb + 1e-9
        # and the bound is half the largest gap between neighbouring measured levels
        inside = np.sort(v[(v >= min(v[0], v[-1])) & (v <= max(v[0], v[-1]))])
        assert t.bound_lsb == pytest.approx(0.5 * np.diff(inside).max() / abs(t.lsb))


def test_estimates_of_missing_codes_fill_gaps_and_are_marked():
    codes = np.array([0, 1, 4, 5, 6, 7])
    t = correction_table(codes, V3[codes], extra_codes=np.array([2, 3]),
                         extra_volts=np.array([2.0, 3.0]))
    np.testing.assert_array_equal(t.code, np.arange(8))
    np.testing.assert_array_equal(t.estimated, [0, 0, 1, 1, 0, 0, 0, 0])


def test_csv_and_c_header_round_trip():
    t = correction_table(np.arange(300), np.arange(300) * 1e-3 + 5e-4 * np.sin(np.arange(300)))
    rows = to_csv(t).splitlines()
    assert rows[0] == "wanted_index,wanted_volts,code,output_volts,error_lsb,estimated"
    assert [int(r.split(",")[2]) for r in rows[1:]] == t.code.tolist()
    header = to_c_header(t, "corr-board 7", note="measured: */ board.csv")
    table, skip = re.findall(r"\{(.*?)\};", header, re.S)
    assert [int(x) for x in table.replace("\n", " ").split(",") if x.strip()] == t.code.tolist()
    assert [int(x) for x in skip.replace("\n", " ").split(",") if x.strip()] == t.skip.tolist()
    assert "static const uint16_t corr_board_7[CORR_BOARD_7_LEN]" in header
    assert "#define CORR_BOARD_7_LEN 300u" in header
    assert "/ board.csv" in header
    assert "*/ board.csv" not in header
    assert c_identifier("8bit") == "t_8bit"
    assert "_skip" not in to_c_header(correction_table(np.arange(8), V3))  # every code used


def test_c_header_lists_the_codes_to_skip():
    t = correction_table(np.arange(8), V3, n_levels=4)
    header = to_c_header(t, "fix")
    assert "static const uint8_t fix_skip[FIX_SKIP_LEN] = {" in header
    assert "#define FIX_SKIP_LEN 4u" in header
    assert "    1, 3, 4, 6," in header


def test_bad_requests():
    with pytest.raises(MeasurementError, match="levels"):
        correction_table(np.arange(8), V3, n_levels=1)
    with pytest.raises(MeasurementError, match="two codes"):
        correction_table(np.array([0, 1]), np.array([1.0, 1.0]))
