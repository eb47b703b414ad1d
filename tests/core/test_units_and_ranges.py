"""Values typed with units: each field reads its own unit in the spellings engineers use, refuses
any other unit naming the field, and every range refusal has one wording."""

from __future__ import annotations

import math

import pytest

from rungwise.core import Design, DesignError
from rungwise.core.design import FIELDS, PART_SPEC
from rungwise.core.mismatch import NUMERIC_SETTINGS
from rungwise.core.parts.board import BOARD_KEYS
from rungwise.core.parts.suggest import LIMIT_SPECS
from rungwise.core.ranges import FRACTION, FieldSpec
from rungwise.core.targets import RUN_SPECS, TARGET_SPECS
from rungwise.core.timing import SINE_KEYS, TIMING_KEYS
from rungwise.core.units import PREFIXES, SPELLINGS, parse_quantity

EVERY_SPEC: dict[str, FieldSpec] = {
    **FIELDS, "parts.leg0": PART_SPEC,
    **{f"mismatch.{k}": s for k, s in NUMERIC_SETTINGS.items()},
    **{f"board.{k}": s for k, s in BOARD_KEYS.items()},
    **{f"targets.{k}": s for k, s in TARGET_SPECS.items()},
    **{f"analysis.{k}": s for k, s in RUN_SPECS.items()},
    **{f"timing.{k}": s for k, s in TIMING_KEYS.items()},
    **{f"sine.{k}": s for k, s in SINE_KEYS.items()},
    **{f"limits.{k}": s for k, s in LIMIT_SPECS.items()},
}


@pytest.mark.parametrize(("text", "unit", "value"), [
    ("4k7", "Ω", 4700.0), ("4R7", "Ω", 4.7), ("4r7", "Ω", 4.7), ("100R", "Ω", 100.0),
    ("10 kΩ", "Ω", 10e3), ("10 kohm", "Ω", 10e3), ("10 Ohm", "Ω", 10.0), ("2.2 ohms", "Ω", 2.2),
    ("10meg", "Ω", 10e6), ("1M", "Ω", 1e6), ("100m", "Ω", 0.1), ("10K", "Ω", 10e3),
    ("3V3", "V", 3.3), ("2.5v", "V", 2.5), ("2.5V", "V", 2.5), ("500 mV", "V", 0.5),
    ("-1V2", "V", -1.2), ("22p", "F", 22e-12), ("22 pF", "F", 22e-12), ("20 kHz", "Hz", 20e3),
    ("25 °C", "°C", 25.0), ("-40", "°C", -40.0), ("2 µm", "m", 2e-6), ("12 bits", "bits", 12.0),
    ("50 ppm/K", "1/K", 50e-6), ("1 %·µm", "fraction·m", 1e-8), ("1e-3", "s", 1e-3),
    ("1 ms", "s", 1e-3), ("open", "Ω", math.inf),
])
def test_each_unit_is_read_in_the_spellings_engineers_use(text, unit, value):
    assert parse_quantity(text, unit) == pytest.approx(value, rel=1e-12)


def test_kelvin_is_read_for_a_celsius_field_and_percent_for_a_fraction():
    # from memory: 0 °C = 273.15 K (SI)
    assert parse_quantity("300 K", "°C") == pytest.approx(26.85, abs=1e-12)
    assert Design(temperature_c="300 K").temperature_c == pytest.approx(26.85, abs=1e-12)
    assert parse_quantity("7 %", "", fraction=True) == 0.07  # exactly, not 0.07000000000000001
    assert parse_quantity("100 ppm", "", fraction=True) == pytest.approx(1e-4, rel=1e-15)
    assert Design(mismatch={"tolerance": "0.1 %"}).mismatch["tolerance"] == pytest.approx(1e-3)


@pytest.mark.parametrize(("key", "text", "given", "takes"), [
    ("vref", "5 A", "amperes", "volts (V)"), ("vref", "5 mA", "amperes", "volts (V)"),
    ("unit_r", "10 V", "volts", "ohms (Ω)"), ("unit_r", "10 kV", "volts", "ohms (Ω)"),
    ("unit_r", "1 %", "a percentage", "ohms (Ω)"), ("ron_high", "40 F", "farads", "ohms (Ω)"),
    ("unit_r", "3V3", "volts", "ohms (Ω)"), ("load_c", "10 nV", "volts", "farads (F)"),
    ("bandwidth", "1 ms", "seconds", "hertz (Hz)"), ("temperature_c", "5 V", "volts", "Celsius"),
])
def test_a_wrong_unit_is_refused_naming_field_unit_and_text(key, text, given, takes):
    with pytest.raises(DesignError) as info:
        Design().with_settings({key: text})
    assert info.value.field == key
    message = str(info.value)
    assert f"{text!r} is" in message
    assert given in message
    assert takes in message


def _foreign_words(spec: FieldSpec) -> list[str]:
    """Unit words of every other unit that are not also a prefix or one of the field's own."""
    own = {sp.word for u in (spec.unit, FRACTION if spec.fraction else spec.unit)
           for sp in SPELLINGS.get(u, ())}
    return sorted({sp.word for u, spellings in SPELLINGS.items() for sp in spellings
                   if u != spec.unit and sp.word not in own and sp.word not in PREFIXES})


@pytest.mark.parametrize("name", sorted(EVERY_SPEC))
def test_every_field_refuses_every_other_unit(name):
    spec = EVERY_SPEC[name]
    value = spec.high if math.isfinite(spec.high) and spec.high < 10 else 1
    for word in _foreign_words(spec):
        text = f"{value:g} {word}"
        with pytest.raises(DesignError) as info:
            spec.check(name, text)
        assert info.value.field == name, text
        assert "but this field takes" in str(info.value), text
        assert "allowed: " in str(info.value), text


@pytest.mark.parametrize("name", sorted(EVERY_SPEC))
def test_every_range_refusal_has_one_wording(name):
    spec = EVERY_SPEC[name]
    above = spec.high * 2 + 1 if spec.high > 0 else spec.high + 1
    if spec.integer:
        above = int(above)
    with pytest.raises(DesignError) as info:
        spec.check(name, above)
    message = str(info.value)
    assert message.startswith(f"{name}: ")
    assert " is out of range; allowed: " in message
    assert message.endswith(spec.describe())
    if spec.fraction:  # says it is a fraction, and the percentage it means
        assert f"({above * 100:g} %) is out of range" in message
        assert "a fraction from " in message
        assert "%" in spec.describe()
    elif spec.unit:
        assert spec.unit in spec.describe()


def test_seeds_keep_every_digit_and_numpy_integers_are_whole_numbers():
    import numpy as np

    assert RUN_SPECS["seed"].check("seed", 2**63 - 1) == 2**63 - 1
    assert RUN_SPECS["seed"].check("seed", np.uint64(2**63 - 1)) == 2**63 - 1
    with pytest.raises(DesignError, match="out of range"):
        RUN_SPECS["seed"].check("seed", 2**63)
    with pytest.raises(DesignError, match="not a whole number"):
        RUN_SPECS["trials"].check("trials", 2.5)


def test_practical_lower_bounds_refuse_the_smallest_double():
    # every positive quantity (resistances, capacitance, bandwidth, |vref|, |gain|) has a
    # practical floor: 5e-324 is refused, never solved
    positive = [k for k, s in FIELDS.items() if not s.integer and (s.low > 0 or s.min_abs)]
    assert {"unit_r", "ron_high", "ref_r", "load_r", "feedback_r", "load_c", "bandwidth", "vref",
            "gain"} <= set(positive)
    for name in positive:
        with pytest.raises(DesignError, match="out of range"):
            FIELDS[name].check(name, 5e-324)
