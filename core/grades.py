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
from .stats_result import YieldFigure
from .targets import Targets

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
    """

    design: Design
    steps: np.ndarray
    criterion: str
    trials: int
    seed: int
    yields: list[YieldFigure] = field(default_factory=list)

    @property
    def values(self) -> np.ndarray:
        """Yields of the finished steps, shape (n_done,), fraction."""
        return np.array([y.value for y in self.yields])

    def loosest(self, target: float) -> float | None:
        """The largest step whose yield is at least ``target`` (``None`` when none is)."""
        ok = [float(s) for s, y in zip(self.steps, self.yields, strict=False) if y.value >= target]
        return max(ok) if ok else None


def iter_yield_vs_tolerance(design: Design, grades: Sequence[float] = STANDARD_GRADES,
                            trials: int = 2000, seed: int = 1, targets: Targets | None = None,
                            criterion: Criterion = "all", cancel: Any = None
                            ) -> Iterator[YieldCurve]:
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

    Yields
    ------
    YieldCurve
        The curve with one more grade filled in.
    """
    curve = YieldCurve(design, np.asarray(grades, float), criterion, trials, seed)
    for grade in curve.steps:
        if cancel is not None and cancel.is_set():
            return
        *_, result = iter_monte_carlo(with_tolerance(design, grade), trials, seed, cancel=cancel,
                                      targets=targets, reports=1)
        if result.cancelled:
            return
        curve.yields.append(_pick(result, criterion))
        yield curve


def yield_vs_tolerance(design: Design, grades: Sequence[float] = STANDARD_GRADES, trials: int = 2000,
                       seed: int = 1, targets: Targets | None = None, criterion: Criterion = "all"
                       ) -> YieldCurve:
    """The whole yield-against-grade curve of ``design`` (see :func:`iter_yield_vs_tolerance`)."""
    *_, curve = iter_yield_vs_tolerance(design, grades, trials, seed, targets, criterion)
    return curve


def loosest_grade(design: Design, target_yield: float | None = None,
                  grades: Sequence[float] = STANDARD_GRADES, trials: int = 2000, seed: int = 1,
                  targets: Targets | None = None, criterion: Criterion = "all"
                  ) -> tuple[float | None, YieldCurve]:
    """The loosest standard grade whose yield meets ``target_yield``, and the curve behind it.

    Parameters
    ----------
    target_yield : float, optional
        Fraction; default ``targets.min_yield`` (0.99).

    Returns
    -------
    (grade or None, YieldCurve)
        ``None`` when even the tightest grade misses the target.
    """
    targets = targets or Targets()
    target = targets.min_yield if target_yield is None else float(target_yield)
    curve = yield_vs_tolerance(design, grades, trials, seed, targets, criterion)
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
