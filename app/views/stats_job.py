"""The statistics view's background job, without Qt: each candidate's Monte Carlo run at the chosen
grade, then its yield-against-grade curve, reported chunk by chunk as ``workers.Progress``.

Every run stops as soon as its yield is decided against the target yield at the stated confidence
(``grades.iter_until_decided``, the rule the design search uses too), so a clear pass or miss
costs a few hundred boards, not the whole budget.
"""

from __future__ import annotations

import threading
from collections.abc import Iterator
from dataclasses import dataclass, field
from typing import Any

from rungwise.core import Design
from rungwise.core.errors import DesignError
from rungwise.core.grades import (
    STANDARD_GRADES,
    YieldCurve,
    iter_until_decided,
    iter_yield_vs_tolerance,
    with_tolerance,
)
from rungwise.core.mismatch import MismatchModel
from rungwise.core.nominal_reason import loosest_grade_words
from rungwise.core.stats_result import MonteCarloResult
from rungwise.core.targets import Targets
from rungwise.core.yield_decision import YieldDecision


@dataclass(frozen=True)
class StatsRequest:
    """What to run: candidates, trials, seed, an optional grade for every part, the decision rule."""

    designs: tuple[Design, ...]
    trials: int = 2000
    seed: int = 1
    grade: float | None = None
    criterion: str = "monotonic"
    target_yield: float = 0.99
    targets: Targets = field(default_factory=Targets)


@dataclass
class StatsOutcome:
    """Per candidate: the run at the chosen grade, its decision against the target yield and the
    yield curve (``None`` where it has none)."""

    request: StatsRequest
    results: list[MonteCarloResult | None]
    curves: list[YieldCurve | None]
    notes: list[str]
    reasons: list[str] = field(default_factory=list)
    """Per candidate: the loosest-grade answer in words when no grade passes (the nominal design's
    real reason, ``nominal_reason.loosest_grade_words``), else ""."""
    decisions: list[YieldDecision | None] = field(default_factory=list)

    def loosest(self, i: int) -> float | None:
        """Loosest standard grade meeting the target yield for candidate ``i``."""
        curve = self.curves[i]
        return None if curve is None else curve.loosest(self.request.target_yield)


def _at_grade(design: Design, grade: float | None) -> tuple[Design, str]:
    if grade is None:
        return design, ""
    try:
        return with_tolerance(design, grade), ""
    except DesignError as exc:
        return design, exc.reason


def statistics_job(request: StatsRequest) -> Any:
    """A ``JobRunner`` job: ``job(cancel)`` yielding ``Progress`` and finally a ``StatsOutcome``."""
    from ..jobs.workers import Progress

    def job(cancel: threading.Event) -> Iterator[Any]:
        n = len(request.designs)
        steps = 1 + len(STANDARD_GRADES)
        total = n * steps * request.trials
        outcome = StatsOutcome(request, [None] * n, [None] * n, [""] * n, [""] * n, [None] * n)
        for i, base in enumerate(request.designs):
            design, note = _at_grade(base, request.grade)
            outcome.notes[i] = note
            for partial, decision in iter_until_decided(
                    design, request.trials, request.seed, request.targets, request.criterion,
                    request.target_yield, cancel):
                outcome.results[i], outcome.decisions[i] = partial, decision
                done = request.trials if decision is not None else partial.done
                yield Progress((i * steps) * request.trials + done, total, outcome)
            if cancel.is_set():
                return
            if MismatchModel.of(base).model == "on-chip":
                outcome.notes[i] = outcome.notes[i] or "on-chip area law: no tolerance grade"
                continue
            # the run made above is its grade's point of the curve: not run twice
            same = [g for g in STANDARD_GRADES if with_tolerance(base, g) == design]
            known = ({same[0]: (outcome.results[i], outcome.decisions[i])}
                     if same and outcome.results[i] is not None else None)
            for curve in iter_yield_vs_tolerance(base, STANDARD_GRADES, request.trials, request.seed,
                                                 request.targets, request.criterion, cancel,
                                                 request.target_yield, known):
                outcome.curves[i] = curve
                yield Progress((i * steps + 1 + len(curve.yields)) * request.trials, total, outcome)
            if cancel.is_set():
                return
            if outcome.loosest(i) is None:
                curve = outcome.curves[i]
                open_ = curve is not None and any(d is not None and d.verdict == "undecided"
                                                  for d in curve.decisions)
                outcome.reasons[i] = loosest_grade_words(base, None, STANDARD_GRADES[0],
                                                         request.targets, request.criterion,
                                                         cancel, request.trials if open_ else 0)
        yield outcome

    return job
