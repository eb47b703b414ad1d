"""What a design must meet at review, and how a Monte Carlo run is set up; both are saved in files.

``Targets`` are the limits a candidate is judged against (the report's recommendation is derived
from them); ``AnalysisSettings`` holds the trial count and seed so a statistics run can be repeated.
"""

from __future__ import annotations

import math
from collections.abc import Mapping
from dataclasses import asdict, dataclass
from typing import Any, Literal, get_args

from .errors import DesignError

InlLine = Literal["endpoint", "bestfit"]
"""Which reference line the INL target uses (IEEE Std 1241 terms: terminal-based or least squares)."""

INL_LINES: tuple[str, ...] = get_args(InlLine)

MAX_SEED = 2**63 - 1
"""Largest seed accepted (numpy Generators take any non-negative integer; TOML stores 64-bit)."""

MAX_TRIALS = 10_000_000
"""Largest Monte Carlo trial count accepted."""


def _number(section: str, key: str, value: Any, low: float, high: float) -> float:
    if isinstance(value, bool) or not isinstance(value, int | float):
        raise DesignError(f"{section}.{key}", f"expected a number, got {value!r}")
    x = float(value)
    if not (math.isfinite(x) and low <= x <= high):
        raise DesignError(f"{section}.{key}", f"{value!r} is out of range; allowed: {low:g} … {high:g}")
    return x


def _whole(section: str, key: str, value: Any, low: int, high: int) -> int:
    if isinstance(value, bool) or not isinstance(value, int):
        raise DesignError(f"{section}.{key}", f"expected a whole number from {low} to {high}, got "
                          f"{value!r}")
    if not low <= value <= high:
        raise DesignError(f"{section}.{key}", f"{value} is out of range; allowed: {low} … {high}")
    return value


def _check_keys(section: str, data: Mapping[str, Any], known: tuple[str, ...]) -> None:
    if not isinstance(data, Mapping):
        raise DesignError(section, "must be a table")
    unknown = sorted(set(data) - set(known))
    if unknown:
        raise DesignError(f"{section}.{unknown[0]}", "unknown key; known keys: " + ", ".join(known))


@dataclass(frozen=True)
class Targets:
    """Limits a candidate must meet.

    Attributes
    ----------
    max_inl_lsb, max_dnl_lsb : float
        Largest allowed |INL| and |DNL|, LSB (common practice: ½ LSB each).
    monotonic : bool
        Whether the transfer curve must be monotonic.
    inl_line : {"endpoint", "bestfit"}
        Reference line of the INL target.
    min_yield : float
        Smallest acceptable Monte Carlo yield (fraction) when statistics are computed.
    """

    max_inl_lsb: float = 0.5
    max_dnl_lsb: float = 0.5
    monotonic: bool = True
    inl_line: str = "endpoint"
    min_yield: float = 0.99

    @classmethod
    def from_dict(cls, data: Mapping[str, Any], section: str = "targets") -> Targets:
        """Validated targets from a file table; bad values raise ``DesignError("targets.key", …)``."""
        _check_keys(section, data, tuple(f for f in asdict(cls())))
        out: dict[str, Any] = {}
        for key in ("max_inl_lsb", "max_dnl_lsb"):
            if key in data:
                out[key] = _number(section, key, data[key], 0.0, 1e9)
        if "min_yield" in data:
            out["min_yield"] = _number(section, "min_yield", data["min_yield"], 0.0, 1.0)
        if "monotonic" in data:
            if not isinstance(data["monotonic"], bool):
                raise DesignError(f"{section}.monotonic", f"expected true or false, got "
                                  f"{data['monotonic']!r}")
            out["monotonic"] = data["monotonic"]
        if "inl_line" in data:
            if data["inl_line"] not in INL_LINES:
                raise DesignError(f"{section}.inl_line", f"{data['inl_line']!r} is not one of "
                                  + ", ".join(INL_LINES))
            out["inl_line"] = data["inl_line"]
        return cls(**out)

    def to_dict(self) -> dict[str, Any]:
        """Plain values, the file's keys."""
        return asdict(self)


@dataclass(frozen=True)
class AnalysisSettings:
    """How statistics are run: ``trials`` Monte Carlo trials from a numpy Generator seeded ``seed``."""

    trials: int = 1000
    seed: int = 1

    @classmethod
    def from_dict(cls, data: Mapping[str, Any], section: str = "analysis") -> AnalysisSettings:
        """Validated settings from a file table."""
        _check_keys(section, data, ("trials", "seed"))
        out: dict[str, Any] = {}
        if "trials" in data:
            out["trials"] = _whole(section, "trials", data["trials"], 1, MAX_TRIALS)
        if "seed" in data:
            out["seed"] = _whole(section, "seed", data["seed"], 0, MAX_SEED)
        return cls(**out)

    def to_dict(self) -> dict[str, Any]:
        """Plain values, the file's keys."""
        return asdict(self)
