"""Which summary figures mean nothing for a design's inputs, and why (one rule for every screen).

A figure computed from an input that was not given reads as a result when shown as a number:
settling "0 s" with no load capacitance looks instant, drift at the cold and hot ends with no
temperature coefficient repeats the nominal values. ``evaluate`` sets such figures to NaN and
keeps the reason in ``Evaluation.no_meaning`` (from :func:`reasons`), so the window's table, the
command line and the report show the reason instead of a number; :func:`figure_note` adds what a
figure needs beside it (the temperature of a drift row).
"""

from __future__ import annotations

from collections.abc import Iterable
from typing import Any

from .metrics.drift import any_part_drifts
from .parts.board import board_value

SETTLING_KEYS = ("settling_tau", "settling_time")
"""Summary keys of the output's settling."""

GLITCH_KEYS = ("glitch_major", "glitch_peak_major", "glitch_peak_major_lsb", "glitch_worst",
               "glitch_worst_code")
"""Summary keys of the glitch against the simultaneous step (``metrics/glitch.py``)."""

TRANSIENT_KEYS = ("settling_major", "settling_worst", "settling_worst_code", "settling_full_scale")
"""Summary keys of the exact transient's settling (``metrics/glitch.py``)."""

DRIFT_KEYS = ("drift_gain_error_low", "drift_gain_error_high", "drift_offset_low",
              "drift_offset_high", "drift_inl_low", "drift_inl_high")
"""Summary keys of the figures at the ends of the temperature range."""

AMPLIFIER_OUTPUTS = ("buffer", "summing-amp", "transimpedance")
"""Outputs taken through an amplifier (its speed is not modelled)."""

NO_MEANING_TEXT = "no meaning"
"""The words shown in place of such a figure, before its reason."""


def has_tempco(design: Any) -> bool:
    """True when any part has a non-zero temperature coefficient."""
    mm = design.mismatch
    return bool(mm.get("tempco", 0.0)) or any(float(v) for v in mm.get("tempco_parts", {}).values())


def _settling_reason(design: Any) -> str | None:
    if design.output in AMPLIFIER_OUTPUTS:
        return "behind an amplifier, whose speed is not modelled"
    from .metrics.settling import output_capacitance

    if output_capacitance(design) == 0:
        return "no load capacitance given"
    return None


def _glitch_reason(design: Any, glitch: bool, net: Any = None) -> str | None:
    from .metrics.glitch import dynamics_reason

    return dynamics_reason(design, glitch=glitch, net=net)


def _drift_reason(design: Any) -> str | None:
    if not has_tempco(design):
        return "no temperature coefficient set"
    ends = [board_value(design, "temp_low_c"), board_value(design, "temp_high_c")]
    if not any_part_drifts(design, ends):
        return "no part changes value between the range's ends"
    return None


def not_meaningful(design: Any, key: str) -> str | None:
    """Why summary figure ``key`` means nothing for ``design`` (short words for a table cell), or
    ``None`` when it means something."""
    if key in SETTLING_KEYS:
        return _settling_reason(design)
    if key in DRIFT_KEYS:
        return _drift_reason(design)
    if key in GLITCH_KEYS or key in TRANSIENT_KEYS:
        return _glitch_reason(design, key in GLITCH_KEYS)
    return None


def reasons(design: Any, keys: Iterable[str], net: Any = None) -> dict[str, str]:
    """``{key: reason}`` for every key of ``keys`` that means nothing for ``design`` (``net``:
    its built network when the caller has it, so it is not built again)."""
    keys = list(keys)
    settling, drift = _settling_reason(design), _drift_reason(design)
    glitch = _glitch_reason(design, True, net) if set(keys) & set(GLITCH_KEYS) else None
    transient = _glitch_reason(design, False, net) if set(keys) & set(TRANSIENT_KEYS) else None
    out = {}
    for key in keys:
        why = (settling if key in SETTLING_KEYS else drift if key in DRIFT_KEYS
               else glitch if key in GLITCH_KEYS else transient if key in TRANSIENT_KEYS else None)
        if why:
            out[key] = why
    return out


def shown(reason: str) -> str:
    """The text shown in place of a figure: ``"no meaning: no load capacitance given"``."""
    return f"{NO_MEANING_TEXT}: {reason}"


def numbered(reason: str, notes: dict[str, int]) -> str:
    """``"no meaning (n)"`` for a table cell, numbering each distinct reason once in ``notes``
    (reason → n) so the table lists it once beneath (:func:`note_line`) instead of in every cell."""
    return f"{NO_MEANING_TEXT} ({notes.setdefault(reason, len(notes) + 1)})"


def note_line(reason: str, n: int) -> str:
    """The line under a table for the cells numbered ``n``: ``"(n) No meaning: <reason>."``."""
    return f"({n}) No meaning: {reason}."


def figure_note(design: Any, key: str) -> str:
    """What belongs beside a meaningful figure: ``"at 70 °C"`` for a drift row, else ``""``."""
    if key in DRIFT_KEYS:
        end = "temp_low_c" if key.endswith("_low") else "temp_high_c"
        return f"at {board_value(design, end):g} °C"
    return ""
