"""The one range check: what a numeric setting accepts, and the one wording of its refusals.

Every numeric key — design fields (``design.FIELDS``), ``mismatch`` and ``board`` keys, review
targets, Monte Carlo trials and seed, command-line options — is a :class:`FieldSpec`. Its
:meth:`FieldSpec.check` reads the value in the field's unit (``units.parse_quantity``) and refuses
it as ``<field>: <value> is out of range; allowed: <range>``, the range naming the unit and saying
"a fraction … (… %)" for ratios.
"""

from __future__ import annotations

import math
import operator
from dataclasses import dataclass
from typing import Any

from .errors import DesignError
from .units import parse_quantity

FRACTION = "fraction"
"""The ``unit`` of a ratio: a plain number is a fraction (0.01 = 1 %); ``%`` and ``ppm`` are read."""


def _exact_int(value: Any) -> int | None:
    """A Python or numpy integer as an exact ``int`` (not a bool); None for anything else."""
    if isinstance(value, bool | float | str):
        return None
    try:
        return operator.index(value)
    except TypeError:
        return None


def _num(x: float) -> str:
    return f"{x:d}" if isinstance(x, int) and not isinstance(x, bool) else f"{x:g}"


@dataclass(frozen=True)
class FieldSpec:
    """What one numeric setting accepts.

    ``low``/``high`` are inclusive unless ``low_open``; ``allow_inf`` admits ``open`` (read as
    ``open_value``: +∞ for an open load, −∞ for an open lower rail); ``zero_ok`` (its meaning, e.g.
    ``"ideal"``) admits 0 below ``low``; ``min_abs`` > 0 makes a two-sided range ``low … −min_abs``
    or ``min_abs … high`` (a reference voltage, a gain: never 0); ``optional`` admits an empty
    value (None: the default applies); ``default`` is the value an unset key takes.
    """

    label: str
    unit: str
    low: float
    high: float
    default: Any = None
    low_open: bool = False
    allow_inf: bool = False
    integer: bool = False
    optional: bool = False
    zero_ok: str = ""
    min_abs: float = 0.0
    open_value: float = math.inf

    @property
    def fraction(self) -> bool:
        """Whether the value is a ratio (shown as a fraction and as a percentage)."""
        return self.unit == FRACTION

    def _with_unit(self, x: float) -> str:
        if self.fraction:
            return f"{_num(x)} ({x * 100:g} %)"
        return f"{_num(x)} {self.unit}" if self.unit else _num(x)

    def describe(self) -> str:
        """The allowed range in words, e.g. ``"≥ 0.001 Ω and ≤ 1e+12 Ω (or 'open' for none)"``."""
        u = f" {self.unit}" if self.unit and not self.fraction else ""
        if self.fraction:
            text = (f"a fraction from {_num(self.low)} to {_num(self.high)} "
                    f"({self.low * 100:g} % to {self.high * 100:g} %)")
            if self.low_open:
                text = text.replace("from", "above", 1)
        elif self.integer:
            text = f"a whole number from {_num(self.low)} to {_num(self.high)}{u}"
        elif self.min_abs:
            text = (f"{_num(self.low)} … {-self.min_abs:g}{u} or {self.min_abs:g} … "
                    f"{_num(self.high)}{u} (not 0)")
        else:
            low = f"> {_num(self.low)}{u}" if self.low_open else f"≥ {_num(self.low)}{u}"
            text = f"{low} and ≤ {_num(self.high)}{u}"
        if self.zero_ok:
            text = f"0 ({self.zero_ok}) or {text}"
        if self.allow_inf:
            text += " (or 'open' for none)"
        if self.optional:
            text += " (or empty for the default)"
        return text

    def check(self, name: str, value: Any) -> float | int | None:
        """``value`` read and checked; ``int`` for whole-number fields, None when left empty.

        Raises
        ------
        DesignError
            Named ``name``, with the allowed range (:meth:`describe`).
        """
        allowed = self.describe()
        if value is None or (isinstance(value, str) and value.strip() in {"", "default"}):
            if self.optional:
                return None
            raise DesignError(name, f"a value is required; allowed: {allowed}")
        exact = _exact_int(value) if self.integer else None
        if exact is not None:
            x: float = exact  # seeds reach 2^63 − 1, beyond a float's digits
        else:
            try:
                x = parse_quantity(value, "" if self.fraction else self.unit, name,
                                   fraction=self.fraction)
            except DesignError as exc:
                raise DesignError(name, f"{exc.reason}; allowed: {allowed}") from None
        if math.isnan(x):
            raise DesignError(name, f"not a number; allowed: {allowed}")
        if math.isinf(x):
            if self.allow_inf and (x > 0 or x == self.open_value):  # "open", or how it is written
                return self.open_value
            raise DesignError(name, f"must be finite; allowed: {allowed}")
        if self.integer and x != int(x):
            raise DesignError(name, f"{x:g} is not a whole number; allowed: {allowed}")
        if self.integer:
            x = int(x)
        if self.min_abs and x == 0:
            raise DesignError(name, f"must not be zero; allowed: {allowed}")
        if self.zero_ok and x == 0:
            return 0.0
        too_low = x <= self.low if self.low_open else x < self.low
        if too_low or x > self.high or abs(x) < self.min_abs:
            raise DesignError(name, f"{self._with_unit(x)} is out of range; allowed: {allowed}")
        return x if self.integer else float(x)
