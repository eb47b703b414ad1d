"""The design's ``board`` table: ratings and limits of the real parts, and the amplifier's flaws.

Keys (all optional; defaults below)::

    board = {
        power_rating = 0.1,      # rated power of each resistor (each unit of a composed part), W
        derating = 0.5,          # fraction of the rating allowed in use
        switch_limit = "open",   # largest current a switch or pin may source or sink, A
        array_size = 0,          # elements per matched array package; 0 = discrete parts
        temp_low_c = 0,          # temperature range for drift, °C
        temp_high_c = 70,
        amp_offset = 0,          # amplifier input offset voltage, V
        amp_open_loop = "open",  # amplifier open-loop gain, V/V ("open" = ideal)
        rail_low = "open",       # amplifier output swing limits, V ("open" = none)
        rail_high = "open",
    }

Temperature coefficients are the statistics' (``mismatch.tempco`` and ``mismatch.tempco_parts``,
referred to ``mismatch.reference_c``): one definition serves both.
"""

from __future__ import annotations

import math
from collections.abc import Mapping
from dataclasses import dataclass
from typing import Any

from ..errors import DesignError
from ..units import parse_value


@dataclass(frozen=True)
class BoardSpec:
    """One ``board`` key: label, unit, default and inclusive range (``inf`` allowed if ``open``)."""

    label: str
    unit: str
    default: float
    low: float
    high: float
    open_ok: bool = False
    integer: bool = False


BOARD_KEYS: dict[str, BoardSpec] = {
    "power_rating": BoardSpec("Resistor power rating", "W", 0.1, 1e-4, 1e4),
    "derating": BoardSpec("Allowed fraction of the rating", "", 0.5, 0.01, 1.0),
    "switch_limit": BoardSpec("Switch / pin current limit", "A", math.inf, 1e-9, 1e3, open_ok=True),
    "array_size": BoardSpec("Elements per matched array (0 = discrete)", "", 0, 0, 64, integer=True),
    "temp_low_c": BoardSpec("Temperature range, low end", "°C", 0.0, -273.15, 1000.0),
    "temp_high_c": BoardSpec("Temperature range, high end", "°C", 70.0, -273.15, 1000.0),
    "amp_offset": BoardSpec("Amplifier input offset", "V", 0.0, -1.0, 1.0),
    "amp_open_loop": BoardSpec("Amplifier open-loop gain", "V/V", math.inf, 1.0, 1e12, open_ok=True),
    "rail_low": BoardSpec("Amplifier output, lowest", "V", -math.inf, -1e4, 1e4, open_ok=True),
    "rail_high": BoardSpec("Amplifier output, highest", "V", math.inf, -1e4, 1e4, open_ok=True),
}
"""Every ``board`` key with label, SI unit, default and allowed range."""


def check_board(data: Mapping[str, Any]) -> dict[str, float]:
    """The validated ``board`` table (only the keys given, values parsed to SI floats).

    Raises
    ------
    DesignError
        Named as ``board.<key>`` with the allowed range.
    """
    if not isinstance(data, Mapping):
        raise DesignError("board", "must be a table, e.g. {power_rating = 0.125, derating = 0.5}")
    out: dict[str, float] = {}
    for key, value in data.items():
        name = f"board.{key}"
        spec = BOARD_KEYS.get(key)
        if spec is None:
            raise DesignError(name, "unknown board key; known keys: " + ", ".join(BOARD_KEYS))
        x = parse_value(value, name)
        allowed = f"{spec.low:g} … {spec.high:g} {spec.unit}".rstrip() + (
            " (or 'open')" if spec.open_ok else "")
        if math.isnan(x) or (math.isinf(x) and not spec.open_ok):
            raise DesignError(name, f"must be a finite number; allowed: {allowed}")
        if math.isfinite(x) and not spec.low <= x <= spec.high:
            raise DesignError(name, f"{x:g} is out of range; allowed: {allowed}")
        if spec.integer and x != int(x):
            raise DesignError(name, f"{x:g} is not a whole number; allowed: {allowed}")
        if math.isinf(x) and key == "rail_low":
            x = -math.inf
        out[str(key)] = int(x) if spec.integer else x
    lo = out.get("temp_low_c", BOARD_KEYS["temp_low_c"].default)
    hi = out.get("temp_high_c", BOARD_KEYS["temp_high_c"].default)
    if lo > hi:
        raise DesignError("board.temp_low_c", f"{lo:g} °C is above the high end {hi:g} °C")
    rl = out.get("rail_low", -math.inf)
    rh = out.get("rail_high", math.inf)
    if rl >= rh:
        raise DesignError("board.rail_low", f"{rl:g} V must be below rail_high {rh:g} V")
    return out


def board_value(design: Any, key: str) -> float:
    """The design's ``board`` value for ``key`` (its default when unset)."""
    return design.board.get(key, BOARD_KEYS[key].default)
