"""What a design costs: an editable price table (the design file's ``[cost]``) and a breakdown.

Layout in a design file (every key optional; missing ones take the invented example prices)::

    [cost]
    switch = 0.05              # per switch
    amplifier = 0.40           # per amplifier
    area_per_part = 0.003      # board-area weight per placed part (resistor, package, switch, amp)
    [cost.resistor]            # price per discrete resistor, by tolerance grade
    "1%" = 0.004
    "0.1%" = 0.09
    [cost.array_package]       # price per matched-array package (board.array_size > 0), by grade
    "0.1%" = 0.80
    [cost.series_factor]       # multiplies resistor and package prices, by series
    exact = 4.0
    E96 = 1.0

Prices are plain numbers in one currency of the person's choice. **The defaults are invented example
prices**, not quotes; every place that shows a cost says so (:attr:`CostTable.source`). A grade not
in a table is priced as the nearest listed grade at least as tight (never cheaper than a tighter
listed one); a grade tighter than every listed one is refused.
"""

from __future__ import annotations

from collections.abc import Mapping
from dataclasses import dataclass, field
from typing import Any

import numpy as np

from .errors import DesignError
from .network import Network, PartList
from .ranges import FRACTION, FieldSpec
from .types import SERIES

EXAMPLE_RESISTOR = {0.05: 0.002, 0.02: 0.003, 0.01: 0.004, 0.005: 0.02, 0.0025: 0.05, 0.001: 0.09,
                    0.0005: 0.25, 0.0002: 0.6, 0.0001: 1.2}
"""Invented example price per discrete resistor by grade (fraction)."""

EXAMPLE_ARRAY_PACKAGE = {0.01: 0.30, 0.005: 0.45, 0.0025: 0.60, 0.001: 0.80, 0.0005: 1.20,
                         0.0002: 1.80, 0.0001: 3.00}
"""Invented example price per matched-array package by element-to-element grade."""

EXAMPLE_SERIES_FACTOR = {"exact": 4.0, "E3": 1.0, "E6": 1.0, "E12": 1.0, "E24": 1.0, "E48": 1.0,
                         "E96": 1.0, "E192": 1.3}
"""Invented example price factor by series (``exact``: custom values or trimming)."""

EXAMPLE_SCALARS = {"switch": 0.05, "amplifier": 0.40, "area_per_part": 0.003}
"""Invented example prices per switch and amplifier, and the area weight per placed part."""

EXAMPLE_NOTE = "invented example prices, not quotes"
MAX_PRICE = 1e9


PRICE = FieldSpec("Price", "", 0.0, MAX_PRICE)
"""Any price or area weight: 0 … MAX_PRICE, in the table's own money."""
GRADE = FieldSpec("Tolerance grade", FRACTION, 0.0, 0.5)
"""A grade key of a price table, e.g. "0.1%"."""


def _price(where: str, value: Any) -> float:
    return float(PRICE.check(where, value))


def _grade_table(where: str, data: Any) -> dict[float, float]:
    if not isinstance(data, Mapping) or not data:
        raise DesignError(where, "must be a table of prices by grade, e.g. {\"0.1%\" = 0.09}")
    out = {}
    for key, value in data.items():
        grade = GRADE.check(f"{where}.{key}", key)
        out[grade] = _price(f"{where}.{key}", value)
    return out


def grade_text(grade: float) -> str:
    """``0.001`` → ``"0.1%"`` (the key written in files)."""
    return f"{grade * 100:g}%"


@dataclass(frozen=True)
class CostTable:
    """Prices of parts and the board-area weight; see the module docstring for the file layout.

    ``examples`` names the entries that were not given (so come from the invented examples).
    """

    resistor: Mapping[float, float] = field(default_factory=lambda: dict(EXAMPLE_RESISTOR))
    array_package: Mapping[float, float] = field(default_factory=lambda: dict(EXAMPLE_ARRAY_PACKAGE))
    series_factor: Mapping[str, float] = field(default_factory=lambda: dict(EXAMPLE_SERIES_FACTOR))
    switch: float = EXAMPLE_SCALARS["switch"]
    amplifier: float = EXAMPLE_SCALARS["amplifier"]
    area_per_part: float = EXAMPLE_SCALARS["area_per_part"]
    examples: tuple[str, ...] = ("resistor", "array_package", "series_factor", *EXAMPLE_SCALARS)

    @classmethod
    def from_dict(cls, data: Mapping[str, Any] | None, section: str = "cost") -> CostTable:
        """A validated table from a file's ``[cost]`` (``None`` or ``{}``: all examples)."""
        data = data or {}
        if not isinstance(data, Mapping):
            raise DesignError(section, "must be a table")
        known = ("resistor", "array_package", "series_factor", *EXAMPLE_SCALARS)
        unknown = sorted(set(data) - set(known))
        if unknown:
            raise DesignError(f"{section}.{unknown[0]}", "unknown key; known keys: " + ", ".join(known))
        kw: dict[str, Any] = {}
        for key in ("resistor", "array_package"):
            if key in data:
                kw[key] = _grade_table(f"{section}.{key}", data[key])
        if "series_factor" in data:
            table = data["series_factor"]
            if not isinstance(table, Mapping):
                raise DesignError(f"{section}.series_factor", "must be a table by series name")
            bad = sorted(set(table) - set(SERIES))
            if bad:
                raise DesignError(f"{section}.series_factor.{bad[0]}", "unknown series; known: "
                                  + ", ".join(SERIES))
            kw["series_factor"] = {**EXAMPLE_SERIES_FACTOR, **{
                k: _price(f"{section}.series_factor.{k}", v) for k, v in table.items()}}
        for key in EXAMPLE_SCALARS:
            if key in data:
                kw[key] = _price(f"{section}.{key}", data[key])
        kw["examples"] = tuple(k for k in known if k not in data)
        return cls(**kw)

    def to_dict(self) -> dict[str, Any]:
        """The file's ``[cost]`` table (only the entries that were given)."""
        out: dict[str, Any] = {}
        for key in ("resistor", "array_package"):
            if key not in self.examples:
                out[key] = {grade_text(g): p for g, p in sorted(getattr(self, key).items())}
        if "series_factor" not in self.examples:
            out["series_factor"] = dict(self.series_factor)
        for key in EXAMPLE_SCALARS:
            if key not in self.examples:
                out[key] = getattr(self, key)
        return out

    @property
    def source(self) -> str:
        """Where the prices come from, in words (shown beside every cost)."""
        if not self.examples:
            return "your prices"
        if len(self.examples) == 6:
            return EXAMPLE_NOTE
        return ("your prices; invented example prices for " + ", ".join(self.examples)
                + " (not quotes)")

    def grade_price(self, table: str, grade: float, series: str) -> float:
        """Price of one resistor (``table="resistor"``) or package at ``grade`` in ``series``."""
        prices = getattr(self, table)
        tighter = [g for g in prices if g <= grade * (1 + 1e-9)]
        if not tighter:
            raise DesignError(f"cost.{table}", f"no price for a grade as tight as "
                              f"±{grade * 100:g} %; tightest listed ±{min(prices) * 100:g} %")
        return prices[max(tighter)] * self.series_factor.get(series, 1.0)


@dataclass(frozen=True)
class CostBreakdown:
    """A design's cost by line (``{"resistors": …, "switches": …}``) and the total."""

    lines: Mapping[str, float]
    total: float
    source: str

    def to_dict(self) -> dict[str, Any]:
        """Plain values for JSON."""
        return {"lines": dict(self.lines), "total": self.total, "prices": self.source}


def package_count(net: Network, array_size: int) -> int:
    """Matched-array packages of ``array_size`` elements for every unit value of ``net``."""
    parts = PartList.of(net.parts)
    values, units = np.round(parts.unit_ohms(), 9), parts.units()
    if values.size == 0:
        return 0
    uniq, inverse = np.unique(values, return_inverse=True)
    counts = np.bincount(inverse, weights=units, minlength=uniq.size)
    return int(np.ceil(counts / array_size).sum())


def design_cost(table: CostTable, net: Network, tolerance: float, series: str, array_size: int,
                counts: Mapping[str, int]) -> CostBreakdown:
    """Cost of one built network at ``tolerance`` (fraction).

    ``counts`` holds ``n_resistors``, ``n_switches``, ``n_amplifiers`` (the evaluation's summary).
    With ``array_size`` > 0 the resistors are bought as matched-array packages.
    """
    lines: dict[str, float] = {}
    placed = 0
    if array_size > 0:
        packs = package_count(net, array_size)
        lines["array packages"] = packs * table.grade_price("array_package", tolerance, series)
        placed += packs
    else:
        n = int(counts["n_resistors"])
        lines["resistors"] = n * table.grade_price("resistor", tolerance, series)
        placed += n
    n_sw, n_amp = int(counts["n_switches"]), int(counts["n_amplifiers"])
    lines["switches"] = n_sw * table.switch
    lines["amplifiers"] = n_amp * table.amplifier
    placed += n_sw + n_amp
    lines["board area"] = placed * table.area_per_part
    return CostBreakdown(lines, float(sum(lines.values())), table.source)
