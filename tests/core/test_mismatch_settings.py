"""The ``mismatch`` and ``build`` tables: validation, files, settings, part counts and sampling."""

from __future__ import annotations

import numpy as np
import pytest

from rungwise.core import Design, DesignError, designfile, evaluate, monte_carlo
from rungwise.core.mismatch import MismatchModel, nominal_ohms, sample_ohms
from rungwise.core.topologies import build


@pytest.mark.parametrize(("table", "value", "field", "words"), [
    ("mismatch", {"tolerance": 0.7}, "mismatch.tolerance", "a fraction from 0 to 0.5 (0 % to 50 %)"),
    ("mismatch", {"tolerance": -0.01}, "mismatch.tolerance", "-0.01 (-1 %) is out of range"),
    ("mismatch", {"coverage_sigma": 0}, "mismatch.coverage_sigma", "≥ 0.5 σ"),
    ("mismatch", {"distribution": "normal"}, "mismatch.distribution", "uniform"),
    ("mismatch", {"model": "chip"}, "mismatch.model", "on-chip"),
    ("mismatch", {"tolerence": 0.01}, "mismatch.tolerence", "known keys"),
    ("mismatch", {"unit_width": 0}, "mismatch.unit_width", "≥ 1e-09 m"),
    ("mismatch", {"unit_length": 5e-324}, "mismatch.unit_length", "≥ 1e-09 m"),
    ("mismatch", {"tempco_parts": {"leg9": 1e-4}}, "mismatch.tempco_parts.leg9", "unknown part"),
    ("mismatch", {"reference_c": "abc"}, "mismatch.reference_c", "cannot read"),
    ("mismatch", "loose", "mismatch", "table"),
    ("build", {"binary": "units"}, "build.binary", "unit-array"),
    ("build", {"two_r": "double"}, "build.two_r", "two-units"),
    ("build", {"three_r": "single"}, "build.three_r", "known keys"),
])
def test_bad_sub_keys_are_named_with_their_range(table, value, field, words):
    with pytest.raises(DesignError) as info:
        Design.from_dict({"topology": "r2r-voltage", "bits": 4, table: value})
    assert info.value.field == field
    assert words in str(info.value)


def test_values_are_read_in_engineering_notation_and_defaults_fill_in():
    d = Design(mismatch={"tolerance": "0.1 %", "tempco": "25 ppm", "distribution": "uniform"})
    m = MismatchModel.of(d)
    assert m.tolerance == pytest.approx(0.001)
    assert m.tempco == pytest.approx(25e-6)
    assert (m.distribution, m.coverage_sigma, m.model, m.reference_c) == ("uniform", 3.0, "parts", 25)


def test_tables_survive_the_design_file_and_settings():
    d = Design(topology="binary-weighted", bits=6, build={"binary": "unit-array"},
               mismatch={"tolerance": 0.002, "tempco_parts": {"bit5": 1e-4}})
    back = designfile.loads(designfile.dumps(designfile.DesignFile([d]))).candidates[0]
    assert back == d
    changed = d.with_settings({"mismatch.tolerance": "1 %", "build.binary": "per-bit",
                               "mismatch.tempco_parts.bit0": "50 ppm"})
    assert changed.mismatch["tolerance"] == pytest.approx(0.01)
    assert changed.mismatch["tempco_parts"] == {"bit5": 1e-4, "bit0": pytest.approx(5e-5)}
    assert changed.build == {"binary": "per-bit"}
    with pytest.raises(DesignError) as info:
        d.with_settings({"mismatch.tolerance": "60 %"})
    assert info.value.field == "mismatch.tolerance"
    # changing the resolution drops per-part tempcos whose ids may no longer exist
    assert "tempco_parts" not in d.replace(bits=4).mismatch


@pytest.mark.parametrize(("design", "resistors", "distinct"), [
    (Design(topology="binary-weighted", output="divider", bits=8), 8, 8),
    (Design(topology="binary-weighted", output="divider", bits=8, build={"binary": "unit-array"}),
     255, 1),
    (Design(topology="binary-weighted", output="terminated-divider", bits=5,
            build={"binary": "unit-array"}), 32, 1),
    (Design(topology="r2r-voltage", bits=8), 16, 2),
    (Design(topology="r2r-voltage", bits=8, build={"two_r": "two-units"}), 7 + 2 * 9, 1),
    (Design(topology="r2r-current", bits=4, build={"two_r": "two-units"}), 3 + 2 * 5 + 1, 1),
])
def test_build_styles_change_the_part_count(design, resistors, distinct):
    # common practice: a unit-element binary array has 2^N − 1 units; 2R as two R in series
    s = evaluate(design).summary
    assert s["n_resistors"] == resistors
    assert s["n_distinct_values"] == distinct


def test_build_style_keeps_the_ideal_transfer():
    a = evaluate(Design(topology="binary-weighted", bits=6))
    b = evaluate(Design(topology="binary-weighted", bits=6, build={"binary": "unit-array"}))
    np.testing.assert_allclose(a.vout, b.vout, rtol=1e-15)
    assert a.summary["total_r_units"] < b.summary["total_r_units"]


def test_units_are_sampled_one_by_one_and_combined():
    # unit-array bit 7 = 128 units in parallel: its relative σ is σ_unit/√128 (common practice)
    d = Design(topology="binary-weighted", bits=8, build={"binary": "unit-array"},
               mismatch={"tolerance": 0.03, "coverage_sigma": 3})
    net = build(d)
    ohms = sample_ohms(d, net, np.random.default_rng(0), 4000)
    nominal = nominal_ohms(d, net)
    rel7 = ohms["bit7"][:, 0] / nominal["bit7"] - 1
    rel0 = ohms["bit0"][:, 0] / nominal["bit0"] - 1
    assert ohms["bit7"].shape == (4000, 1)
    assert np.std(rel0) == pytest.approx(0.01, rel=0.05)
    assert np.std(rel7) == pytest.approx(0.01 / np.sqrt(128), rel=0.05)


def test_uniform_grade_stays_within_tolerance_and_array_error_is_shared():
    d = Design(topology="r2r-voltage", bits=4, mismatch={"distribution": "uniform", "tolerance": 0.01})
    ohms = sample_ohms(d, build(d), np.random.default_rng(1), 5000)
    rel = ohms["leg0"][:, 0] / 20e3 - 1
    assert -0.01 <= rel.min() < -0.0099
    assert 0.0099 < rel.max() <= 0.01
    shared = Design(topology="r2r-voltage", bits=4,
                    mismatch={"model": "array", "shared_tolerance": 0.03, "tolerance": 0.0})
    ohms = sample_ohms(shared, build(shared), np.random.default_rng(1), 100)
    np.testing.assert_allclose(ohms["leg0"] / 20e3, ohms["series0"] / 10e3, rtol=1e-14)
    assert np.std(ohms["leg0"] / 20e3) > 0.005


def test_temperature_follows_the_linear_law():
    # common practice: R(T) = R0(1 + α(T − T0)); 10 kΩ, 100 ppm/K, 25 → 85 °C gives 10.060 kΩ
    d = Design(topology="r2r-voltage", bits=4, unit_r=10e3, temperature_c=85,
               mismatch={"tempco_parts": {"series0": 100e-6}, "reference_c": 25})
    assert nominal_ohms(d, build(d))["series0"] == pytest.approx(10.060e3, rel=1e-12)


def test_equal_tempcos_leave_the_ladder_exact_and_unequal_ones_do_not():
    # common practice: equal coefficients on every resistor leave the R-2R transfer unchanged
    same = Design(topology="r2r-voltage", bits=6, temperature_c=125,
                  mismatch={"tolerance": 0.0, "tempco": 100e-6})
    r = monte_carlo(same, 2, seed=0)
    np.testing.assert_allclose(r.max_abs_inl_endpoint, 0.0, atol=1e-12)
    np.testing.assert_allclose(r.gain_error, 0.0, atol=1e-12)
    skew = same.replace(mismatch={**same.to_dict()["mismatch"], "tempco_parts": {"leg5": -200e-6}})
    assert monte_carlo(skew, 2, seed=0).max_abs_dnl[0] > 0.1


def test_an_area_law_spread_below_zero_ohms_names_the_area_coefficient():
    design = Design(bits=4, mismatch={"model": "on-chip", "unit_width": 1e-9, "unit_length": 1e-9,
                                      "area_coefficient": 1e-5})
    with pytest.raises(DesignError) as info:
        monte_carlo(design, 50, seed=1)
    assert info.value.field == "mismatch.area_coefficient"


def _drawn_part_by_part(design, net, rng, n):
    """The reference order: for each part in turn, its units' errors (parts of a run drawn
    together are the same numbers, since the generator fills arrays in C order)."""
    model = MismatchModel.of(design)
    scale = model.tolerance / model.coverage_sigma
    out = {}
    parts = list(net.parts)
    first = 0
    while first < len(parts):
        kind = (parts[first].units, parts[first].joined)
        last = first + 1
        while last < len(parts) and (parts[last].units, parts[last].joined) == kind:
            last += 1
        err = scale * rng.standard_normal((last - first, n, kind[0]))
        for p, e in zip(parts[first:last], err, strict=True):
            unit = p.ohms * p.units if p.joined == "parallel" else (
                p.ohms / p.units if p.joined == "series" else p.ohms)
            v = unit * (1.0 + e)
            out[p.part_id] = (1.0 / np.sum(1.0 / v, axis=1, keepdims=True) if p.joined == "parallel"
                              else np.sum(v, axis=1, keepdims=True) if p.joined == "series" else v)
        first = last
    return out


def test_array_held_parts_are_sampled_without_an_object_per_part():
    # a string (one array block) and a unit-array segmented design (array block + plain parts):
    # the same numbers as the part-by-part order, and the string's part list never made its
    # 1,024 Part objects
    for d in (Design(topology="string", bits=10, mismatch={"tolerance": 0.01, "distribution": "gaussian"}),
              Design(topology="segmented", bits=8, thermometer_bits=3, build={"lsb_section": "unit-array"},
                     mismatch={"tolerance": 0.01, "distribution": "gaussian"})):
        net = build(d)
        got = sample_ohms(d, net, np.random.default_rng(5), 3)
        if d.topology == "string":
            assert net.parts._items is None
        want = _drawn_part_by_part(d, build(d), np.random.default_rng(5), 3)
        assert list(got) == list(want)
        for pid in want:
            np.testing.assert_allclose(got[pid], want[pid], rtol=1e-15, err_msg=pid)
