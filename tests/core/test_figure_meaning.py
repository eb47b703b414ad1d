"""Figures with no meaning for the inputs are named, with the reason; drift rows carry their end."""

from __future__ import annotations

from rungwise.core import Design, evaluate
from rungwise.core.figure_meaning import figure_note, not_meaningful


def test_settling_needs_a_load_capacitance():
    ev = evaluate(Design(topology="r2r-voltage", bits=6, load_c=0.0))
    assert ev.summary["settling_time"] == 0.0  # the engine's number, which reads as instant
    assert not_meaningful(ev.design, "settling_time", ev.summary) == "no load capacitance given"
    loaded = evaluate(Design(topology="r2r-voltage", bits=6, load_c=1e-9))
    assert loaded.summary["settling_time"] > 0
    assert not_meaningful(loaded.design, "settling_time", loaded.summary) is None


def test_settling_behind_an_amplifier_says_it_is_not_modelled():
    ev = evaluate(Design(topology="r2r-current", bits=6, load_c=1e-9))
    assert "not modelled" in not_meaningful(ev.design, "settling_tau", ev.summary)


def test_drift_needs_a_temperature_coefficient_and_shows_its_temperature():
    plain = evaluate(Design(bits=6))
    assert plain.summary["drift_inl_low"] == plain.summary["max_abs_inl_endpoint"]
    assert not_meaningful(plain.design, "drift_inl_low") == "no temperature coefficient set"
    warm = Design(bits=6, mismatch={"tempco_parts": {"leg5": 50e-6}},
                  board={"temp_low_c": -40, "temp_high_c": 85})
    ev = evaluate(warm)
    assert ev.summary["drift_inl_low"] != ev.summary["max_abs_inl_endpoint"]
    assert not_meaningful(warm, "drift_inl_low") is None
    assert figure_note(warm, "drift_inl_low") == "at -40 °C"
    assert figure_note(warm, "drift_offset_high") == "at 85 °C"
    assert figure_note(warm, "lsb") == ""
