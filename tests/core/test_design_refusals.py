"""Bad input is refused by the design with a message naming the field and the allowed range."""

from __future__ import annotations

import math

import pytest

from rungwise.core import Design, DesignError

CASES = [
    # (constructor keywords, field named, words of the allowed range in the message)
    ({"bits": 0}, "bits", "1 to 24"),
    ({"bits": 25}, "bits", "1 to 24"),
    ({"bits": 8.5}, "bits", "1 to 24"),
    ({"bits": "twelve"}, "bits", "1 to 24"),
    ({"unit_r": 0.0}, "unit_r", "≥ 0.001 Ω"),
    ({"unit_r": -10e3}, "unit_r", "≥ 0.001 Ω"),
    ({"unit_r": 5e-324}, "unit_r", "≥ 0.001 Ω and ≤ 1e+12 Ω"),
    ({"unit_r": 2e12}, "unit_r", "≤ 1e+12 Ω"),
    ({"unit_r": "abc"}, "unit_r", "≥ 0.001 Ω"),
    ({"unit_r": math.inf}, "unit_r", "≥ 0.001 Ω"),
    ({"ron_high": -1.0}, "ron_high", "0 (ideal) or ≥ 0.001 Ω"),
    ({"ron_high": 1e-9}, "ron_high", "0 (ideal) or ≥ 0.001 Ω"),
    ({"ron_low": -0.5}, "ron_low", "0 (ideal) or ≥ 0.001 Ω"),
    ({"ref_r": -1.0}, "ref_r", "0 (ideal) or ≥ 0.001 Ω"),
    ({"load_r": 0.0}, "load_r", "≥ 0.001 Ω"),
    ({"load_r": -math.inf}, "load_r", "≥ 0.001 Ω"),
    ({"feedback_r": -1.0}, "feedback_r", "≥ 0.001 Ω"),
    ({"vref": math.nan}, "vref", "1e-06 … 1000 V"),
    ({"vref": math.inf}, "vref", "1e-06 … 1000 V"),
    ({"vref": 1e-9}, "vref", "-1000 … -1e-06 V or 1e-06 … 1000 V"),
    ({"vref": "-2kV"}, "vref", "-1000 … -1e-06 V"),
    ({"vref": "nan"}, "vref", "1e-06 … 1000 V"),
    ({"gain": math.nan}, "gain", "V/V"),
    ({"gain": -1e-6}, "gain", "-1e+06 … -0.001 V/V or 0.001 … 1e+06 V/V"),
    ({"bandwidth": 1e-6}, "bandwidth", "≥ 0.001 Hz"),
    ({"topology": "ladder"}, "topology", "r2r-voltage"),
    ({"topology": "r2r-voltage", "output": "summing-amp"}, "output", "unbuffered, buffer"),
    ({"topology": "binary-weighted", "output": "buffer"}, "output", "terminated-divider"),
    ({"parts": {"bogus": 1e3}}, "parts.bogus", "leg0"),
    ({"topology": "binary-weighted", "parts": {"leg0": 1e3}}, "parts.leg0", "bit0"),
    ({"bits": 4, "parts": {"leg4": 1e3}}, "parts.leg4", "leg3"),
    ({"parts": {"leg0": -3.0}}, "parts.leg0", "≥ 0.001 Ω"),
    ({"parts": {"leg0": 1e-6}}, "parts.leg0", "≥ 0.001 Ω and ≤ 1e+12 Ω"),
    ({"parts": {"leg0": math.nan}}, "parts.leg0", "≥ 0.001 Ω"),
    ({"parts": {"leg0": math.inf}}, "parts.leg0", "≥ 0.001 Ω"),
    ({"parts": {"leg0": "oops"}}, "parts.leg0", "≥ 0.001 Ω"),
]


@pytest.mark.parametrize(("kwargs", "field", "allowed"), CASES)
def test_bad_value_names_field_and_range(kwargs, field, allowed):
    with pytest.raises(DesignError) as info:
        Design(**kwargs)
    assert info.value.field == field
    assert str(info.value).startswith(f"{field}: ")
    assert allowed in str(info.value)


def test_unknown_keys_are_refused_by_name():
    with pytest.raises(DesignError, match="colour") as info:
        Design.from_dict({"topology": "r2r-voltage", "colour": "red"})
    assert info.value.field == "colour"
    with pytest.raises(DesignError) as info:
        Design().with_settings({"speed": "1"})
    assert info.value.field == "speed"
    assert "unit_r" in str(info.value)  # lists the known settings


def test_typed_settings_are_validated_like_constructor_values():
    with pytest.raises(DesignError, match=r"bits: .*1 to 24"):
        Design().with_settings({"bits": "30"})
    with pytest.raises(DesignError, match=r"parts\.term: .*≥ 0.001 Ω"):
        Design().with_settings({"parts.term": "-4k7"})
    assert Design().with_settings({"unit_r": "4k7", "parts.term": "9k1"}).parts["term"] == 9100.0


def test_edges_of_the_ranges_are_accepted():
    assert Design(bits=1).bits == 1
    assert Design(bits=24).bits == 24
    assert Design(ron_high=0.0, ron_low=0.0, ref_r=0.0).ref_r == 0.0
    assert Design(ron_high=1e-3, unit_r=1e-3, load_r=1e-3, parts={"leg0": 1e-3}).unit_r == 1e-3
    assert Design(unit_r=1e12, parts={"leg0": 1e12}, load_r=1e15, ron_low=1e9).unit_r == 1e12
    assert Design(vref=-1e-6, gain=-1e-3).vref == -1e-6
    assert Design(vref=1000.0, gain=1e6, bandwidth=1e-3).vref == 1000.0
    assert math.isinf(Design(load_r="open").load_r)


def test_a_file_from_before_the_ranges_were_narrowed_is_refused_by_key_or_loads():
    # values the older, wider ranges accepted: refused naming the key, its range and the line
    from rungwise.core import designfile

    old = ('format = "rungwise-design"\nversion = 0\n\n[design]\ntopology = "string"\nbits = 3\n'
           'vref = {vref}\nunit_r = {unit_r}\nron_high = 1e-9\n')
    with pytest.raises(DesignError) as info:
        designfile.loads(old.format(vref=3.3, unit_r=1e-4))
    assert info.value.field.endswith("unit_r")
    assert "≥ 0.001 Ω and ≤ 1e+12 Ω" in str(info.value)
    with pytest.raises(DesignError, match=r"vref: .*1e-06 … 1000 V"):
        designfile.loads(old.format(vref=1e-9, unit_r=1e3))
    with pytest.raises(DesignError, match=r"ron_high: .*0 \(ideal\) or ≥ 0.001 Ω"):
        designfile.loads(old.format(vref=3.3, unit_r=1e3))
    good = designfile.loads(old.format(vref=3.3, unit_r=1e3).replace("1e-9", "1e-3"))
    assert good.candidates[0].ron_high == 1e-3


def test_a_name_the_program_gave_follows_the_network_and_a_typed_one_stays():
    unnamed = Design(topology="binary-weighted", bits=6)
    assert unnamed.label == "Binary-weighted (divider, open)"
    assert unnamed.replace(topology="segmented").label == "Segmented ladder (unbuffered)"
    given = unnamed.replace(name="Binary-weighted (divider, open) 2")
    assert given.named_after_network
    moved = given.replace(topology="segmented")
    assert moved.name == ""
    assert moved.label == "Segmented ladder (unbuffered)"
    assert given.replace(output="summing-amp").label == "Binary-weighted (summing amplifier)"
    typed = unnamed.replace(name="Bias trim, rev C")
    assert not typed.named_after_network
    assert typed.replace(topology="string").label == "Bias trim, rev C"
    assert typed.replace(bits=8).label == "Bias trim, rev C"
    assert given.replace(bits=8).name == "Binary-weighted (divider, open) 2"  # not a network change
    older = unnamed.replace(name="binary-weighted (divider)")  # as earlier versions named it
    assert older.replace(topology="string").label == "Resistor string (unbuffered)"
