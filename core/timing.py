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
from .ranges import FRACTION, FieldSpec
from .types import MAX_BITS

TIMING_KEYS: dict[str, FieldSpec] = {
    "rise": FieldSpec("Switch rise time", "s", 1e-15, 1.0, default=0.0, zero_ok="ideal"),
    "fall": FieldSpec("Switch fall time", "s", 1e-15, 1.0, default=0.0, zero_ok="ideal"),
    "skew": FieldSpec("Bit edge delay (each, LSB first)", "s", 1e-15, 1.0, default=0.0,
                      zero_ok="none"),
    "node_c": FieldSpec("Capacitance of every node", "F", 1e-18, 1.0, default=0.0, zero_ok="none"),
}
"""Every ``timing`` key (``skew``: the range of each entry). The smallest non-zero values (1 fs,
1 aF) are practical floors: below them the times and capacitances span more than double
precision can solve."""

SINE_KEYS: dict[str, FieldSpec] = {
    "samples": FieldSpec("Test sine: samples", "", 16, 2**20, default=4096, integer=True),
    "cycles": FieldSpec("Test sine: whole cycles", "", 1, 2**19 - 1, default=67, integer=True),
    "amplitude": FieldSpec("Test sine: amplitude (of full scale)", FRACTION, 1e-6, 1.0,
                           default=1.0),
}
"""Every ``sine`` key."""


def _number(table: str, key: str, spec: FieldSpec, value: Any) -> float:
    return spec.check(f"{table}.{key}", value)


def _table(data: Any, table: str, keys: dict[str, FieldSpec], example: str) -> Mapping[str, Any]:
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
