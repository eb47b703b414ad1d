"""The result of a Monte Carlo run: per-trial arrays, yields with standard errors, percentiles and
the per-code INL envelope. Figures are computed from the stored arrays when asked, so a partial
result (``done < trials``) is cheap to hand out.
"""

from __future__ import annotations

import dataclasses
import math
from dataclasses import dataclass, field
from typing import Any

import numpy as np

from . import figure_registry
from .design import Design
from .formatting import format_percent
from .mismatch import MismatchModel
from .targets import Targets

PER_TRIAL = ("max_abs_inl_endpoint", "max_abs_inl_bestfit", "max_abs_dnl", "monotonic", "offset",
             "gain_error")
"""Per-trial arrays every result carries, shape (trials,)."""

PERCENTILES = (1.0, 5.0, 50.0, 95.0, 99.0)
"""Percentiles reported for each per-trial figure, %."""

ENVELOPE_BANDS = (1.0, 50.0, 99.0)
"""Percentiles of the per-code INL envelope, %."""

YIELDS: dict[str, str] = {f.key: f.label for f in figure_registry.YIELDS}
"""Yield fields and their labels."""

STAT_UNITS: dict[str, str] = {
    "max_abs_inl_endpoint": "LSB", "max_abs_inl_bestfit": "LSB", "max_abs_dnl": "LSB",
    "offset": "V", "gain_error": "fraction",
}
"""Unit of each numeric per-trial figure."""


@dataclass(frozen=True)
class YieldFigure:
    """A yield: fraction of trials that pass, its standard error √(p(1 − p)/n), and the counts."""

    value: float
    stderr: float
    passed: int
    trials: int

    @classmethod
    def of(cls, passed: np.ndarray) -> YieldFigure:
        """From a boolean array of trials, shape (n,)."""
        n = int(passed.size)
        k = int(np.count_nonzero(passed))
        p = k / n if n else math.nan
        return cls(p, math.sqrt(p * (1 - p) / n) if n else math.nan, k, n)

    def __float__(self) -> float:
        return self.value

    def text(self) -> str:
        """``"98.73 % ± 0.1125 %"`` (the one formatter's percent)."""
        return f"{format_percent(self.value)} ± {format_percent(self.stderr)}"


@dataclass
class MonteCarloResult:
    """Statistics of one design over random boards.

    Attributes
    ----------
    design : Design
    seed : int
        Seed of the numpy Generator; (design, trials, seed) reproduces the result exactly.
    trials : int
        Trials asked for; ``done`` of them are in the arrays.
    engine : str
        ``"exact"`` (per-bit weights) or ``"general"`` (every code solved).
    model : MismatchModel
        The mismatch settings used (defaults filled in).
    targets : Targets
        The limits the yields judge against (|INL|, |DNL|, monotonic, INL line).
    max_abs_inl_endpoint, max_abs_inl_bestfit, max_abs_dnl : ndarray, shape (done,), LSB
    monotonic : ndarray of bool, shape (done,)
    offset : ndarray, shape (done,), volts — V(0) (the ideal is 0 V)
    gain_error : ndarray, shape (done,), fraction — endpoint LSB / ideal LSB − 1
    envelope_codes : ndarray of int, shape (n_env,)
        Codes of the INL envelope (every code up to 4096 codes, else evenly spread).
    cancelled : bool
    """

    design: Design
    seed: int
    trials: int
    engine: str
    model: MismatchModel
    targets: Targets
    envelope_codes: np.ndarray
    done: int = 0
    cancelled: bool = False
    plan_text: str = ""
    _arrays: dict[str, np.ndarray] = field(default_factory=dict, repr=False)
    _inl: np.ndarray = field(default_factory=lambda: np.zeros((0, 0), np.float32), repr=False)

    # --- filling -------------------------------------------------------------------------------
    @classmethod
    def allocate(cls, design: Design, seed: int, plan: Any, model: MismatchModel, targets: Targets
                 ) -> MonteCarloResult:
        """An empty result with room for every trial of ``plan``."""
        arrays = {k: np.zeros(plan.trials, dtype=bool if k == "monotonic" else float)
                  for k in PER_TRIAL}
        inl = np.zeros((plan.envelope_trials, plan.envelope_codes.size), dtype=np.float32)
        return cls(design, seed, plan.trials, plan.engine, model, targets, plan.envelope_codes,
                   plan_text=plan.describe(), _arrays=arrays, _inl=inl)

    def store(self, start: int, figures: dict[str, np.ndarray], inl: np.ndarray) -> None:
        """Put one batch's per-trial figures (and envelope INL rows) in place."""
        n = figures["monotonic"].shape[0]
        for key in PER_TRIAL:
            self._arrays[key][start:start + n] = figures[key]
        rows = min(n, self._inl.shape[0] - start)
        if rows > 0:
            self._inl[start:start + rows] = inl[:rows]
        self.done = start + n

    def snapshot(self) -> MonteCarloResult:
        """A partial result that stays valid while this one keeps filling (arrays copied)."""
        return dataclasses.replace(self, _arrays={k: v[:self.done].copy() for k, v in
                                                  self._arrays.items()},
                                   _inl=self._inl[:min(self.done, self._inl.shape[0])].copy())

    # --- figures -------------------------------------------------------------------------------
    @property
    def complete(self) -> bool:
        """True when every trial asked for is done."""
        return self.done == self.trials and not self.cancelled

    def _get(self, key: str) -> np.ndarray:
        return self._arrays[key][:self.done]

    max_abs_inl_endpoint = property(lambda self: self._get("max_abs_inl_endpoint"))
    max_abs_inl_bestfit = property(lambda self: self._get("max_abs_inl_bestfit"))
    max_abs_dnl = property(lambda self: self._get("max_abs_dnl"))
    monotonic = property(lambda self: self._get("monotonic"))
    offset = property(lambda self: self._get("offset"))
    gain_error = property(lambda self: self._get("gain_error"))

    @property
    def max_abs_inl(self) -> np.ndarray:
        """Max |INL| of the line the targets use (``targets.inl_line``), shape (done,), LSB."""
        return self._get(f"max_abs_inl_{self.targets.inl_line}")

    def passes(self, criterion: str) -> np.ndarray:
        """Per board, shape (done,): whether it meets ``criterion`` — ``"monotonic"``, ``"dnl"``
        (max |DNL| ≤ ``targets.max_dnl_lsb``), ``"inl"`` (max |INL| ≤ ``targets.max_inl_lsb``) or
        ``"all"`` (every target at once, judged jointly per board; monotonic only when the targets
        ask for it)."""
        if criterion == "monotonic":
            return self.monotonic
        dnl_ok = self.max_abs_dnl <= self.targets.max_dnl_lsb
        if criterion == "dnl":
            return dnl_ok
        inl_ok = self.max_abs_inl <= self.targets.max_inl_lsb
        if criterion == "inl":
            return inl_ok
        if criterion != "all":
            raise ValueError(f"unknown yield criterion {criterion!r}")
        return dnl_ok & inl_ok & self.monotonic if self.targets.monotonic else dnl_ok & inl_ok

    @property
    def yield_monotonic(self) -> YieldFigure:
        """Share of monotonic boards."""
        return YieldFigure.of(self.passes("monotonic"))

    @property
    def yield_dnl(self) -> YieldFigure:
        """Share of boards with max |DNL| ≤ ``targets.max_dnl_lsb``."""
        return YieldFigure.of(self.passes("dnl"))

    @property
    def yield_inl(self) -> YieldFigure:
        """Share of boards with max |INL| ≤ ``targets.max_inl_lsb``."""
        return YieldFigure.of(self.passes("inl"))

    @property
    def yield_all(self) -> YieldFigure:
        """Share of boards that meet every target at once (see :meth:`passes`)."""
        return YieldFigure.of(self.passes("all"))

    def yields(self) -> dict[str, YieldFigure]:
        """Every yield by field name (``YIELDS`` order)."""
        return {key: getattr(self, key) for key in YIELDS}

    @property
    def percentiles(self) -> dict[str, dict[float, float]]:
        """``PERCENTILES`` of each numeric per-trial figure: ``{figure: {percent: value}}``."""
        out = {}
        for key in STAT_UNITS:
            x = self._get(key)
            vals = np.percentile(x, PERCENTILES) if x.size else np.full(len(PERCENTILES), np.nan)
            out[key] = dict(zip(PERCENTILES, (float(v) for v in vals), strict=True))
        return out

    @property
    def envelope_trials(self) -> int:
        """Trials behind the INL envelope (the first ones, up to a memory budget)."""
        return min(self.done, self._inl.shape[0])

    @property
    def inl_envelope(self) -> np.ndarray:
        """Per-code INL bands at ``ENVELOPE_BANDS`` (1 %, 50 %, 99 %); shape (3, n_env), LSB."""
        rows = self._inl[:self.envelope_trials]
        if rows.shape[0] == 0:
            return np.full((len(ENVELOPE_BANDS), self.envelope_codes.size), np.nan)
        return np.percentile(rows.astype(float), ENVELOPE_BANDS, axis=0)

    def to_dict(self) -> dict[str, Any]:
        """The summary as plain JSON-ready values (per-trial arrays left out)."""
        def plain(x: float) -> float | None:
            return float(x) if math.isfinite(x) else None

        m, t = self.model, self.targets
        return {
            "seed": self.seed, "trials": self.trials, "done": self.done, "engine": self.engine,
            "cancelled": self.cancelled, "model": m.describe(),
            "targets": t.to_dict(),
            "yields": {k: {"value": plain(y.value), "stderr": plain(y.stderr), "passed": y.passed}
                       for k, y in self.yields().items()},
            "percentiles": {k: {f"p{p:g}": plain(v) for p, v in d.items()}
                            for k, d in self.percentiles.items()},
            "mean": {k: plain(float(np.mean(self._get(k)))) if self.done else None
                     for k in STAT_UNITS},
        }
