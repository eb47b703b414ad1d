"""Engineering-notation parsing of values typed by a person (formatting: :mod:`.formatting`).

Accepts ``10k``, ``4k7``, ``10 kΩ``, ``2.5V``, ``100m`` (milli), ``1M`` (mega), ``0.1 %``, ``1e-3``.
"""

from __future__ import annotations

import math
import re

from .formatting import format_si as format_value  # noqa: F401  (kept under its old name)

PREFIXES: dict[str, float] = {
    "f": 1e-15, "p": 1e-12, "n": 1e-9, "u": 1e-6, "µ": 1e-6, "μ": 1e-6, "m": 1e-3,
    "": 1.0, "k": 1e3, "K": 1e3, "M": 1e6, "G": 1e9, "T": 1e12,
}
"""SI prefix letters and their multipliers (``M`` is mega, ``m`` milli)."""

UNIT_WORDS = ("ohms", "ohm", "Ω", "Ohm", "R", "V", "A", "W", "F", "s", "Hz", "K", "°C", "C")

_NUMBER = r"[+-]?(?:\d+(?:\.\d*)?|\.\d+)(?:[eE][+-]?\d+)?"
_PLAIN = re.compile(rf"^({_NUMBER})\s*([fpnuµμmkKMGT]?)\s*(?:{'|'.join(map(re.escape, UNIT_WORDS))})?$")
_INFIX = re.compile(r"^([+-]?\d+)([fpnuµμmkKMGTR])(\d+)\s*(?:Ω|ohms?|Ohm|V|A|W|F|s|Hz)?$")
_PERCENT = re.compile(rf"^({_NUMBER})\s*%$")
_PPM = re.compile(rf"^({_NUMBER})\s*ppm(?:/K|/°C)?$")


def parse_value(text: str | float | int, field: str = "value") -> float:
    """Parse a number typed in engineering notation into an SI float.

    Parameters
    ----------
    text : str or number
        ``"4k7"`` → 4700.0, ``"10 kΩ"`` → 10000.0, ``"100m"`` → 0.1, ``"0.1 %"`` → 0.001,
        ``"100 ppm"`` → 1e-4, ``"inf"``/``"open"`` → ``math.inf``.
    field : str
        Field name used in the error message.

    Raises
    ------
    DesignError
        The text is not a number in any accepted notation.
    """
    from .errors import DesignError

    if isinstance(text, bool):
        raise DesignError(field, f"expected a number, got {text!r}")
    if isinstance(text, int | float):
        return float(text)
    s = str(text).strip().replace("\u2009", " ").replace("\u00a0", " ")
    if s.lower() in {"inf", "open", "infinity", "∞", "none"}:
        return math.inf
    if s.lower() in {"-inf", "-infinity", "-∞"}:  # written by design files for an open rail_low
        return -math.inf
    if s.lower() in {"nan"}:
        return math.nan
    m = _PERCENT.match(s)
    if m:
        return float(m.group(1)) / 100.0
    m = _PPM.match(s)
    if m:
        return float(m.group(1)) * 1e-6
    m = _INFIX.match(s)
    if m:
        whole, letter, frac = m.groups()
        scale = 1.0 if letter == "R" else PREFIXES[letter]
        return float(f"{whole}.{frac}") * scale
    m = _PLAIN.match(s)
    if m:
        return float(m.group(1)) * PREFIXES[m.group(2)]
    raise DesignError(
        field, f"cannot read {text!r} as a number (examples: 10k, 4k7, 10 kΩ, 2.5V, 100m, 0.1 %)"
    )
