"""Deciding whether a Monte Carlo yield is above or below a target, at a stated confidence.

A yield estimated from n boards is uncertain; comparing the plain estimate with the target says
"meets" about half the time for a design whose true yield sits on the target. Here a yield
**meets** only when a one-sided lower confidence bound is at or above the target, **fails** only
when a one-sided upper bound is below it, and is **undecided** otherwise — never "meets".

Methods (named in every decision's ``method`` text):

- ``"clopper-pearson"`` — exact binomial bounds from the beta distribution (Clopper and Pearson
  1934); never below their nominal confidence. The default.
- ``"wilson"`` — Wilson's score bounds (Wilson 1927); close to nominal, slightly narrower.
- ``"wald-sprt"`` — Wald's sequential probability ratio test (Wald 1945) between the yields
  ``target ± margin``; errors are bounded at those two yields, not inside the margin.

With no failures the lower bound is the one-sided bound (for Clopper–Pearson (1 − confidence)^(1/n),
about 1 − 3/n at 95 %), never an estimate "± 0 %".

Early stopping: decide at a fixed schedule of trial counts (:func:`look_schedule`); each look uses
(1 − confidence)/looks (Bonferroni), so the chance that *any* look decides wrongly stays within
1 − confidence. :class:`SequentialYield` does the bookkeeping from a growing per-board pass array.
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import dataclass
from typing import Literal, get_args

import numpy as np
from scipy import stats

from .formatting import format_percent, format_quantity

Verdict = Literal["meets", "fails", "undecided"]
Method = Literal["clopper-pearson", "wilson", "wald-sprt"]
METHODS: tuple[str, ...] = get_args(Method)

METHOD_NAMES = {"clopper-pearson": "Clopper–Pearson exact bound", "wilson": "Wilson score bound",
                "wald-sprt": "Wald sequential probability ratio test"}
"""How each method is named in output."""

DEFAULT_CONFIDENCE = 0.95
DEFAULT_MARGIN = 0.005
"""Half-width of the SPRT's indifference zone around the target, fraction of boards."""


@dataclass(frozen=True)
class YieldDecision:
    """One yield judged against a target.

    Attributes
    ----------
    verdict : {"meets", "fails", "undecided"}
    passed, trials : int
        Boards that met the criterion, boards tried.
    target : float
        Yield asked for, fraction.
    confidence : float
        Chance that a "meets" or "fails" is right (over all looks when there were several).
    lower, upper : float
        One-sided bounds at the per-look confidence, fraction (Clopper–Pearson for the SPRT,
        shown for information).
    method : str
        What decided it, in words (e.g. "Clopper–Pearson exact bound, one-sided 95 %").
    """

    verdict: Verdict
    passed: int
    trials: int
    target: float
    confidence: float
    lower: float
    upper: float
    method: str

    @property
    def estimate(self) -> float:
        """passed / trials (NaN with no trials)."""
        return self.passed / self.trials if self.trials else math.nan

    @property
    def meets(self) -> bool:
        """True only when decided above the target."""
        return self.verdict == "meets"

    @property
    def no_failures(self) -> bool:
        """Every board passed: show the lower bound, not an estimate ± 0."""
        return self.trials > 0 and self.passed == self.trials

    def yield_text(self) -> str:
        """``"≥ 99.70 %"`` with no failures, else ``"98.73 % (97.9 … 99.3 %)"``."""
        if not self.trials:
            return "no boards"
        if self.no_failures:
            return f"≥ {format_percent(self.lower)}"
        return (f"{format_percent(self.estimate)} ({format_quantity(self.lower * 100)} … "
                f"{format_percent(self.upper)})")

    def text(self) -> str:
        """One line: verdict, yield, boards and method."""
        word = {"meets": "meets", "fails": "misses", "undecided": "undecided against"}[self.verdict]
        return (f"{word} {format_percent(self.target)}: {self.yield_text()} over {self.trials} boards "
                f"[{self.method}]")

    def to_dict(self) -> dict[str, object]:
        """Plain values for JSON."""
        return {"verdict": self.verdict, "passed": self.passed, "trials": self.trials,
                "target": self.target, "confidence": self.confidence, "lower": self.lower,
                "upper": self.upper, "method": self.method}


def _check(passed: int, trials: int, target: float, confidence: float) -> None:
    if not (0 <= passed <= trials):
        raise ValueError(f"passed must be within 0 … trials, got {passed} of {trials}")
    if not (0.0 <= target <= 1.0):
        raise ValueError(f"target yield must be within 0 … 1, got {target!r}")
    if not (0.5 <= confidence < 1.0):
        raise ValueError(f"confidence must be within 0.5 … 1 (exclusive), got {confidence!r}")


def clopper_pearson_bounds(passed: int, trials: int, alpha: float) -> tuple[float, float]:
    """One-sided exact bounds (lower, upper), each with error probability ≤ ``alpha``.

    lower = Beta⁻¹(α; k, n − k + 1) (0 when k = 0), upper = Beta⁻¹(1 − α; k + 1, n − k)
    (1 when k = n). With no trials: (0, 1).
    """
    k, n = int(passed), int(trials)
    if n == 0:
        return 0.0, 1.0
    lower = 0.0 if k == 0 else float(stats.beta.ppf(alpha, k, n - k + 1))
    upper = 1.0 if k == n else float(stats.beta.ppf(1 - alpha, k + 1, n - k))
    return lower, upper


def wilson_bounds(passed: int, trials: int, alpha: float) -> tuple[float, float]:
    """One-sided Wilson score bounds (lower, upper) at error probability ``alpha`` each.

    The roots p of (p̂ − p)² = z²·p(1 − p)/n with z = Φ⁻¹(1 − α). With no trials: (0, 1).
    """
    n = int(trials)
    if n == 0:
        return 0.0, 1.0
    z = float(stats.norm.ppf(1 - alpha))
    p = passed / n
    denom = 1 + z * z / n
    centre = (p + z * z / (2 * n)) / denom
    half = z / denom * math.sqrt(p * (1 - p) / n + z * z / (4 * n * n))
    return max(0.0, centre - half), min(1.0, centre + half)


def _bounds(method: str, passed: int, trials: int, alpha: float) -> tuple[float, float]:
    if method == "wilson":
        return wilson_bounds(passed, trials, alpha)
    return clopper_pearson_bounds(passed, trials, alpha)


def _percent(x: float) -> str:
    return format_percent(x)


def decide_yield(passed: int, trials: int, target: float, confidence: float = DEFAULT_CONFIDENCE,
                 method: Method = "clopper-pearson", looks: int = 1,
                 margin: float = DEFAULT_MARGIN) -> YieldDecision:
    """Decide ``passed`` of ``trials`` boards against ``target`` (fractions).

    Parameters
    ----------
    passed, trials : int
    target : float
        Yield asked for, 0 … 1.
    confidence : float
        Overall chance of a right decision, 0.5 … 1 (default 0.95).
    method : {"clopper-pearson", "wilson", "wald-sprt"}
    looks : int
        How many times this run is (or may be) looked at; each look uses (1 − confidence)/looks.
        Not used by the SPRT, which is sequential by construction.
    margin : float
        SPRT only: the test is between yields ``target − margin`` and ``target + margin``.

    Returns
    -------
    YieldDecision
    """
    _check(passed, trials, target, confidence)
    if method not in METHODS:
        raise ValueError(f"method {method!r} is not one of " + ", ".join(METHODS))
    looks = max(1, int(looks))
    if method == "wald-sprt":
        return wald_sprt(passed, trials, target, confidence, margin)
    alpha = (1 - confidence) / looks
    lower, upper = _bounds(method, passed, trials, alpha)
    if lower >= target:
        verdict: Verdict = "meets"
    elif upper < target:
        verdict = "fails"
    else:
        verdict = "undecided"
    split = f", split over {looks} looks" if looks > 1 else ""
    text = f"{METHOD_NAMES[method]}, one-sided {_percent(confidence)}{split}"
    return YieldDecision(verdict, int(passed), int(trials), float(target), float(confidence),
                         lower, upper, text)


def sprt_limits(target: float, confidence: float, margin: float) -> tuple[float, float, float, float]:
    """Wald's log-likelihood steps and stopping limits for yields p0 = target − margin (fails)
    and p1 = target + margin (meets), α = β = 1 − confidence.

    Returns
    -------
    (per_pass, per_fail, lower_limit, upper_limit)
        The log-likelihood ratio ln L1/L0 grows by ``per_pass`` per passing board and by
        ``per_fail`` per failing one; ≥ ``upper_limit`` = ln((1 − β)/α) → meets,
        ≤ ``lower_limit`` = ln(β/(1 − α)) → fails.
    """
    p0, p1 = max(target - margin, 1e-12), min(target + margin, 1 - 1e-12)
    if not p0 < p1:
        raise ValueError("the SPRT needs target − margin < target + margin within 0 … 1")
    alpha = beta = 1 - confidence
    return (math.log(p1 / p0), math.log((1 - p1) / (1 - p0)), math.log(beta / (1 - alpha)),
            math.log((1 - beta) / alpha))


def wald_sprt(passed: int, trials: int, target: float, confidence: float = DEFAULT_CONFIDENCE,
              margin: float = DEFAULT_MARGIN) -> YieldDecision:
    """Wald's sequential test on a count (the likelihood ratio depends only on the counts).

    Decided as soon as the ratio crosses a limit after the last board; a sequence that crossed
    earlier and came back is judged by its final count here — use :class:`SequentialYield` to
    stop at the first crossing.
    """
    _check(passed, trials, target, confidence)
    step_pass, step_fail, low, high = sprt_limits(target, confidence, margin)
    llr = passed * step_pass + (trials - passed) * step_fail
    verdict: Verdict = "meets" if llr >= high else "fails" if llr <= low else "undecided"
    lower, upper = clopper_pearson_bounds(passed, trials, 1 - confidence)
    text = (f"{METHOD_NAMES['wald-sprt']}, {_percent(target - margin)} against "
            f"{_percent(target + margin)}, α = β = {format_quantity(1 - confidence)}")
    return YieldDecision(verdict, int(passed), int(trials), float(target), float(confidence),
                         lower, upper, text)


def look_schedule(budget: int, first: int = 100, factor: float = 2.0) -> tuple[int, ...]:
    """Trial counts at which a run is looked at: ``first``, ×``factor`` …, ending at ``budget``."""
    budget, first = int(budget), max(1, int(first))
    if budget < 1:
        raise ValueError(f"the trial budget must be at least 1, got {budget}")
    looks: list[int] = []
    n = min(first, budget)
    while n < budget:
        looks.append(n)
        n = max(n + 1, math.ceil(n * factor))
    looks.append(budget)
    return tuple(looks)


class SequentialYield:
    """Early stopping for one point: feed the growing per-board pass array, stop when decided.

    Looks are made at ``look_schedule(budget, first)``; a confidence-bound method splits
    1 − confidence over those looks, the SPRT checks every board and stops at its first crossing.
    The decision depends only on the boards in order, never on how they arrived in batches.
    """

    def __init__(self, target: float, budget: int, confidence: float = DEFAULT_CONFIDENCE,
                 method: Method = "clopper-pearson", first: int = 100,
                 margin: float = DEFAULT_MARGIN) -> None:
        _check(0, 0, target, confidence)
        if method not in METHODS:
            raise ValueError(f"method {method!r} is not one of " + ", ".join(METHODS))
        self.target, self.confidence, self.method, self.margin = target, confidence, method, margin
        self.looks = look_schedule(budget, first)
        self.budget = self.looks[-1]
        self.decision: YieldDecision | None = None
        self._next = 0

    def update(self, passed: Sequence[bool] | np.ndarray) -> YieldDecision | None:
        """Judge the boards so far (``passed``: one bool per board, in board order).

        Returns the decision once made (then it never changes), the final "undecided" when the
        budget is used up, else None.
        """
        if self.decision is not None:
            return self.decision
        ok = np.asarray(passed, bool)
        if self.method == "wald-sprt":
            return self._update_sprt(ok)
        while self._next < len(self.looks) and self.looks[self._next] <= ok.size:
            n = self.looks[self._next]
            self._next += 1
            d = decide_yield(int(np.count_nonzero(ok[:n])), n, self.target, self.confidence,
                             self.method, looks=len(self.looks))
            if d.verdict != "undecided" or n >= self.budget:
                self.decision = d
                return d
        return None

    def _update_sprt(self, ok: np.ndarray) -> YieldDecision | None:
        step_pass, step_fail, low, high = sprt_limits(self.target, self.confidence, self.margin)
        seen = min(ok.size, self.budget)
        start = self._next
        if seen <= start:
            return None
        llr = np.cumsum(np.where(ok[:seen], step_pass, step_fail))[start:]
        crossed = np.flatnonzero((llr >= high) | (llr <= low))
        self._next = seen
        if crossed.size:
            n = start + int(crossed[0]) + 1
        elif seen >= self.budget:
            n = self.budget
        else:
            return None
        self.decision = wald_sprt(int(np.count_nonzero(ok[:n])), n, self.target, self.confidence,
                                  self.margin)
        return self.decision
