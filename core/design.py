"""The design: one candidate network's every setting, as a frozen, validated dataclass.

``Design.from_dict`` takes the same keys as the design file; every value is checked against
``FIELDS`` and a bad one raises :class:`DesignError` naming the field and the allowed range.
"""

from __future__ import annotations

import dataclasses
import math
import re
from collections.abc import Mapping
from dataclasses import dataclass, field
from types import MappingProxyType
from typing import Any

from .build_style import check_build
from .display_names import network_name
from .errors import DesignError
from .mismatch import check_mismatch
from .part_ids import part_ids
from .parts.board import check_board
from .ranges import FieldSpec
from .timing import check_sine, check_timing
from .types import MAX_ARRAY_BITS, MAX_BITS, OUTPUTS_BY_TOPOLOGY, SERIES, TOPOLOGIES

MIN_OHMS = 1e-3
"""Smallest resistance of a part, a non-ideal switch, a reference or a load: 1 mΩ (a copper
trace; below it the network's conductances span more than double precision can solve)."""

MAX_OHMS = 1e12
"""Largest resistance of a part: 1 TΩ (above it leakage of any real board dominates)."""

PART_SPEC = FieldSpec("As-built part value", "Ω", MIN_OHMS, MAX_OHMS)
"""What an as-built ``parts`` value accepts."""

PARTS_ALLOWED = PART_SPEC.describe()
"""The allowed range of an as-built ``parts`` value, in words."""

FIELDS: dict[str, FieldSpec] = {
    "bits": FieldSpec("Resolution", "bits", 1, MAX_BITS, integer=True),
    "vref": FieldSpec("Reference voltage", "V", -1000.0, 1000.0, min_abs=1e-6),
    "unit_r": FieldSpec("Unit resistor R", "Ω", MIN_OHMS, MAX_OHMS),
    "ron_high": FieldSpec("Switch resistance, bit = 1", "Ω", MIN_OHMS, 1e9, zero_ok="ideal"),
    "ron_low": FieldSpec("Switch resistance, bit = 0", "Ω", MIN_OHMS, 1e9, zero_ok="ideal"),
    "ref_r": FieldSpec("Reference output resistance", "Ω", MIN_OHMS, 1e9, zero_ok="ideal"),
    "load_r": FieldSpec("Load resistance", "Ω", MIN_OHMS, 1e15, allow_inf=True),
    "gain": FieldSpec("Buffer gain", "V/V", -1e6, 1e6, min_abs=1e-3),
    "feedback_r": FieldSpec("Feedback resistor", "Ω", MIN_OHMS, MAX_OHMS, optional=True),
    "load_c": FieldSpec("Load capacitance", "F", 1e-15, 1.0, zero_ok="none"),
    "temperature_c": FieldSpec("Temperature", "°C", -273.15, 1000.0, low_open=True),
    "bandwidth": FieldSpec("Noise bandwidth", "Hz", 1e-3, 1e12),
    "thermometer_bits": FieldSpec("Segmented (thermometer) bits", "bits", 0, MAX_ARRAY_BITS,
                                  integer=True, optional=True),
    "series_ratio": FieldSpec("Series ratio (skew)", "×", 0.5, 4.0),
}
"""Numeric design fields with their display label, SI unit and allowed range."""


def _check_number(key: str, value: Any) -> float | int | None:
    return FIELDS[key].check(key, value)


DEFAULT_THERMOMETER_BITS = 3
"""Thermometer bits M of a segmented design when none are given (clipped to N)."""


@dataclass(frozen=True)
class Design:
    """One candidate network with every setting, in SI units.

    Attributes
    ----------
    topology : str
        One of ``TOPOLOGIES``.
    output : str
        Output variant allowed for the topology (``OUTPUTS_BY_TOPOLOGY``); ``None`` picks the default.
    bits : int
        Resolution N, 1 … 24.
    vref, unit_r, ron_high, ron_low, ref_r, load_r, gain, feedback_r : float
        Volts, ohms, V/V. ``load_r`` is ``inf`` for an open output; ``feedback_r`` ``None`` picks the
        value that makes the ideal full scale ``Vref·(2^N − 1)/2^N``.
    thermometer_bits : int
        Segmented designs: M thermometer-decoded MSBs, 0 … N (other topologies ignore it);
        ``None`` picks ``min(3, N)``. Changing ``bits`` alone clips it to the new N.
    parts : Mapping[str, float]
        As-built resistance overrides by part id, ohms (never snapped).
    series : str
        Preferred-value series (``types.SERIES``) every part value derived from ``unit_r`` snaps
        to by ratio; ``"exact"`` keeps the computed values.
    load_c : float
        Capacitance loading the output, farads (settling).
    temperature_c : float
        Operating temperature, °C (thermal noise).
    bandwidth : float
        Bandwidth over which the output noise is integrated, Hz.
    mismatch : Mapping[str, Any]
        Statistics settings given explicitly (``mismatch.py``: model, distribution, tolerance …);
        unset keys take their defaults there.
    build : Mapping[str, str]
        Build styles (``build_style.py``): ``binary`` per-bit | unit-array, ``two_r`` single |
        two-units, ``lsb_section`` r2r | unit-array (segmented designs).
    board : Mapping[str, float]
        Ratings and limits of the real parts, drift range, amplifier flaws given explicitly
        (``parts/board.py``); unset keys take their defaults there.
    series_ratio : float
        Skew, 0.5 … 4 (1 = classic): every ladder series resistor is ``series_ratio × R`` (R-2R
        networks and a segmented design's R-2R section); in a per-bit binary-weighted network the
        bit resistors step by ``2·series_ratio`` instead of 2 (bit k = R·(2·ratio)^(N−1−k)). Above
        1 each bit weighs a little more than twice the next, so carries keep a margin.
    timing : Mapping[str, Any]
        Switch edges and node capacitance (``timing.py``: ``rise``, ``fall``, ``skew``,
        ``node_c``) given explicitly; unset keys are 0.
    sine : Mapping[str, Any]
        The test sine of the spectrum (``timing.py``: ``samples``, ``cycles``, ``amplitude``).
    name : str
        A label for the candidate; empty means "use the topology".
    """

    topology: str = "r2r-voltage"
    output: str | None = None
    bits: int = 8
    vref: float = 3.3
    unit_r: float = 10e3
    ron_high: float = 0.0
    ron_low: float = 0.0
    ref_r: float = 0.0
    load_r: float = math.inf
    gain: float = 1.0
    feedback_r: float | None = None
    thermometer_bits: int | None = None
    parts: Mapping[str, float] = field(default_factory=dict)
    series: str = "exact"
    load_c: float = 0.0
    temperature_c: float = 27.0
    bandwidth: float = 1e6
    mismatch: Mapping[str, Any] = field(default_factory=dict)
    build: Mapping[str, str] = field(default_factory=dict)
    board: Mapping[str, float] = field(default_factory=dict)
    series_ratio: float = 1.0
    timing: Mapping[str, Any] = field(default_factory=dict)
    sine: Mapping[str, Any] = field(default_factory=dict)
    name: str = ""

    def __post_init__(self) -> None:
        if self.topology not in TOPOLOGIES:
            raise DesignError("topology", f"unknown topology {self.topology!r}; choose one of "
                              + ", ".join(TOPOLOGIES))
        allowed = OUTPUTS_BY_TOPOLOGY[self.topology]
        output = allowed[0] if self.output in (None, "") else self.output
        if output not in allowed:
            raise DesignError("output", f"{output!r} is not an output of {self.topology}; choose one"
                              " of " + ", ".join(allowed))
        object.__setattr__(self, "output", output)
        if self.series not in SERIES:
            raise DesignError("series", f"unknown series {self.series!r}; choose one of "
                              + ", ".join(SERIES))
        for key in FIELDS:
            object.__setattr__(self, key, _check_number(key, getattr(self, key)))
        if self.thermometer_bits is None:
            object.__setattr__(self, "thermometer_bits", min(DEFAULT_THERMOMETER_BITS, self.bits))
        if self.topology == "string" and self.bits > MAX_ARRAY_BITS:
            raise DesignError("bits", f"{self.bits} is out of range for a resistor string; allowed: "
                              f"a whole number from 1 to {MAX_ARRAY_BITS} (2^N resistors)")
        if self.topology == "segmented" and self.thermometer_bits > self.bits:
            raise DesignError("thermometer_bits", f"{self.thermometer_bits} is out of range; "
                              f"allowed: a whole number from 0 to {self.bits} (the resolution)")
        if not isinstance(self.name, str):
            raise DesignError("name", "must be text")
        object.__setattr__(self, "build", MappingProxyType(check_build(self.build)))
        parts: dict[str, float] = {}
        if not isinstance(self.parts, Mapping):
            raise DesignError("parts", "must map part ids to ohms, e.g. {leg0 = 20.1e3}")
        for pid, ohms in self.parts.items():
            parts[str(pid)] = PART_SPEC.check(f"parts.{pid}", ohms)
        if parts:
            known = part_ids(self.topology, self.output, self.bits, self.thermometer_bits,
                             self.build)
            known_set = set(known)
            for pid in parts:
                if pid not in known_set:
                    raise DesignError(f"parts.{pid}", f"unknown part id for {self.topology} with "
                                      f"{self.bits} bits; known ids: {_id_summary(known)}")
        object.__setattr__(self, "parts", MappingProxyType(parts))
        object.__setattr__(self, "mismatch", MappingProxyType(check_mismatch(self.mismatch, self)))
        object.__setattr__(self, "board", MappingProxyType(check_board(self.board)))
        object.__setattr__(self, "timing", MappingProxyType(check_timing(self.timing)))
        object.__setattr__(self, "sine", MappingProxyType(check_sine(self.sine)))

    # --- conversions -------------------------------------------------------------------------
    @classmethod
    def from_dict(cls, data: Mapping[str, Any]) -> Design:
        """Build a design from the design-file keys; unknown keys are refused by name."""
        if not isinstance(data, Mapping):
            raise DesignError("design", "expected a table of design keys")
        names = {f.name for f in dataclasses.fields(cls)}
        unknown = sorted(set(data) - names)
        if unknown:
            raise DesignError(unknown[0], "unknown design key; known keys: " + ", ".join(sorted(names)))
        return cls(**dict(data))

    def to_dict(self) -> dict[str, Any]:
        """All keys as plain Python values (``load_r`` stays ``inf`` when open)."""
        out = {f.name: getattr(self, f.name) for f in dataclasses.fields(self)}
        out["parts"] = dict(self.parts)
        out["mismatch"] = {k: dict(v) if isinstance(v, Mapping) else v
                           for k, v in self.mismatch.items()}
        out["build"] = dict(self.build)
        out["board"] = dict(self.board)
        out["timing"] = {k: list(v) if k == "skew" else v for k, v in self.timing.items()}
        out["sine"] = dict(self.sine)
        return out

    def replace(self, **changes: Any) -> Design:
        """A copy with some fields changed (validated like a new design)."""
        data = self.to_dict()
        if "topology" in changes and "output" not in changes:
            data["output"] = None
        new_build = changes.get("build")
        section_changed = isinstance(new_build, Mapping) and (  # part ids change with it
            new_build.get("lsb_section", "r2r") != self.build.get("lsb_section", "r2r"))
        if (({"bits", "topology", "thermometer_bits"} & set(changes)) or section_changed) and (
                "parts" not in changes):
            data["parts"] = {}
            if "mismatch" not in changes:
                data["mismatch"] = {k: v for k, v in data["mismatch"].items() if k != "tempco_parts"}
        if "bits" in changes and "thermometer_bits" not in changes:
            try:
                n = _check_number("bits", changes["bits"])
            except DesignError:
                n = None  # the new design reports it
            if n is not None:
                data["thermometer_bits"] = min(int(data["thermometer_bits"]), int(n))
        if {"topology", "output"} & set(changes) and "name" not in changes and (
                self.named_after_network):
            data["name"] = ""  # the program's name follows the network; a typed one stays
        data.update(changes)
        return Design.from_dict(data)

    def with_settings(self, settings: Mapping[str, str]) -> Design:
        """Apply ``key=value`` strings typed by a person (``{"unit_r": "4k7"}``, ``parts.leg0``)."""
        changes: dict[str, Any] = {}
        parts = dict(self.parts)
        tables = {"mismatch": self.to_dict()["mismatch"], "build": dict(self.build),
                  "board": dict(self.board), "timing": dict(self.timing), "sine": dict(self.sine)}
        for key, text in settings.items():
            if key.startswith("parts."):
                parts[key[len("parts."):]] = text
            elif key.split(".", 1)[0] in tables and "." in key:
                table, sub = key.split(".", 1)
                if sub.startswith("tempco_parts."):
                    tables[table].setdefault("tempco_parts", {})[sub.split(".", 1)[1]] = text
                else:
                    tables[table][sub] = text
                changes[table] = tables[table]
            elif key in {"topology", "output", "name", "series"} or key in FIELDS:
                changes[key] = text
            else:
                known = ", ".join(["topology", "output", "name", "series", *FIELDS, "parts.<id>",
                                   "mismatch.<key>", "build.<key>", "board.<key>", "timing.<key>",
                                   "sine.<key>"])
                raise DesignError(key, f"unknown setting; known settings: {known}")
        if parts != dict(self.parts):
            changes["parts"] = parts
        return self.replace(**changes)

    @property
    def label(self) -> str:
        """The name shown for this candidate."""
        return self.name or network_name(self.topology, self.output)

    @property
    def named_after_network(self) -> bool:
        """Whether the name is the program's: empty, or its network's name (a number may follow
        to tell two apart, ``… 2``). Such a name follows the network when it changes."""
        autos = (network_name(self.topology, self.output), f"{self.topology} ({self.output})")
        return not self.name or any(re.fullmatch(re.escape(a) + r"( \d+)?", self.name)
                                    for a in autos)


def _id_summary(ids: list[str]) -> str:
    if len(ids) <= 8:
        return ", ".join(ids)
    return ", ".join(ids[:4]) + ", …, " + ", ".join(ids[-3:])
