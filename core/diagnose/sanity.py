"""Does the design fit the measurement at all? Checks made before any part is blamed.

- **Codes against bits**: a code beyond the design's range is refused (in ``diagnosis.py``).
- **Span**: the measured curve's slope per code against the design's at the same codes. A ratio
  near 1000 or 1/1000 (or 10^6) is a unit mix-up (millivolts read as volts …); near 2^k with the
  codes stopping at 2^(N−k) − 1 it is a converter of N − k bits; any other ratio beyond
  :data:`SPAN_LIMIT` means the design (reference, gain, candidate) is not the board that was
  measured. In each case the diagnosis refuses to blame parts and says what to check.
"""

from __future__ import annotations

import math

import numpy as np

from .reading import Measurement, MeasurementError

SPAN_LIMIT = 2.0
"""Largest ratio (either way) between the measured and the designed slope that parts can explain:
every part would have to be off by tens of percent beyond it."""

NEAR = 0.1
"""Relative closeness of a ratio to 1000, 2^k … to name it as that."""

UNIT_FACTORS = ((1e3, "millivolts read as volts: name the column output_mV (or write the unit "
                      "after each value)"),
                (1e6, "microvolts read as volts: name the column output_uV"),
                (1e-3, "volts read as millivolts: name the column output_V"),
                (1e-6, "volts read as microvolts: name the column output_V"))
"""Span ratios that point to a unit mix-up, with the advice."""


class DesignMismatch(MeasurementError):
    """The design cannot explain the curve; ``bits`` is the resolution the file points to (or
    ``None``)."""

    def __init__(self, message: str, source: str, bits: int | None = None) -> None:
        super().__init__(message, source=source)
        self.bits = bits


def _article(n: int) -> str:
    return "an" if str(n).startswith("8") or n in (11, 18) else "a"


def _near(x: float, target: float) -> bool:
    return abs(x / target - 1.0) <= NEAR


def check_span(m: Measurement, predicted_volts: np.ndarray, bits: int) -> tuple[float, int | None]:
    """The measured over the designed slope per code, and the resolution the file points to
    (``None`` when it agrees with ``bits``).

    Raises
    ------
    MeasurementError
        The design cannot explain the curve at all (see the module docstring); the message names
        the likely cause and what to change.
    """
    c = m.codes
    if c.size < 2 or c[-1] == c[0]:
        return 1.0, None
    measured = (m.volts[-1] - m.volts[0]) / (c[-1] - c[0])
    designed = (predicted_volts[-1] - predicted_volts[0]) / (c[-1] - c[0])
    if designed == 0 or not np.isfinite(designed):
        return math.nan, None
    ratio = float(measured / designed)
    if ratio == 0 or not np.isfinite(ratio) or 1.0 / SPAN_LIMIT <= ratio <= SPAN_LIMIT:
        return ratio, None  # a flat curve is refused by the linearity itself
    span = f"the curve rises {abs(ratio):.4g} times as steeply per code as the design predicts"
    if ratio < 0:
        raise DesignMismatch(f"the curve runs the opposite way to the design ({span}): check "
                               "the output variant (inverting or not) and the candidate; no part "
                               "is blamed", m.source)
    for factor, advice in UNIT_FACTORS:
        if _near(ratio, factor):
            raise DesignMismatch(f"{span}: {advice}; no part is blamed", m.source)
    k = round(math.log2(ratio))
    if k > 0 and _near(ratio, 2.0**k) and c[-1] < 2 ** (bits - k) and bits - k >= 1:
        fit = bits - k
        raise DesignMismatch(
            f"{span}, and its codes stop at {int(c[-1])}: it looks like {_article(fit)} {fit}-bit "
            f"converter measured against {_article(bits)} {bits}-bit design; choose the {fit}-bit "
            f"candidate (or set bits={fit}); no part is blamed", m.source, bits=fit)
    raise DesignMismatch(f"{span}: the design cannot explain the curve — check the reference "
                         "voltage, the gain, the unit of the outputs and which candidate was "
                         "built; no part is blamed", m.source)


def suggested_bits(m: Measurement, bits: int) -> int | None:
    """A resolution the codes point to when they cover less than a quarter of the design's range
    (``None`` otherwise): the smallest N whose codes hold the highest measured code."""
    top = int(m.codes[-1])
    if top >= 2 ** (bits - 2) or m.codes.size < 16:
        return None
    return max(1, top.bit_length())
