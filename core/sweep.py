"""The trade-off explorer's engine: every comparison figure of each candidate as the bit count N
(2 … 16) or, for segmented designs, the thermometer bit count M (0 … N) changes.

Each point is a plain design (``point_design``) evaluated like any other (``evaluate``), plus,
when asked, its Monte Carlo yields at a tolerance grade (``montecarlo.monte_carlo`` on
``grades.with_tolerance``). Points are cached by their full design and statistics settings, so
re-plotting or re-running a sweep is instant and a point always equals a direct evaluation.

``iter_sweep`` yields partial results point by point (for progress) and stops between points when
its ``cancel`` event is set; ``sweep`` returns the final result.
"""

from __future__ import annotations

import json
import math
from collections import OrderedDict
from collections.abc import Iterator, Sequence
from dataclasses import dataclass, field
from typing import Any, Literal, get_args

import numpy as np

from .design import Design
from .errors import RungwiseError
from .evaluate import SUMMARY_KEYS, evaluate
from .figure_registry import YIELDS, labels_and_units
from .types import MAX_ARRAY_BITS

SweepOver = Literal["bits", "thermometer_bits"]
"""What a sweep varies: the resolution N, or a segmented design's thermometer bits M."""

SWEEP_VARIABLES: tuple[str, ...] = get_args(SweepOver)

BITS_RANGE = (2, MAX_ARRAY_BITS)
"""Resolutions a bit-count sweep may cover, bits."""

STAT_KEYS: dict[str, tuple[str, str]] = labels_and_units(YIELDS)
"""Statistics figures a sweep adds per point when asked (label, unit)."""

SWEEP_KEYS: dict[str, tuple[str, str]] = {**SUMMARY_KEYS, **STAT_KEYS}
"""Every figure a sweep point can carry, in display order (label, unit)."""


@dataclass(frozen=True)
class SweepStatistics:
    """Monte Carlo settings of a sweep: parts at ±``tolerance`` (fraction; ``None`` keeps each
    design's own mismatch settings), ``trials`` boards per point, one ``seed`` for every point."""

    tolerance: float | None = 0.001
    trials: int = 500
    seed: int = 1


@dataclass
class SweepPoint:
    """One candidate at one swept value: its design and figures, or why there are none."""

    candidate: int
    value: int
    design: Design | None
    figures: dict[str, Any] = field(default_factory=dict)
    note: str = ""


@dataclass
class SweepResult:
    """A finished (or partial) sweep.

    Attributes
    ----------
    over : str
        ``"bits"`` or ``"thermometer_bits"``.
    values : list[int]
        The swept values, in order.
    candidates : list[Design]
    statistics : SweepStatistics or None
    points : list[SweepPoint]
        Candidate-major: every value of candidate 0, then candidate 1 …; shorter while running.
    cancelled : bool
    """

    over: str
    values: list[int]
    candidates: list[Design]
    statistics: SweepStatistics | None
    points: list[SweepPoint] = field(default_factory=list)
    cancelled: bool = False

    @property
    def total(self) -> int:
        """Number of points when complete."""
        return len(self.values) * len(self.candidates)

    @property
    def done(self) -> int:
        """Points finished so far."""
        return len(self.points)

    def metrics(self) -> list[str]:
        """Figure keys present at some point, in ``SWEEP_KEYS`` order."""
        present = {k for p in self.points for k in p.figures}
        return [k for k in SWEEP_KEYS if k in present]

    def series(self, candidate: int, metric: str) -> tuple[np.ndarray, np.ndarray]:
        """(swept values, figure) of one candidate; NaN where a point has no such figure.

        Returns
        -------
        x : ndarray of int, shape (n_points,)
        y : ndarray of float, shape (n_points,) — booleans as 0/1
        """
        pts = [p for p in self.points if p.candidate == candidate]
        x = np.array([p.value for p in pts], dtype=np.int64)
        y = np.array([_as_float(p.figures.get(metric)) for p in pts], dtype=float)
        return x, y

    def point(self, candidate: int, value: int) -> SweepPoint | None:
        """The point of ``candidate`` at ``value`` (``None`` when not computed)."""
        for p in self.points:
            if p.candidate == candidate and p.value == value:
                return p
        return None

    def rows(self) -> list[dict[str, Any]]:
        """One flat record per point: candidate, the swept value, note, then every figure."""
        keys = self.metrics()
        out = []
        for p in self.points:
            row = {"candidate": self.candidates[p.candidate].label, self.over: p.value,
                   "note": p.note}
            row.update({k: p.figures.get(k) for k in keys})
            out.append(row)
        return out


def _as_float(x: Any) -> float:
    if x is None or isinstance(x, str):
        return math.nan
    return float(x)


def sweep_values(over: str, start: int, stop: int) -> list[int]:
    """The values ``start … stop`` (inclusive), checked against the variable's range.

    Raises
    ------
    RungwiseError
        An unknown variable or a range outside 2 … 16 bits (N) or 0 … 16 (M).
    """
    if over not in SWEEP_VARIABLES:
        raise RungwiseError(f"over: {over!r} cannot be swept; choose one of "
                            + ", ".join(SWEEP_VARIABLES))
    low, high = BITS_RANGE if over == "bits" else (0, MAX_ARRAY_BITS)
    if not (low <= start <= stop <= high):
        raise RungwiseError(f"{over}: sweep from {start} to {stop} is out of range; allowed: "
                            f"whole numbers from {low} to {high}, the first not above the last")
    return list(range(start, stop + 1))


def point_design(design: Design, over: str, value: int) -> Design:
    """``design`` at one swept value (as-built part values are dropped: they name other parts).

    Sweeping N keeps M where it fits (M ≤ N) and clips it to N otherwise.

    Raises
    ------
    DesignError
        The point is not a valid design (for example M swept on a non-segmented design).
    """
    if over == "bits":
        return design.replace(bits=value, thermometer_bits=min(design.thermometer_bits, value))
    if design.topology != "segmented":
        from .errors import DesignError

        raise DesignError("thermometer_bits", f"only segmented designs have thermometer bits "
                          f"({design.label} is {design.topology})")
    return design.replace(thermometer_bits=value)


_CACHE: OrderedDict[str, dict[str, Any]] = OrderedDict()
CACHE_SIZE = 4096
"""Most sweep points kept in memory."""


def _key(design: Design, stats: SweepStatistics | None) -> str:
    data = design.to_dict()
    data["name"] = ""
    return json.dumps([data, None if stats is None else [stats.tolerance, stats.trials, stats.seed]],
                      sort_keys=True, default=str)


class _Interrupted(Exception):
    """A point's Monte Carlo run was cancelled (nothing is cached)."""


def point_figures(design: Design, stats: SweepStatistics | None = None, cancel: Any = None
                  ) -> dict[str, Any]:
    """Every figure of one point: the evaluation summary, and the yields when ``stats`` is given
    (cached; the returned dict is a copy). ``cancel`` stops a Monte Carlo run between batches."""
    key = _key(design, stats)
    hit = _CACHE.get(key)
    if hit is None:
        hit = dict(evaluate(design, dynamics="major").summary)  # glitch at the major carry only
        if stats is not None:
            hit.update(statistics_figures(design, stats, cancel))
        _CACHE[key] = hit
        while len(_CACHE) > CACHE_SIZE:
            _CACHE.popitem(last=False)
    else:
        _CACHE.move_to_end(key)
    return dict(hit)


def statistics_figures(design: Design, stats: SweepStatistics, cancel: Any = None
                       ) -> dict[str, float]:
    """Monte Carlo yields of ``design`` at the sweep's tolerance grade, fraction each (the same
    numbers as ``monte_carlo(with_tolerance(design, tolerance), trials, seed)``)."""
    from .grades import with_tolerance
    from .montecarlo import iter_monte_carlo

    graded = design if stats.tolerance is None else with_tolerance(design, stats.tolerance)
    *_, result = iter_monte_carlo(graded, stats.trials, stats.seed, cancel=cancel, reports=1)
    if result.cancelled:
        raise _Interrupted
    return {k: float(getattr(result, k).value) for k in STAT_KEYS}


def iter_sweep(designs: Sequence[Design], over: SweepOver, values: Sequence[int],
               statistics: SweepStatistics | None = None, cancel: Any = None
               ) -> Iterator[SweepResult]:
    """Evaluate every candidate at every value, yielding the partial result after each point.

    Parameters
    ----------
    designs : sequence of Design
        The candidates.
    over : {"bits", "thermometer_bits"}
    values : sequence of int
        From :func:`sweep_values`.
    statistics : SweepStatistics, optional
        Also run Monte Carlo at each point (yield figures); ``None`` sweeps nominal figures only.
    cancel : object with ``is_set()``, optional
        Checked between points; when set, the partial result is yielded with ``cancelled=True``.

    Yields
    ------
    SweepResult
        Growing by one point each time; the last one is complete (or cancelled).
    """
    result = SweepResult(over, [int(v) for v in values], list(designs), statistics)
    for ci, base in enumerate(result.candidates):
        for value in result.values:
            if cancel is not None and cancel.is_set():
                result.cancelled = True
                yield result
                return
            try:
                design = point_design(base, over, value)
                point = SweepPoint(ci, value, design, point_figures(design, statistics, cancel))
            except _Interrupted:
                result.cancelled = True
                yield result
                return
            except RungwiseError as exc:
                point = SweepPoint(ci, value, None, note=str(exc))
            result.points.append(point)
            yield result


def sweep(designs: Sequence[Design], over: SweepOver, values: Sequence[int],
          statistics: SweepStatistics | None = None) -> SweepResult:
    """The whole sweep (see :func:`iter_sweep`)."""
    *_, last = iter_sweep(designs, over, values, statistics)
    return last
