"""The one way a value with a unit becomes text for a person: window, command line, exports, report.

Rules (one place, so every surface agrees):

- **digits** — :data:`DIGITS` significant digits for every figure read by a person;
  :data:`EDIT_DIGITS` for a value put back into an edit field (it must parse back exactly); plain
  decimals, never scientific notation (a large figure keeps its whole digits: ``63800 LSB``);
- **SI units** (:data:`SI_UNITS`: V, A, W, Ω, s, F, Hz, V/√Hz …) get an engineering prefix:
  ``0.01289 V`` → ``12.89 mV``;
- **fractions** (unit ``"fraction"`` or ``"%"``: gain error, tolerances, yields) are shown in
  percent: ``-0.09104`` → ``-9.104 %``; with unit ``"ppm/K"`` (temperature coefficients) in parts
  per million: ``25e-6`` → ``25 ppm/K``;
- **other units** (LSB, R, °C, bits …) follow the number unprefixed; ``×`` is written against it
  (``9.5×``); an integer with no unit (counts, codes) is written whole;
- **minus** is the ASCII hyphen (text can be pasted back into a field);
- **yes / no** for truths, always lower case; **—** (:data:`NO_VALUE`) for a value that is missing
  or not a number; ``∞`` for an infinite one.
"""

from __future__ import annotations

import math
from typing import Any

import numpy as np

DIGITS = 4
"""Significant digits of every figure a person reads."""

EDIT_DIGITS = 6
"""Significant digits of a value written into an edit field (parses back to the same value)."""

NO_VALUE = "—"
"""Shown where there is no value (missing, or not a number)."""

YES, NO = "yes", "no"
"""The one spelling of a truth value."""

SI_UNITS = frozenset({"V", "A", "W", "Ω", "s", "F", "H", "Hz", "V/√Hz", "A/√Hz", "J", "V·s"})
"""Units written with an engineering prefix (k, M, m, µ …)."""

PERCENT_UNITS = frozenset({"fraction", "%"})
"""Units of a value held as a fraction (0.01) and shown in percent (1 %)."""

PPM_UNITS = frozenset({"ppm", "ppm/K"})
"""Units of a value held as a fraction (per kelvin) and shown in parts per million."""

MAX_PLACES = 24
"""Most digits written after the decimal point (a smaller value reads 0)."""

_PREFIXES = [(1e12, "T"), (1e9, "G"), (1e6, "M"), (1e3, "k"), (1.0, ""), (1e-3, "m"),
             (1e-6, "µ"), (1e-9, "n"), (1e-12, "p"), (1e-15, "f")]


def display_unit(unit: str) -> str:
    """The unit as a column heading shows it: ``"%"`` for a fraction, else ``unit``."""
    return "%" if unit in PERCENT_UNITS else unit


def _decimal(x: float, digits: int, signed: bool = False) -> str:
    """``x`` rounded to ``digits`` significant digits, in plain decimal (no exponent, no trailing
    zeros after the point)."""
    if x == 0:
        return "0"
    places = max(0, digits - 1 - math.floor(math.log10(abs(x))))
    places = min(places, MAX_PLACES)
    text = f"{x:{'+' if signed else ''}.{places}f}"
    if "." in text:
        text = text.rstrip("0").rstrip(".")
    return "0" if text in {"-0", "+0"} else text


def yes_no(flag: Any) -> str:
    """``"yes"`` or ``"no"``."""
    return YES if flag else NO


def format_si(value: Any, unit: str = "", digits: int = DIGITS, signed: bool = False) -> str:
    """``value`` with an engineering prefix: ``format_si(4700, "Ω")`` → ``"4.7 kΩ"``; ``signed``
    writes ``+`` before a positive value."""
    if value is None:
        return NO_VALUE
    v = float(value)
    if math.isnan(v):
        return NO_VALUE
    if math.isinf(v):
        return ("−∞" if v < 0 else "∞") + (f" {unit}" if unit else "")
    if v == 0:
        return f"0 {unit}".strip()
    mag = abs(v)
    scale, prefix = next(((s, p) for s, p in _PREFIXES if mag >= s * 0.9999995), _PREFIXES[-1])
    return f"{_decimal(v / scale, digits, signed)} {prefix}{unit}".strip()


def format_percent(fraction: Any, digits: int = DIGITS, signed: bool = False) -> str:
    """A fraction in percent: ``0.001`` → ``"0.1 %"``."""
    if fraction is None or math.isnan(float(fraction)):
        return NO_VALUE
    return f"{_decimal(float(fraction) * 100, digits, signed)} %"


def format_quantity(value: Any, unit: str = "", digits: int = DIGITS, signed: bool = False) -> str:
    """Any figure as a person reads it, by the rules of this module.

    Parameters
    ----------
    value : float, int, bool, numpy scalar or None
    unit : str
        ``"V"``, ``"Ω"``, ``"fraction"``, ``"LSB"``, ``"×"``, ``""`` … (see the module rules).
    digits : int
        Significant digits (default :data:`DIGITS`).
    signed : bool
        Write ``+`` before a positive value (deviations, errors in a column).
    """
    if isinstance(value, np.generic):
        value = value.item()
    if value is None:
        return NO_VALUE
    if isinstance(value, bool):
        return yes_no(value)
    if isinstance(value, int) and unit not in SI_UNITS | PERCENT_UNITS | PPM_UNITS:
        return f"{value} {unit}".strip() if unit != "×" else f"{value}×"
    v = float(value)
    if math.isnan(v):
        return NO_VALUE
    if unit in PERCENT_UNITS:
        return format_percent(v, digits, signed)
    if unit in PPM_UNITS and math.isfinite(v):
        return f"{_decimal(v * 1e6, digits, signed)} {unit}"
    if unit in SI_UNITS:
        return format_si(v, unit, digits, signed)
    if math.isinf(v):
        return ("−∞" if v < 0 else "∞") + (f" {unit}" if unit and unit != "×" else "")
    text = _decimal(v, digits, signed)
    if unit == "×":
        return f"{text}×"
    return f"{text} {unit}".strip()
