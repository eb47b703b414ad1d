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
from typing import Any

from ..errors import DesignError
from ..ranges import FRACTION, FieldSpec

BOARD_KEYS: dict[str, FieldSpec] = {
    "power_rating": FieldSpec("Resistor power rating", "W", 1e-4, 1e4, default=0.1),
    "derating": FieldSpec("Allowed share of the rating", FRACTION, 0.01, 1.0, default=0.5),
    "switch_limit": FieldSpec("Switch / pin current limit", "A", 1e-9, 1e3, default=math.inf,
                              allow_inf=True),
    "array_size": FieldSpec("Elements per matched array (0 = discrete)", "", 0, 64, default=0,
                            integer=True),
    "temp_low_c": FieldSpec("Temperature range, low end", "°C", -273.15, 1000.0, default=0.0),
    "temp_high_c": FieldSpec("Temperature range, high end", "°C", -273.15, 1000.0, default=70.0),
    "amp_offset": FieldSpec("Amplifier input offset", "V", -1.0, 1.0, default=0.0),
    "amp_open_loop": FieldSpec("Amplifier open-loop gain", "V/V", 1.0, 1e12, default=math.inf,
                               allow_inf=True),
    "rail_low": FieldSpec("Amplifier output, lowest", "V", -1e4, 1e4, default=-math.inf,
                          allow_inf=True, open_value=-math.inf),
    "rail_high": FieldSpec("Amplifier output, highest", "V", -1e4, 1e4, default=math.inf,
                           allow_inf=True),
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
        out[str(key)] = spec.check(name, value)
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
