"""The design's ``timing`` and ``sine`` tables: switch edges, node capacitance and the test sine.

Keys (all optional; defaults below)::

    timing = {
        rise = 0,          # s: time for a switch's driven end to move linearly to the high rail
        fall = 0,          # s: the same to the low rail
        skew = [0, 0],     # s per bit, LSB first: when each bit's edge starts after the code
                           #   change at t = 0 (a list or "1n, 0, 2n"; missing bits 0)
        node_c = 0,        # F: capacitance from every network node to ground
    }
    sine = {
        samples = 4096,    # points of the test sine (coherent sampling)
        cycles = 67,       # whole periods in the record; coprime with samples
        amplitude = 1,     # fraction of full scale
    }

``load_c`` (a top-level key) still adds at the output node. Amplifier outputs are ideal: a
buffered or virtual-ground output follows its input at once and ``load_c`` on it changes nothing.
"""

from __future__ import annotations

import math
from collections.abc import Mapping
from dataclasses import dataclass
from typing import Any

from .errors import DesignError
from .parts.board import BoardSpec
from .types import MAX_BITS
from .units import parse_value

KeySpec = BoardSpec
"""One table key: label, SI unit, default and inclusive range (the ``board`` table's kind)."""


def _allowed(spec: KeySpec) -> str:
    """The allowed range in words."""
    if spec.integer:
        return f"a whole number from {spec.low:g} to {spec.high:g}"
    return f"{spec.low:g} … {spec.high:g} {spec.unit}".rstrip()


TIMING_KEYS: dict[str, KeySpec] = {
    "rise": KeySpec("Switch rise time", "s", 0.0, 0.0, 1.0),
    "fall": KeySpec("Switch fall time", "s", 0.0, 0.0, 1.0),
    "skew": KeySpec("Bit edge delay (each, LSB first)", "s", 0.0, 0.0, 1.0),
    "node_c": KeySpec("Capacitance of every node", "F", 0.0, 0.0, 1.0),
}
"""Every ``timing`` key (``skew``: the range of each entry)."""

SINE_KEYS: dict[str, KeySpec] = {
    "samples": KeySpec("Test sine: samples", "", 4096, 16, 2**20, integer=True),
    "cycles": KeySpec("Test sine: whole cycles", "", 67, 1, 2**19 - 1, integer=True),
    "amplitude": KeySpec("Test sine: amplitude", "of full scale", 1.0, 1e-6, 1.0),
}
"""Every ``sine`` key."""


SMALLEST: dict[str, float] = {"rise": 1e-15, "fall": 1e-15, "skew": 1e-15, "node_c": 1e-18}
"""Smallest non-zero value of a timing key (1 fs, 1 aF): below it the times and capacitances
span more than double precision can solve."""


def _number(table: str, key: str, spec: KeySpec, value: Any) -> float:
    name = f"{table}.{key}"
    x = parse_value(value, name)
    floor = SMALLEST.get(key, 0.0) if table == "timing" else 0.0
    allowed = _allowed(spec) if not floor else (
        f"0 or {floor:g} … {spec.high:g} {spec.unit}")
    if not math.isfinite(x):
        raise DesignError(name, f"must be a finite number; allowed: {allowed}")
    if not spec.low <= x <= spec.high or 0 < x < floor:
        raise DesignError(name, f"{x:g} is out of range; allowed: {allowed}")
    if spec.integer:
        if x != int(x):
            raise DesignError(name, f"{x:g} is not a whole number; allowed: {_allowed(spec)}")
        return int(x)
    return x


def _table(data: Any, table: str, keys: dict[str, KeySpec], example: str) -> Mapping[str, Any]:
    if not isinstance(data, Mapping):
        raise DesignError(table, f"must be a table, e.g. {example}")
    for key in data:
        if key not in keys:
            raise DesignError(f"{table}.{key}", f"unknown {table} key; known keys: "
                              + ", ".join(keys))
    return data


def _skew(value: Any) -> tuple[float, ...]:
    spec = TIMING_KEYS["skew"]
    items = value.split(",") if isinstance(value, str) else value
    if isinstance(items, (int, float)):
        items = [items]
    if not isinstance(items, (list, tuple)):
        raise DesignError("timing.skew", "must be a list of times, LSB first, e.g. [0, 1e-9]")
    items = [x for x in items if not (isinstance(x, str) and not x.strip())]
    if len(items) > MAX_BITS:
        raise DesignError("timing.skew", f"{len(items)} entries; allowed: at most {MAX_BITS} "
                          "(one per bit, LSB first)")
    return tuple(float(_number("timing", "skew", spec, x)) for x in items)


def check_timing(data: Any) -> dict[str, Any]:
    """The validated ``timing`` table (keys given only; ``skew`` as a tuple of seconds).

    Raises
    ------
    DesignError
        Named ``timing.<key>`` with the allowed range.
    """
    data = _table(data, "timing", TIMING_KEYS, "{rise = 5e-9, fall = 3e-9}")
    out: dict[str, Any] = {}
    for key, value in data.items():
        out[str(key)] = _skew(value) if key == "skew" else _number("timing", key, TIMING_KEYS[key],
                                                                   value)
    return out


def check_sine(data: Any) -> dict[str, Any]:
    """The validated ``sine`` table; ``cycles`` must be below ``samples``/2 and coprime with it.

    Raises
    ------
    DesignError
        Named ``sine.<key>`` with the allowed range.
    """
    data = _table(data, "sine", SINE_KEYS, "{samples = 4096, cycles = 67}")
    out = {str(k): _number("sine", k, SINE_KEYS[k], v) for k, v in data.items()}
    samples = out.get("samples", SINE_KEYS["samples"].default)
    cycles = out.get("cycles", SINE_KEYS["cycles"].default)
    if not 2 * cycles < samples:
        raise DesignError("sine.cycles", f"{cycles} is out of range; allowed: 1 … "
                          f"{(samples - 1) // 2} (below half of sine.samples = {samples})")
    if math.gcd(int(samples), int(cycles)) != 1:
        raise DesignError("sine.cycles", f"{cycles} shares a factor with sine.samples = {samples}; "
                          "allowed: a whole number coprime with it (coherent sampling of every code)")
    return out


@dataclass(frozen=True)
class Timing:
    """The timing model of one design in SI units.

    ``skew`` has one entry per bit (shape (bits,), s), missing ones 0. ``node_c`` applies to every
    network node (ladder nodes, chain taps, the summing node and the output node); ``load_c`` adds
    at an unbuffered output node. Amplifiers are ideal.
    """

    rise: float
    fall: float
    skew: tuple[float, ...]
    node_c: float
    load_c: float

    @property
    def has_edges(self) -> bool:
        """Whether any edge takes time or starts late."""
        return self.rise > 0 or self.fall > 0 or any(s > 0 for s in self.skew)


def timing_of(design: Any) -> Timing:
    """The design's :class:`Timing` (defaults filled in, skew padded or cut to ``bits``)."""
    t = design.timing
    skew = tuple(t.get("skew", ()))[:design.bits]
    skew = skew + (0.0,) * (design.bits - len(skew))
    return Timing(rise=float(t.get("rise", 0.0)), fall=float(t.get("fall", 0.0)), skew=skew,
                  node_c=float(t.get("node_c", 0.0)), load_c=float(design.load_c))


def sine_value(design: Any, key: str) -> float:
    """The design's ``sine`` value for ``key`` (its default when unset)."""
    return design.sine.get(key, SINE_KEYS[key].default)
