"""What a design must meet at review, and how a Monte Carlo run is set up; both are saved in files.

``Targets`` are the limits a candidate is judged against (the report's recommendation is derived
from them); ``AnalysisSettings`` holds the trial count and seed so a statistics run can be repeated.
"""

from __future__ import annotations

from collections.abc import Mapping
from dataclasses import asdict, dataclass
from typing import Any, Literal, get_args

from .errors import DesignError
from .ranges import FRACTION, FieldSpec

InlLine = Literal["endpoint", "bestfit"]
"""Which reference line the INL target uses (IEEE Std 1241 terms: terminal-based or least squares)."""

INL_LINES: tuple[str, ...] = get_args(InlLine)

MAX_SEED = 2**63 - 1
"""Largest seed accepted (numpy Generators take any non-negative integer; TOML stores 64-bit)."""

MAX_TRIALS = 10_000_000
"""Largest Monte Carlo trial count accepted."""


TARGET_SPECS: dict[str, FieldSpec] = {
    "max_inl_lsb": FieldSpec("Largest |INL|", "LSB", 0.0, 1e9, default=0.5),
    "max_dnl_lsb": FieldSpec("Largest |DNL|", "LSB", 0.0, 1e9, default=0.5),
    "min_yield": FieldSpec("Smallest yield", FRACTION, 0.0, 1.0, default=0.99),
}
"""Numeric review targets."""

RUN_SPECS: dict[str, FieldSpec] = {
    "trials": FieldSpec("Monte Carlo trials", "", 1, MAX_TRIALS, default=1000, integer=True),
    "seed": FieldSpec("Random seed", "", 0, MAX_SEED, default=1, integer=True),
}
"""How a statistics run is set up."""


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
        for key, spec in TARGET_SPECS.items():
            if key in data:
                out[key] = spec.check(f"{section}.{key}", data[key])
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
        for key, spec in RUN_SPECS.items():
            if key in data:
                out[key] = spec.check(f"{section}.{key}", data[key])
        return cls(**out)

    def to_dict(self) -> dict[str, Any]:
        """Plain values, the file's keys."""
        return asdict(self)
