"""Reading measurement files: every accepted notation, and a clear error for anything else."""

from __future__ import annotations

import contextlib
import math

import numpy as np
import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from rungwise.core.diagnose import reading
from rungwise.core.diagnose.reading import (
    Measurement,
    MeasurementError,
    parse_code,
    parse_text,
    read_measurement,
)
from rungwise.core.errors import RungwiseError


def test_measurement_error_is_ours():
    assert issubclass(MeasurementError, RungwiseError)
    err = MeasurementError("bad", line=7, source="x.csv")
    assert str(err) == "x.csv, line 7: bad"
    assert err.line == 7


def test_plain_csv_without_header():
    m = parse_text("0,0.0\n1,0.5\n2,1.0\n")
    np.testing.assert_array_equal(m.codes, [0, 1, 2])
    np.testing.assert_allclose(m.volts, [0.0, 0.5, 1.0])
    assert np.all(np.isnan(m.spread))
    assert m.n_readings == 3


@pytest.mark.parametrize(("text", "code", "bits"), [
    ("37", 37, 0), ("0x25", 37, 0), ("0X25", 37, 0), ("25h", 37, 0), ("25H", 37, 0),
    ("0b100101", 37, 6), ("0b0010_0101", 37, 8), ("1_000", 1000, 0), ("+5", 5, 0),
])
def test_code_notations(text, code, bits):
    assert parse_code(text) == (code, bits)


def test_plain_zeros_and_ones_are_decimal_without_a_binary_header():
    assert parse_code("101") == (101, 0)
    assert parse_code("101", base=2) == (5, 3)
    assert parse_code("ff", base=16) == (255, 0)


@pytest.mark.parametrize("bad", ["", "-1", "1.5", "0x", "0b102", "abc", "1e3", "0xG"])
def test_unreadable_codes(bad):
    with pytest.raises(ValueError, match="unreadable code"):
        parse_code(bad)


def test_units_on_values_and_in_the_header():
    text = "code;output (mV)\n0;1,5\n1;2.5 mV\n2;0.004 V\n3;4000 µV\n4;5000uV\n"
    m = parse_text(text)
    np.testing.assert_allclose(m.volts, [1.5e-3, 2.5e-3, 4e-3, 4e-3, 5e-3], rtol=1e-12)


def test_whitespace_file_with_unit_as_its_own_field():
    m = parse_text("# meter log\n0   12.5 mV\n1\t\t25.0 mV\n".replace("\t\t", "   "))
    np.testing.assert_allclose(m.volts, [12.5e-3, 25e-3])


def test_header_picks_columns_by_name_and_ignores_others():
    text = "time_s,code_bin,vout_mV,temp\n0.0,000,0.0,25\n0.1,011,3.0,25\n0.2,111,7.1,25\n"
    m = parse_text(text)
    np.testing.assert_array_equal(m.codes, [0, 3, 7])
    np.testing.assert_allclose(m.volts, [0.0, 3e-3, 7.1e-3])
    assert m.code_bits == 3


def test_hex_header_reads_bare_hex_digits():
    m = parse_text("code_hex volts\nff 1.0\n0a 0.1\n")
    np.testing.assert_array_equal(m.codes, [10, 255])


def test_repeats_are_averaged_with_their_spread_kept_and_missing_codes_allowed():
    text = "code,v\n0,0.0\n3,3.0\n3,3.2\n3,3.1\n7,7.0\n"
    m = parse_text(text)
    np.testing.assert_array_equal(m.codes, [0, 3, 7])
    np.testing.assert_array_equal(m.count, [1, 3, 1])
    np.testing.assert_allclose(m.volts, [0.0, 3.1, 7.0])
    # sample standard deviation of 3.0, 3.2, 3.1 is 0.1 (by hand)
    assert m.spread[1] == pytest.approx(0.1, rel=1e-12)
    assert math.isnan(m.spread[0])


def test_comment_after_a_reading_and_bom():
    m = parse_text("\ufeffcode,v # first\n0,0.1 # zero\n\n1,0.2\n")
    np.testing.assert_allclose(m.volts, [0.1, 0.2])


@pytest.mark.parametrize(("text", "line", "words"), [
    ("0,0.1\n1,abc\n", 2, "cannot read the output"),
    ("0,0.1\nx1,0.2\n", 2, "cannot read the code"),
    ("0,0.1\n1,0.2,0.3\n", 2, "two fields"),
    ("code,v\n0,0.1\n1\n", 3, "at least 2 fields"),
    ("0,0.1\n1,nan\n", 2, "finite"),
    ("0,0.1\n1,1e999\n", 2, "finite"),
    ("0,0.1\n1,5 kV\n", 2, "unit"),
    ("0,0.1\n0x1000000,1\n", 2, "wider than 24 bits"),
    ("hello\n", 1, "header"),
])
def test_errors_name_the_line(text, line, words):
    with pytest.raises(MeasurementError) as info:
        parse_text(text, source="m.csv")
    assert info.value.line == line
    assert words in str(info.value)
    assert str(info.value).startswith(f"m.csv, line {line}: ")


def test_empty_and_comment_only_files():
    for text in ("", "# nothing\n\n", "code,v\n"):
        with pytest.raises(MeasurementError, match="no readings"):
            parse_text(text)


def test_size_limits(monkeypatch, tmp_path):
    monkeypatch.setattr(reading, "MAX_READINGS", 3)
    with pytest.raises(MeasurementError, match="more than 3 readings") as info:
        parse_text("0,1\n1,1\n2,1\n3,1\n")
    assert info.value.line == 4
    monkeypatch.setattr(reading, "MAX_FILE_BYTES", 10)
    path = tmp_path / "big.csv"
    path.write_text("0,0.0\n1,0.5\n2,1.0\n")
    with pytest.raises(MeasurementError, match="at most"):
        read_measurement(path)


def test_file_errors(tmp_path):
    with pytest.raises(MeasurementError, match="does not exist"):
        read_measurement(tmp_path / "none.csv")
    binary = tmp_path / "scope.bin"
    binary.write_bytes(b"\x00\x01\x02code")
    with pytest.raises(MeasurementError, match="binary file"):
        read_measurement(binary)
    latin = tmp_path / "latin.csv"
    latin.write_bytes("code;output (\u00b5V)\n0;5\n".encode("latin-1"))
    assert read_measurement(latin).volts[0] == pytest.approx(5e-6)


def test_from_readings_matches_a_loop():
    rng = np.random.default_rng(1)
    codes = rng.integers(0, 20, 200)
    volts = rng.normal(size=200)
    m = Measurement.from_readings(codes, volts)
    for c, mean, sd, k in zip(m.codes, m.volts, m.spread, m.count, strict=True):
        sel = volts[codes == c]
        assert k == sel.size
        assert mean == pytest.approx(sel.mean(), abs=1e-12)
        if k > 1:
            assert sd == pytest.approx(sel.std(ddof=1), rel=1e-9)


# --- malformed input never raises anything but MeasurementError --------------------------------

_TOKENS = st.sampled_from(["0", "1", "255", "0x1F", "1Fh", "0b101", "101", "-3", "1.5", "12,5",
                           "mV", "V", "µV", "kV", "nan", "inf", "1e999", "code", "code_bin",
                           "vout_mV", "hex", "#", "", " ", "\t", ",", ";", "\n", "\r\n", "é",
                           "\x00", "'", '"', "_", "9" * 30, "0x" + "f" * 30])


@settings(max_examples=300, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(st.lists(_TOKENS, max_size=40).map("".join))
def test_fuzzed_token_soup_only_raises_our_error(text):
    try:
        m = parse_text(text)
    except MeasurementError:
        return
    assert m.codes.size >= 1
    assert np.all(np.isfinite(m.volts))


@settings(max_examples=200, deadline=None)
@given(st.text(max_size=300))
def test_fuzzed_text_only_raises_our_error(text):
    with contextlib.suppress(MeasurementError):
        parse_text(text)


@settings(max_examples=100, deadline=None)
@given(st.binary(max_size=300))
def test_fuzzed_bytes_only_raise_our_error(data):
    import tempfile
    from pathlib import Path

    with tempfile.TemporaryDirectory() as folder:
        path = Path(folder) / "m.csv"
        path.write_bytes(data)
        with contextlib.suppress(MeasurementError):
            read_measurement(path)


def test_outputs_beyond_a_megavolt_are_refused():
    with pytest.raises(MeasurementError, match="within ±1e\\+06 V") as info:
        parse_text("0,0\n1,2e6\n")
    assert info.value.line == 2
    with pytest.raises(MeasurementError, match="beyond"):
        Measurement.from_readings([0, 1], [0.0, -3e6])
