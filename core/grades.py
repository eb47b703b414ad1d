"""Decision helpers: yield against tolerance grade and bit count, and the loosest grade that passes.

Every grade of a curve is run with the same seed, so the boards differ only by the size of their
errors (the draws are scaled, see ``mismatch.sample_ohms``): the curve is smooth and a grade
comparison is not blurred by sampling noise between grades.
"""

from __future__ import annotations

from collections.abc import Iterator, Sequence
from dataclasses import dataclass, field
from typing import Any, Literal, get_args

import numpy as np

from .design import Design
from .errors import DesignError
from .mismatch import MismatchModel
from .montecarlo import iter_monte_carlo, monte_carlo
from .stats_result import MonteCarloResult, YieldFigure
from .targets import Targets
from .yield_decision import DEFAULT_CONFIDENCE, SequentialYield, YieldDecision

STANDARD_GRADES: tuple[float, ...] = (0.0001, 0.0002, 0.0005, 0.001, 0.0025, 0.005, 0.01, 0.02, 0.05)
"""Standard resistor tolerance grades ±0.01 % … ±5 %, fraction (the IEC 60062 tolerance letters
L, P, W, B, C, D, F, G, J — from memory)."""

Criterion = Literal["all", "monotonic", "dnl", "inl"]
"""Which yield a decision uses: every target at once, or one of them."""

CRITERIA: tuple[str, ...] = get_args(Criterion)


def with_tolerance(design: Design, tolerance: float) -> Design:
    """``design`` with its parts' (or array elements') tolerance set to ``tolerance``.

    Raises
    ------
    DesignError
        The on-chip model has no tolerance grade (its spread follows the area law).
    """
    if MismatchModel.of(design).model == "on-chip":
        raise DesignError("mismatch.model", "tolerance grades apply to discrete parts or matched "
                          "arrays, not to the on-chip area law")
    table = {**design.to_dict()["mismatch"], "tolerance": float(tolerance)}
    return design.replace(mismatch=table)


def _pick(result: Any, criterion: str) -> YieldFigure:
    if criterion not in CRITERIA:
        raise DesignError("criterion", f"{criterion!r} is not one of " + ", ".join(CRITERIA))
    return getattr(result, f"yield_{criterion}")


@dataclass
class YieldCurve:
    """Yield of one design at each tolerance grade (or bit count) of ``steps``.

    Attributes
    ----------
    design : Design
    steps : ndarray, shape (n,)
        Tolerance grades (fraction) or bit counts.
    yields : list[YieldFigure]
        One per finished step, in order (shorter than ``steps`` while running).
    criterion : str
    trials, seed : int
    decisions : list[YieldDecision | None]
        Per finished step when the run was judged against a target yield (early stopping, see
        :func:`iter_until_decided`): the decision that stopped it; otherwise empty.
    """

    design: Design
    steps: np.ndarray
    criterion: str
    trials: int
    seed: int
    yields: list[YieldFigure] = field(default_factory=list)
    decisions: list[YieldDecision | None] = field(default_factory=list)

    @property
    def values(self) -> np.ndarray:
        """Yields of the finished steps, shape (n_done,), fraction."""
        return np.array([y.value for y in self.yields])

    def loosest(self, target: float) -> float | None:
        """The largest step whose yield is at least ``target`` (``None`` when none is); where the
        steps were decided against ``target`` (:attr:`decisions`), only a step decided "meets"."""
        decided = [d for d in self.decisions if d is not None and d.target == target]
        if decided and len(decided) == len(self.yields):
            ok = [float(s) for s, d in zip(self.steps, decided, strict=False) if d.meets]
        else:
            ok = [float(s) for s, y in zip(self.steps, self.yields, strict=False)
                  if y.value >= target]
        return max(ok) if ok else None


def iter_until_decided(design: Design, trials: int, seed: int, targets: Targets | None,
                       criterion: Criterion, target_yield: float, cancel: Any = None,
                       confidence: float = DEFAULT_CONFIDENCE, reports: int = 20
                       ) -> Iterator[tuple[MonteCarloResult, YieldDecision | None]]:
    """Monte Carlo of ``design`` that stops as soon as its ``criterion`` yield is decided against
    ``target_yield`` at ``confidence`` (``yield_decision.SequentialYield``: looks at 100, 200,
    400 … boards up to ``trials``, one-sided Clopper–Pearson bounds split over the looks).

    Yields each partial result with the decision once made (``None`` before); the last one
    carries the decision ("undecided" when ``trials`` boards did not settle it), unless cancelled.
    """
    judge = SequentialYield(target_yield, trials, confidence)
    runs = iter_monte_carlo(design, trials, seed, cancel=cancel, targets=targets, reports=reports)
    try:
        for partial in runs:
            decision = judge.update(partial.passes(criterion)) if partial.done else None
            yield partial, decision
            if decision is not None:
                return
    finally:
        runs.close()


def iter_yield_vs_tolerance(design: Design, grades: Sequence[float] = STANDARD_GRADES,
                            trials: int = 2000, seed: int = 1, targets: Targets | None = None,
                            criterion: Criterion = "all", cancel: Any = None,
                            target_yield: float | None = None,
                            known: dict[float, tuple[MonteCarloResult, YieldDecision | None]]
                            | None = None) -> Iterator[YieldCurve]:
    """Yield at each grade, one grade at a time (each yield is the partial curve so far).

    Parameters
    ----------
    design : Design
    grades : sequence of float
        Tolerances, fraction (default ``STANDARD_GRADES``).
    trials, seed : int
        Per grade; the same seed for every grade.
    targets : Targets, optional
    criterion : {"all", "monotonic", "dnl", "inl"}
    cancel : object with ``is_set()``, optional
        Checked between grades and inside each grade's run; the generator stops early when set.
    target_yield : float, optional
        When given, each grade's run stops as soon as its yield is decided against it
        (:func:`iter_until_decided`); the decisions are in ``YieldCurve.decisions``.
    known : dict grade → (result, decision), optional
        Runs already made at a grade with the same trials, seed, targets and rule (the Statistics
        view's run at its chosen grade): reused, not run again.

    Yields
    ------
    YieldCurve
        The curve with one more grade filled in.
    """
    curve = YieldCurve(design, np.asarray(grades, float), criterion, trials, seed)
    for grade in curve.steps:
        if cancel is not None and cancel.is_set():
            return
        graded = with_tolerance(design, grade)
        if known and float(grade) in known:
            result, decision = known[float(grade)]
        elif target_yield is None:
            *_, result = iter_monte_carlo(graded, trials, seed, cancel=cancel, targets=targets,
                                          reports=1)
            decision = None
        else:
            *_, (result, decision) = iter_until_decided(graded, trials, seed, targets, criterion,
                                                        target_yield, cancel)
        if result.cancelled:
            return
        curve.yields.append(_pick(result, criterion))
        if decision is not None:
            curve.decisions.append(decision)
        yield curve


def yield_vs_tolerance(design: Design, grades: Sequence[float] = STANDARD_GRADES, trials: int = 2000,
                       seed: int = 1, targets: Targets | None = None, criterion: Criterion = "all",
                       target_yield: float | None = None) -> YieldCurve:
    """The whole yield-against-grade curve of ``design`` (see :func:`iter_yield_vs_tolerance`)."""
    *_, curve = iter_yield_vs_tolerance(design, grades, trials, seed, targets, criterion,
                                        target_yield=target_yield)
    return curve


def loosest_grade(design: Design, target_yield: float | None = None,
                  grades: Sequence[float] = STANDARD_GRADES, trials: int = 2000, seed: int = 1,
                  targets: Targets | None = None, criterion: Criterion = "all",
                  early_stop: bool = False) -> tuple[float | None, YieldCurve]:
    """The loosest standard grade whose yield meets ``target_yield``, and the curve behind it.

    Parameters
    ----------
    target_yield : float, optional
        Fraction; default ``targets.min_yield`` (0.99).
    early_stop : bool
        Stop each grade's run once its yield is decided against the target
        (:func:`iter_until_decided`); a grade then counts only when decided "meets".

    Returns
    -------
    (grade or None, YieldCurve)
        ``None`` when even the tightest grade misses the target.
    """
    targets = targets or Targets()
    target = targets.min_yield if target_yield is None else float(target_yield)
    curve = yield_vs_tolerance(design, grades, trials, seed, targets, criterion,
                               target if early_stop else None)
    return curve.loosest(target), curve


def yield_vs_bits(design: Design, bits: Sequence[int], trials: int = 2000, seed: int = 1,
                  targets: Targets | None = None, criterion: Criterion = "all") -> YieldCurve:
    """Yield of ``design`` at each resolution in ``bits`` (its tolerance unchanged)."""
    curve = YieldCurve(design, np.asarray(bits, float), criterion, trials, seed)
    for n in bits:
        result = monte_carlo(design.replace(bits=int(n)), trials, seed, targets=targets)
        curve.yields.append(_pick(result, criterion))
    return curve


def grade_vs_bits(design: Design, bits: Sequence[int], target_yield: float | None = None,
                  grades: Sequence[float] = STANDARD_GRADES, trials: int = 2000, seed: int = 1,
                  targets: Targets | None = None, criterion: Criterion = "all"
                  ) -> dict[int, float | None]:
    """The loosest grade meeting ``target_yield`` at each resolution in ``bits``."""
    return {int(n): loosest_grade(design.replace(bits=int(n)), target_yield, grades, trials, seed,
                                  targets, criterion)[0] for n in bits}
