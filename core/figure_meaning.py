"""Which summary figures mean nothing for a design's inputs, and why (one rule for every screen).

A figure computed from an input that was not given reads as a result when shown as a number:
settling "0 s" with no load capacitance looks instant, drift at the cold and hot ends with no
temperature coefficient repeats the nominal values. :func:`not_meaningful` names the reason so
the window's table, the command line and the report show it instead of the number;
:func:`figure_note` adds what a figure needs beside it (the temperature of a drift row).
"""

from __future__ import annotations

import math
from collections.abc import Mapping
from typing import Any

SETTLING_KEYS = ("settling_tau", "settling_time")
DRIFT_KEYS = ("drift_gain_error_low", "drift_gain_error_high", "drift_offset_low",
              "drift_offset_high", "drift_inl_low", "drift_inl_high")


def has_tempco(design: Any) -> bool:
    """True when any part has a non-zero temperature coefficient."""
    mm = design.mismatch
    return bool(mm.get("tempco", 0.0)) or any(float(v) for v in mm.get("tempco_parts", {}).values())


def not_meaningful(design: Any, key: str, summary: Mapping[str, Any] | None = None) -> str | None:
    """Why ``key`` means nothing for ``design`` (short words for a table cell), or ``None``."""
    if key in SETTLING_KEYS:
        value = (summary or {}).get(key)
        if isinstance(value, float) and math.isnan(value):
            return "behind an amplifier, whose speed is not modelled"
        if design.load_c == 0:
            return "no load capacitance given"
    if key in DRIFT_KEYS and not has_tempco(design):
        return "no temperature coefficient set"
    return None


def figure_note(design: Any, key: str) -> str:
    """What belongs beside a meaningful figure: ``"at 70 °C"`` for a drift row, else ``""``."""
    from .parts.board import board_value

    if key in DRIFT_KEYS:
        end = "temp_low_c" if key.endswith("_low") else "temp_high_c"
        return f"at {board_value(design, end):g} °C"
    return ""
