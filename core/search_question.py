"""The search's question: which designs to try (the space), what they must meet beyond the review
targets (limits), and how yields are decided. Saved as a design file's ``[search]`` table::

    [search]
    topologies = ["r2r-voltage:unbuffered", "segmented"]   # default: the base output's family
    thermometer_bits = "1-4"        # segmented M, a range or a list
    unit_r = "4.7k-47k"             # R from unit_series over this range (default: the base's R)
    unit_series = "E6"
    series = ["E24", "E96"]         # part series tried
    builds = ["as-designed", "binary=unit-array"]   # build styles tried (default: the base's)
    grades = ["1%", "0.5%", "0.25%", "0.1%", "0.05%"]
    criterion = "all"               # all | monotonic | dnl | inl
    target_yield = 0.99             # default: [targets] min_yield
    trials = 4000                   # budget per point; early stopping uses fewer
    seed = 1
    confidence = 0.95
    method = "clopper-pearson"      # or wilson, wald-sprt
    max_iref = 1e-3                 # A, largest reference current (optional limits below)
    max_rout = 20e3                 # Ω, largest output resistance
    max_settling = 2e-6             # s, settling to ½ LSB (needs load_c)
    max_noise_lsb = 0.1             # thermal noise RMS over the bandwidth, LSB
    max_glitch = 1e-12              # V·s, largest glitch impulse (switching figures)
    max_transition_settling = 1e-6  # s, slowest code transition's settling to ½ LSB
    ratings = true                  # every part within its rating and switch limit
"""

from __future__ import annotations

import math
from collections.abc import Iterable, Mapping, Sequence
from dataclasses import dataclass, field, fields, replace
from typing import Any

from .build_style import check_build, unused_build_keys
from .design import Design
from .errors import DesignError
from .grades import CRITERIA
from .parts.eseries import HIGHEST_OHMS, LOWEST_OHMS, mantissas
from .ranges import FRACTION, FieldSpec
from .targets import MAX_SEED, MAX_TRIALS
from .types import MAX_ARRAY_BITS, OUTPUTS_BY_TOPOLOGY, SERIES, TOPOLOGIES
from .units import parse_quantity, parse_value
from .yield_decision import METHODS

QUESTION_SPECS = {
    "target_yield": FieldSpec("Target yield", FRACTION, 0.0, 0.9999, low_open=True),
    "trials": FieldSpec("Boards per point, at most", "", 10, MAX_TRIALS, integer=True),
    "seed": FieldSpec("Random seed", "", 0, MAX_SEED, integer=True),
    "confidence": FieldSpec("Confidence of a decision", FRACTION, 0.5, 0.9999),
}
"""The search question's numeric settings (the one range check and its wording)."""

LIMIT_SPEC = FieldSpec("Limit", "", 0.0, math.inf, low_open=True, allow_inf=True)
"""Every optional limit (reference current, output resistance, settling …): above 0, or none."""

DEFAULT_GRADES: tuple[float, ...] = (0.01, 0.005, 0.0025, 0.001, 0.0005)
"""Tolerance grades tried when none are given, fraction (1 % … 0.05 %)."""

DEFAULT_SERIES: tuple[str, ...] = ("E24", "E96")

AMPLIFIED = {"buffer", "summing-amp", "transimpedance"}
"""Outputs with an amplifier; the others are passive."""

LIMIT_KEYS = {"max_iref": ("largest reference current", "A", "iref_max"),
              "max_rout": ("largest output resistance", "Ω", "rout_max"),
              "max_settling": ("settling to ½ LSB", "s", "settling_time"),
              "max_noise_lsb": ("thermal noise against the LSB", "LSB", "noise_rms_lsb"),
              "max_glitch": ("largest glitch impulse", "V·s", "glitch_worst"),
              "max_transition_settling": ("slowest transition's settling to ½ LSB", "s",
                                          "settling_worst")}
"""Optional limit → (words, unit, summary key it bounds)."""

MAX_POINTS = 20000
"""Most points (network × grade) one search takes."""


def family_networks(output: str) -> tuple[tuple[str, str], ...]:
    """Every (topology, output) whose output is passive or amplified like ``output``."""
    amplified = output in AMPLIFIED
    return tuple((t, o) for t in TOPOLOGIES for o in OUTPUTS_BY_TOPOLOGY[t]
                 if (o in AMPLIFIED) == amplified)


def parse_network(text: str) -> tuple[str, str | None]:
    """``"segmented:buffer"`` → ("segmented", "buffer"); ``"string"`` → ("string", None)."""
    topo, _, output = str(text).strip().partition(":")
    if topo not in TOPOLOGIES:
        raise DesignError("topology", f"unknown topology {topo!r}; choose one of " + ", ".join(TOPOLOGIES))
    if output and output not in OUTPUTS_BY_TOPOLOGY[topo]:
        raise DesignError("topology", f"{output!r} is not an output of {topo}; choose one of "
                          + ", ".join(OUTPUTS_BY_TOPOLOGY[topo]))
    return topo, output or None


def parse_int_range(text: Any, key: str, low: int, high: int) -> tuple[int, ...]:
    """``"0-6"``, ``"2,3,5"``, ``4`` or a list → sorted distinct whole numbers in ``low … high``."""
    items: Iterable[Any]
    if isinstance(text, int) and not isinstance(text, bool):
        items = [text]
    elif isinstance(text, Sequence) and not isinstance(text, str):
        items = text
    else:
        items = str(text).replace(" ", "").split(",")
    out: set[int] = set()
    for item in items:
        a, sep, b = str(item).partition("-")
        try:
            lo, hi = int(a), int(b) if sep else int(a)
        except ValueError:
            raise DesignError(key, f"{text!r} is not a range like 0-6 or a list like 1,2,4") from None
        if not (low <= lo <= hi <= high):
            order = ", low end first" if lo > hi else ""
            raise DesignError(key, f"{item} is out of range; allowed: {low} … {high}{order}")
        out.update(range(lo, hi + 1))
    return tuple(sorted(out))


def series_values(low: float, high: float, series: str) -> tuple[float, ...]:
    """Values of ``series`` (IEC 60063) from ``low`` to ``high`` ohms, both included."""
    if series == "exact" or series not in SERIES:
        raise DesignError("unit_series", f"{series!r} is not a preferred-value series; choose one of "
                          + ", ".join(SERIES[1:]))
    out = []
    for decade in range(math.floor(math.log10(low)) - 1, math.ceil(math.log10(high)) + 1):
        for m in mantissas(series):
            v = float(round(m * 10.0**decade, 9))
            if low * (1 - 1e-9) <= v <= high * (1 + 1e-9):
                out.append(v)
    return tuple(sorted(set(out)))


def parse_unit_r(text: Any, series: str) -> tuple[float, ...]:
    """``"1k-100k"`` → the series' values in that range; ``"4k7,10k"`` or a list → those values."""
    if isinstance(text, Sequence) and not isinstance(text, str):
        values = tuple(parse_quantity(v, "Ω", "unit_r") for v in text)
    else:
        s = str(text).replace(" ", "")
        if "-" in s.lstrip("-") and "," not in s:
            a, _, b = s.partition("-")
            lo, hi = parse_quantity(a, "Ω", "unit_r"), parse_quantity(b, "Ω", "unit_r")
            if not (LOWEST_OHMS <= lo <= hi <= HIGHEST_OHMS):
                raise DesignError("unit_r", f"{text!r} is out of range; allowed: a range within "
                                  f"{LOWEST_OHMS:g} … {HIGHEST_OHMS:g} Ω, low first")
            values = series_values(lo, hi, series)
            if not values:
                raise DesignError("unit_r", f"no {series} value lies in {text}")
        else:
            values = tuple(parse_quantity(v, "Ω", "unit_r") for v in s.split(","))
    for v in values:
        if not (LOWEST_OHMS <= v <= HIGHEST_OHMS):
            raise DesignError("unit_r", f"{v:g} Ω is out of range; allowed: {LOWEST_OHMS:g} … "
                              f"{HIGHEST_OHMS:g} Ω")
    return tuple(sorted(set(values)))


def parse_grades(text: Any) -> tuple[float, ...]:
    """``"1%,0.5%"`` or a list → grades as fractions, loosest first."""
    items = text if isinstance(text, Sequence) and not isinstance(text, str) else str(text).split(",")
    out = set()
    for item in items:
        g = parse_value(item, "grades")
        if not 0 <= g <= 0.5:
            raise DesignError("grades", f"{item} is out of range; allowed: 0 … 50 %")
        out.add(g)
    if not out:
        raise DesignError("grades", "give at least one grade, e.g. 1%,0.1%")
    return tuple(sorted(out, reverse=True))


AS_DESIGNED = "as-designed"
"""The build-style entry meaning the base design's own build table."""


def parse_builds(text: Any) -> tuple[str, ...]:
    """``"as-designed, binary=unit-array"`` or a list → checked entries (``key=value`` or
    ``as-designed``; several keys joined with ``+``)."""
    items = text if isinstance(text, Sequence) and not isinstance(text, str) else str(text).split(",")
    out = []
    for item in items:
        entry = str(item).strip()
        if entry and entry not in out:
            build_of(entry, {})  # refuses a bad key or value
            out.append(entry)
    if not out:
        raise DesignError("builds", f"give at least one build style, e.g. {AS_DESIGNED}")
    return tuple(out)


def build_of(entry: str, base: Mapping[str, str]) -> dict[str, str]:
    """The build table of one entry applied to ``base``'s."""
    if entry == AS_DESIGNED:
        return dict(base)
    table = dict(base)
    for part in entry.split("+"):
        key, sep, value = part.strip().partition("=")
        if not sep:
            raise DesignError("builds", f"{entry!r} is not {AS_DESIGNED} or key=value, e.g. "
                              "binary=unit-array")
        table[key.strip()] = value.strip()
    return check_build(table)


def parse_series(text: Any) -> tuple[str, ...]:
    """``"exact,E96"`` or a list → series names."""
    items = text if isinstance(text, Sequence) and not isinstance(text, str) else str(text).split(",")
    out = []
    for item in items:
        s = str(item).strip()
        if s not in SERIES:
            raise DesignError("series", f"unknown series {s!r}; choose from " + ", ".join(SERIES))
        if s not in out:
            out.append(s)
    if not out:
        raise DesignError("series", "give at least one series")
    return tuple(out)


@dataclass(frozen=True)
class SearchQuestion:
    """Space, limits and decision settings of one search (see the module docstring).

    Empty ``networks``/``thermometer_bits``/``unit_r`` mean: the base design's family of outputs,
    M = 1 … min(4, N), the base design's R.
    """

    networks: tuple[tuple[str, str | None], ...] = ()
    thermometer_bits: tuple[int, ...] = ()
    unit_r: tuple[float, ...] = ()
    series: tuple[str, ...] = DEFAULT_SERIES
    grades: tuple[float, ...] = DEFAULT_GRADES
    builds: tuple[str, ...] = ()
    criterion: str = "all"
    target_yield: float | None = None
    trials: int = 4000
    seed: int = 1
    confidence: float = 0.95
    method: str = "clopper-pearson"
    max_iref: float = math.inf
    max_rout: float = math.inf
    max_settling: float = math.inf
    max_noise_lsb: float = math.inf
    max_glitch: float = math.inf
    max_transition_settling: float = math.inf
    ratings: bool = True
    given: tuple[str, ...] = field(default=(), compare=False)

    def __post_init__(self) -> None:
        if self.criterion not in CRITERIA:
            raise DesignError("criterion", f"{self.criterion!r} is not one of " + ", ".join(CRITERIA))
        if self.method not in METHODS:
            raise DesignError("method", f"{self.method!r} is not one of " + ", ".join(METHODS))
        for key, spec in QUESTION_SPECS.items():
            value = getattr(self, key)
            if value is not None:
                object.__setattr__(self, key, spec.check(key, value))
        for key in LIMIT_KEYS:
            object.__setattr__(self, key, LIMIT_SPEC.check(key, getattr(self, key)))

    # --- the space ---------------------------------------------------------------------------
    def network_choices(self, base: Design) -> tuple[tuple[str, str], ...]:
        """(topology, output) pairs tried for ``base``."""
        if not self.networks:
            return family_networks(str(base.output))
        return tuple((t, o or OUTPUTS_BY_TOPOLOGY[t][0]) for t, o in self.networks)

    def m_choices(self, base: Design) -> tuple[int, ...]:
        """Thermometer bits M tried for segmented networks (clipped to N)."""
        ms = self.thermometer_bits or tuple(range(1, min(4, base.bits) + 1))
        return tuple(m for m in ms if m <= min(base.bits, MAX_ARRAY_BITS)) or (0,)

    def networks_of(self, base: Design) -> list[Design]:
        """Every network (grade not yet chosen) of the space around ``base``."""
        out, seen = [], set()
        for topo, output in self.network_choices(base):
            if topo == "string" and base.bits > MAX_ARRAY_BITS:
                continue
            shaped = base.replace(topology=topo, output=output, name="", parts={})
            unused = unused_build_keys(shaped)
            builds = []
            for entry in self.builds or (AS_DESIGNED,):
                table = build_of(entry, base.build)
                table = {k: v for k, v in table.items() if k not in unused}
                if table not in builds:
                    builds.append(table)
            for m in self.m_choices(base) if topo == "segmented" else (None,):
                for r in self.unit_r or (base.unit_r,):
                    for s in self.series:
                        for b in builds:
                            d = shaped.replace(thermometer_bits=m if m is not None
                                               else base.thermometer_bits, unit_r=r, series=s,
                                               build=b, parts={})
                            key = repr(sorted(d.to_dict().items()))
                            if key not in seen:
                                seen.add(key)
                                out.append(d)
        return out

    def size(self, base: Design) -> int:
        """Points (network × grade) of the space."""
        return len(self.networks_of(base)) * len(self.grades)

    # --- file --------------------------------------------------------------------------------
    @classmethod
    def from_dict(cls, data: Mapping[str, Any] | None, section: str = "search") -> SearchQuestion:
        """A validated question from a ``[search]`` table; errors name ``search.<key>``."""
        data = dict(data or {})
        known = [f.name for f in fields(cls) if f.name not in {"networks", "given"}]
        known += ["topologies", "unit_series"]
        unknown = sorted(set(data) - set(known))
        if unknown:
            raise DesignError(f"{section}.{unknown[0]}", "unknown key; known keys: "
                              + ", ".join(sorted(known)))
        kw: dict[str, Any] = {}
        try:
            if "topologies" in data:
                items = data["topologies"]
                items = items.replace(";", ",").split(",") if isinstance(items, str) else items
                items = [t for t in items if str(t).strip()]
                kw["networks"] = tuple(parse_network(t) for t in items)
            if "thermometer_bits" in data:
                kw["thermometer_bits"] = parse_int_range(data["thermometer_bits"], "thermometer_bits",
                                                         0, MAX_ARRAY_BITS)
            if "unit_r" in data:
                kw["unit_r"] = parse_unit_r(data["unit_r"], str(data.get("unit_series", "E6")))
            if "series" in data:
                kw["series"] = parse_series(data["series"])
            if "grades" in data:
                kw["grades"] = parse_grades(data["grades"])
            if "builds" in data:
                kw["builds"] = parse_builds(data["builds"])
            for key in ("criterion", "method"):
                if key in data:
                    kw[key] = str(data[key])
            for key in ("target_yield", "confidence"):
                if key in data:
                    kw[key] = parse_value(data[key], key)
            for key, (_what, unit, _figure) in LIMIT_KEYS.items():
                if key in data:  # read in the limit's unit: "2 mA", "10 kΩ"
                    kw[key] = parse_quantity(data[key], unit, key)
            for key in ("trials", "seed"):
                if key in data:
                    if isinstance(data[key], bool) or not isinstance(data[key], int):
                        raise DesignError(key, f"expected a whole number, got {data[key]!r}")
                    kw[key] = data[key]
            if "ratings" in data:
                if not isinstance(data["ratings"], bool):
                    raise DesignError("ratings", f"expected true or false, got {data['ratings']!r}")
                kw["ratings"] = data["ratings"]
            return cls(**kw, given=tuple(sorted(data)))
        except DesignError as exc:
            field_name = exc.field if exc.field.startswith(section) else f"{section}.{exc.field}"
            raise DesignError(field_name, exc.reason) from None

    def to_dict(self) -> dict[str, Any]:
        """The ``[search]`` table (limits left out when open)."""
        out: dict[str, Any] = {}
        if self.networks:
            out["topologies"] = [f"{t}:{o}" if o else t for t, o in self.networks]
        if self.thermometer_bits:
            out["thermometer_bits"] = list(self.thermometer_bits)
        if self.unit_r:
            out["unit_r"] = list(self.unit_r)
        out["series"] = list(self.series)
        out["grades"] = [f"{g * 100:g}%" for g in self.grades]
        if self.builds:
            out["builds"] = list(self.builds)
        out.update(criterion=self.criterion, trials=int(self.trials), seed=int(self.seed),
                   confidence=self.confidence, method=self.method, ratings=self.ratings)
        if self.target_yield is not None:
            out["target_yield"] = self.target_yield
        for key in LIMIT_KEYS:
            if math.isfinite(getattr(self, key)):
                out[key] = getattr(self, key)
        return out

    def updated(self, texts: Mapping[str, Any]) -> SearchQuestion:
        """This question with file-style entries (``[search]`` keys, text as a person types it)
        replacing its own; empty entries are left out. Errors name ``search.<key>``."""
        given = {k: v for k, v in texts.items() if v is not None and v != "" and v != []}
        return SearchQuestion.from_dict({**self.to_dict(), **given})

    def with_changes(self, **changes: Any) -> SearchQuestion:
        """A copy with some settings changed (validated)."""
        return replace(self, **changes)
