"""A figure with no meaning for the inputs says why instead of showing a number; drift rows carry
their temperature."""

from __future__ import annotations

import math

from rungwise.core import Design, evaluate
from rungwise.core.figure_meaning import (
    DRIFT_KEYS,
    SETTLING_KEYS,
    figure_note,
    not_meaningful,
    shown,
)


def test_settling_needs_a_load_capacitance():
    bare = evaluate(Design(topology="r2r-voltage", bits=6, unit_r=10e3, load_c=0.0))
    for key in SETTLING_KEYS:
        assert math.isnan(bare.summary[key])  # never 0 s, which would read as instant settling
        assert bare.no_meaning[key] == "no load capacitance given"
    assert not_meaningful(bare.design, "settling_time") == "no load capacitance given"
    loaded = evaluate(Design(topology="r2r-voltage", bits=6, unit_r=10e3, load_c=1e-9))
    assert not set(SETTLING_KEYS) & set(loaded.no_meaning)
    assert loaded.summary["settling_time"] > 0
    assert not_meaningful(loaded.design, "settling_time") is None


def test_settling_behind_an_amplifier_says_it_is_not_modelled():
    for design in (Design(topology="r2r-current", bits=6, load_c=1e-9),
                   Design(bits=6, output="buffer", load_c=1e-9)):
        ev = evaluate(design)
        assert "not modelled" in ev.no_meaning["settling_tau"]
        assert math.isnan(ev.summary["settling_tau"])


def test_drift_rows_need_a_temperature_coefficient_and_show_the_range():
    plain = evaluate(Design(bits=6, board={"temp_low_c": -20, "temp_high_c": 85}))
    assert (plain.summary["drift_low_c"], plain.summary["drift_high_c"]) == (-20.0, 85.0)
    for key in DRIFT_KEYS:
        assert math.isnan(plain.summary[key])  # not the nominal figures repeated
        assert plain.no_meaning[key] == "no temperature coefficient set"
    warm = Design(bits=6, mismatch={"tempco_parts": {"leg5": 50e-6}},
                  board={"temp_low_c": -40, "temp_high_c": 85})
    ev = evaluate(warm)
    assert not set(DRIFT_KEYS) & set(ev.no_meaning)
    assert ev.summary["drift_inl_low"] != ev.summary["max_abs_inl_endpoint"]
    assert figure_note(warm, "drift_inl_low") == "at -40 °C"
    assert figure_note(warm, "drift_offset_high") == "at 85 °C"
    assert figure_note(warm, "lsb") == ""
    at_reference = Design(bits=6, mismatch={"tempco": 50e-6, "reference_c": 30},
                          board={"temp_low_c": 30, "temp_high_c": 30})
    assert not_meaningful(at_reference, "drift_inl_low") == (
        "no part changes value between the range's ends")
    assert not_meaningful(at_reference, "lsb") is None


def test_shown_text():
    assert shown("no load capacitance given") == "no meaning: no load capacitance given"
