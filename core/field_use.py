"""Which numeric design fields a network does not use, and why.

The values pane greys such fields out (their values are kept, so switching back restores them);
the rules are checked against the engine by a test that changes each unused field and finds every
figure unchanged.
"""

from __future__ import annotations

from .design import Design

AMPLIFIER_OUTPUTS = ("summing-amp", "transimpedance")
"""Outputs whose amplifier has a feedback resistor."""


def unused_fields(design: Design) -> dict[str, str]:
    """Field key → why ``design`` ignores it (empty when every field counts)."""
    out: dict[str, str] = {}
    if design.topology != "segmented":
        out["thermometer_bits"] = "only segmented networks have thermometer-decoded bits"
    if design.output != "buffer":
        out["gain"] = "only a buffered output has a buffer gain"
    if design.output not in AMPLIFIER_OUTPUTS:
        out["feedback_r"] = "only an amplifier output (summing or transimpedance) has a feedback resistor"
    if design.topology == "string":
        out["ron_low"] = "a string's tap switch is either on (bit = 1 resistance) or open"
    why = _skew_unused(design)
    if why:
        out["series_ratio"] = why
    return out


def _skew_unused(design: Design) -> str:
    """Why ``series_ratio`` changes nothing in ``design`` (empty when it counts)."""
    if design.topology == "string":
        return "a resistor string has no ladder series resistors and no bit weights to skew"
    if design.topology == "binary-weighted":
        if design.build.get("binary", "per-bit") == "unit-array":
            return "a unit-element array's bits are counts of equal units; they cannot be skewed"
        return "" if design.bits > 1 else "one bit has no lower bits to outweigh"
    if design.topology == "segmented" and design.build.get("lsb_section", "r2r") == "unit-array":
        return "a unit-element binary section has no ladder series resistors"
    ladder = design.bits - (design.thermometer_bits if design.topology == "segmented" else 0)
    return "" if ladder > 1 else "the ladder section has no series resistors (fewer than 2 bits)"
