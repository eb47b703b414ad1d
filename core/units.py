"""Engineering-notation parsing of values typed by a person (formatting: :mod:`.formatting`).

A value for a field is read with the field's unit (:func:`parse_quantity`): ``10k``, ``4k7``,
``4R7``/``4r7`` (ohms), ``10 kΩ``, ``10 kohm``, ``3V3``, ``2.5v``, ``100m`` (milli), ``1M`` or
``1meg`` (mega), ``300 K`` for a temperature in °C, ``0.1 %`` or ``1000 ppm`` for a fraction. A
unit other than the field's (``5 A`` for a voltage, ``1 %`` for a resistance) is refused, naming
the field, the unit it takes and the text given.
"""

from __future__ import annotations

import math
import re
from dataclasses import dataclass

from .formatting import format_si as format_value  # noqa: F401  (kept under its old name)

PREFIXES: dict[str, float] = {
    "f": 1e-15, "p": 1e-12, "n": 1e-9, "u": 1e-6, "µ": 1e-6, "μ": 1e-6, "m": 1e-3,
    "": 1.0, "k": 1e3, "K": 1e3, "M": 1e6, "meg": 1e6, "Meg": 1e6, "MEG": 1e6, "G": 1e9,
    "T": 1e12,
}
"""SI prefixes and their multipliers (``M`` and ``meg`` are mega, ``m`` milli)."""


@dataclass(frozen=True)
class Spelling:
    """One way of writing a unit after a number: value = number × prefix / ``divide`` + ``offset``
(dividing keeps ``7 %`` exactly 0.07)."""

    word: str
    divide: float = 1.0
    offset: float = 0.0
    prefix_ok: bool = True


def _words(*words: str) -> tuple[Spelling, ...]:
    return tuple(Spelling(w) for w in words)


SPELLINGS: dict[str, tuple[Spelling, ...]] = {
    "Ω": _words("Ω", "\u2126", "ohms", "ohm", "Ohms", "Ohm", "OHM", "R", "r"),
    "V": _words("V", "v", "volts", "volt"),
    "A": _words("A", "amps", "amp"),
    "W": _words("W", "watts", "watt"),
    "F": _words("F"),
    "Hz": _words("Hz", "hz", "HZ"),
    "s": _words("s", "sec"),
    "°C": (*_words("°C", "℃", "degC", "C"), Spelling("K", offset=-273.15, prefix_ok=False)),
    "m": _words("m"),
    "V/V": _words("V/V"),
    "bits": _words("bits", "bit"),
    "LSB": _words("LSB", "lsb"),
    "σ": _words("σ", "sigma"),
    "1/K": (*_words("1/K", "/K"), *(Spelling(w, 1e6, prefix_ok=False)
                                   for w in ("ppm/K", "ppm/°C", "ppm"))),
    "fraction·m": tuple(Spelling(w, 1e8, prefix_ok=False) for w in ("%·µm", "%µm", "%um", "%·um")),
    "fraction": (Spelling("%", 100.0, prefix_ok=False), Spelling("ppm", 1e6, prefix_ok=False)),
}
"""Unit (as ``FieldSpec.unit`` names it; ``fraction`` for a plain ratio) → its accepted spellings."""

UNIT_NAMES = {"Ω": "ohms (Ω)", "V": "volts (V)", "A": "amperes (A)", "W": "watts (W)",
              "F": "farads (F)", "Hz": "hertz (Hz)", "s": "seconds (s)",
              "°C": "degrees Celsius (°C, or K)", "m": "metres (m)", "V/V": "a plain ratio (V/V)",
              "1/K": "1/K (or ppm/K)", "fraction·m": "fraction·m (or %·µm)",
              "fraction": "a fraction (0.01 = 1 %) or a percentage with %"}
"""How a message names the unit a field takes."""

_NUMBER = r"[+-]?(?:\d+(?:\.\d*)?|\.\d+)(?:[eE][+-]?\d+)?"
_PREFIX = "|".join(sorted((re.escape(p) for p in PREFIXES if p), key=len, reverse=True))
_PLAIN = re.compile(rf"^({_NUMBER})\s*({_PREFIX})?$")
_INFIX = re.compile(rf"^([+-]?\d+)({_PREFIX}|[A-Za-zΩ])(\d+)$")


def _read_number(text: str, infix: set[str]) -> float | None:
    """``text`` (no unit) as a number with an optional prefix, or ``4k7``-style; else None."""
    m = _PLAIN.match(text)
    if m:
        return float(m[1]) * PREFIXES[m[2] or ""]
    m = _INFIX.match(text)
    if m and (m[2] in PREFIXES or m[2] in infix):
        return float(f"{m[1]}.{m[3]}") * PREFIXES.get(m[2], 1.0)
    return None


def _read_in(text: str, unit: str) -> float | None:
    """``text`` read as a value in ``unit`` (SI), or None when it is not written in that unit."""
    spellings = SPELLINGS.get(unit, ())
    for sp in sorted(spellings, key=lambda s: len(s.word), reverse=True):  # the unit word wins:
        if text.endswith(sp.word) and len(text) > len(sp.word):           # "300 K" is kelvin
            rest = text[: -len(sp.word)].rstrip()
            x = _read_number(rest, set()) if sp.prefix_ok else (
                float(rest) if re.fullmatch(_NUMBER, rest) else None)
            if x is not None:
                return x / sp.divide + sp.offset
    if unit == "fraction":
        return None
    return _read_number(text, {s.word for s in spellings if len(s.word) == 1 and s.word.isalpha()})


SPECIAL_WORDS = {"inf": math.inf, "open": math.inf, "infinity": math.inf, "∞": math.inf,
                 "none": math.inf, "-inf": -math.inf, "-infinity": -math.inf, "-∞": -math.inf,
                 "nan": math.nan}
"""Words read as numbers (``open`` for no load; ``-inf`` is how files write an open lower rail)."""


def parse_quantity(text: str | float | int, unit: str, field: str = "value",
                   fraction: bool = False) -> float:
    """Parse ``text`` as a value of a field whose unit is ``unit`` (SI result).

    Parameters
    ----------
    text : str or number
        A number is taken as it is (SI). Text: ``"4k7"`` → 4700.0, ``"10 kΩ"``, ``"3V3"`` → 3.3,
        ``"300 K"`` (for °C) → 26.85, ``"0.1 %"`` (fractions) → 0.001, ``"open"`` → ``inf``.
    unit : str
        The field's unit (a key of :data:`SPELLINGS`, or ``""`` for a plain number).
    fraction : bool
        The field is a ratio: a plain number is a fraction, ``%`` and ``ppm`` are accepted.

    Raises
    ------
    DesignError
        Named ``field``: not a number, or written in another unit (the message names the unit
        the field takes and the text given).
    """
    from .errors import DesignError

    if isinstance(text, bool):
        raise DesignError(field, f"expected a number, got {text!r}")
    if isinstance(text, int | float):
        try:
            return float(text)
        except OverflowError:
            raise DesignError(field, f"{text} is too large to be a number") from None
    s = str(text).strip().replace("\u2009", " ").replace("\u00a0", " ")
    if s.lower() in SPECIAL_WORDS:
        return SPECIAL_WORDS[s.lower()]
    x = _read_in(s, "fraction" if fraction else unit)
    if fraction and x is None:
        x = _read_in(s, unit)
    if x is not None:
        return x
    takes = UNIT_NAMES.get("fraction" if fraction else unit, unit or "a plain number")
    for other in SPELLINGS:
        if other not in (unit, "fraction" if fraction else unit) and _read_in(s, other) is not None:
            given = "a percentage" if other == "fraction" else f"in {UNIT_NAMES.get(other, other)}"
            raise DesignError(field, f"{text!r} is {given}, but this field takes {takes}")
    raise DesignError(field, f"cannot read {text!r} as a number in {takes} (examples: "
                      f"{_EXAMPLES.get('fraction' if fraction else unit, '10k, 4k7, 100m')})")


_EXAMPLES = {"Ω": "10k, 4k7, 4R7, 10 kΩ, 1meg", "V": "3.3, 3V3, 2.5v, 500 mV",
             "F": "22p, 22 pF", "Hz": "1M, 20 kHz", "°C": "25, 25 °C, 300 K",
             "fraction": "0.01, 1 %, 100 ppm", "1/K": "50e-6, 50 ppm/K"}


def parse_value(text: str | float | int, field: str = "value") -> float:
    """Parse a plain number or fraction typed without a field's unit: ``"100m"`` → 0.1,
    ``"0.1 %"`` → 0.001, ``"100 ppm"`` → 1e-4. A unit word is refused (use :func:`parse_quantity`
    with the field's unit)."""
    return parse_quantity(text, "", field, fraction=True)
