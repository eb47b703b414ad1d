"""Monotonic by design: the skew (``series_ratio``) closest to 1 that keeps every carry step
positive on every board within the tolerance box, and what it costs in INL and gain error.

A ladder's series resistors a little above R (or, in a per-bit binary-weighted network, bit
resistors stepping by a little more than 2) give each bit slightly more than twice the next bit's
weight, so each carry keeps a margin that the parts' tolerance cannot use up. The ratio is found by
stepping up a grid from 1 to the first ratio that :mod:`worst_case` guarantees, then halving the
bracket; the ratio returned is always one the search verified. Ratios below 1 give the bits less
than twice the next one's weight, so they never help and are not searched.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from .design import Design
from .errors import DesignError
from .field_use import unused_fields
from .formatting import format_percent, format_quantity
from .metrics import linearity
from .solve import solve
from .topologies import build
from .worst_case import STRING_NOTE, Undecided, worst_steps

GRID = (1.01, 1.02, 1.04, 1.07, 1.1, 1.15, 1.2, 1.3, 1.45, 1.65, 2.0)
"""Ratios tried upwards from 1 (the last is the largest one called sane: series resistors of 2R
make a radix near 3, far from a binary converter)."""

RESOLUTION = 2e-4
"""Bracket width at which halving stops (the ratio is the bracket's verified upper end)."""

SEARCH_WORK = 1 << 20
"""Largest trials × codes of one worst-case search during the ratio search."""


SKEW_FIGURES = ("series_ratio_for_monotonic", "skew_max_abs_inl", "skew_gain_error")
"""Summary keys the ratio search adds (labels in :mod:`.figure_registry`); not made by
``evaluate``."""


@dataclass(frozen=True)
class SkewAnswer:
    """Result of :func:`ratio_for_monotonic`.

    Attributes
    ----------
    ratio : float or None — ``series_ratio`` closest to 1 that guarantees monotonic (None: none
        in range, or not applicable; ``reason`` says why)
    reason : str — why ``ratio`` is None, or how it was decided
    tolerance : float — the largest half-width of the box used (fraction)
    min_step : float — the smallest worst-case step at ``ratio``, ideal LSB (NaN when None)
    max_abs_inl : float — the nominal board's max |INL| (endpoint) at ``ratio``, LSB
    gain_error : float — its gain error at ``ratio`` (endpoint slope / ideal LSB − 1, fraction)
    base_max_abs_inl, base_gain_error : float — the same figures at the design's own ratio
    """

    ratio: float | None
    reason: str
    tolerance: float
    min_step: float = float("nan")
    max_abs_inl: float = float("nan")
    gain_error: float = float("nan")
    base_max_abs_inl: float = float("nan")
    base_gain_error: float = float("nan")

    def summary(self) -> dict[str, float]:
        """Summary entries (labels in :mod:`.figure_registry`); NaN where there is no ratio
        (JSON null)."""
        return {"series_ratio_for_monotonic": float("nan") if self.ratio is None else self.ratio,
                "skew_max_abs_inl": self.max_abs_inl, "skew_gain_error": self.gain_error}


def add_skew_figures(ev) -> None:
    """Put the ratio search's figures into an :class:`~rungwise.core.evaluate.Evaluation`'s
    summary (after the worst-case guarantee) and its reason into ``ev.notes`` (in place)."""
    answer = ratio_for_monotonic(ev.design)
    out: dict = {}
    for key, value in ev.summary.items():
        out[key] = value
        if key == "worst_case_transition":
            out.update(answer.summary())
    out.update({k: v for k, v in answer.summary().items() if k not in out})
    ev.summary.clear()
    ev.summary.update(out)
    ev.notes["series_ratio_for_monotonic"] = answer.reason


def nominal_figures(design: Design) -> tuple[float, float]:
    """Max |INL| (endpoint, LSB) and gain error (fraction) of the nominal board."""
    net = build(design)
    v = solve(net).vout
    inl = float(np.max(np.abs(linearity.inl_endpoint(v))))
    return inl, float(linearity.endpoint_lsb(v)) / net.ideal_lsb - 1.0


def _min_step(design: Design, ratio: float) -> float:
    return worst_steps(design.replace(series_ratio=ratio), max_work=SEARCH_WORK).min_step


def ratio_for_monotonic(design: Design) -> SkewAnswer:
    """The ``series_ratio`` closest to 1 that makes ``design`` monotonic on every board within its
    tolerance box (the design's ``mismatch`` table), with the INL and gain error it costs.

    Never raises for a valid design: a network the ratio does not apply to, or one too large to
    search, gives ``ratio = None`` with the reason.
    """
    unused = unused_fields(design).get("series_ratio")
    tol_text = _tolerance_text(design)
    if design.topology == "string":
        return SkewAnswer(None, STRING_NOTE, 0.0)
    if unused:
        return SkewAnswer(None, f"no skew applies: {unused}", 0.0)
    try:
        low = 1.0
        step = _min_step(design, low)
        if step >= 0.0:
            return _answer(design, 1.0, step, f"already monotonic on every board at {tol_text}")
        high = None
        for r in GRID:
            step = _min_step(design, r)
            if step >= 0.0:
                high, high_step = r, step
                break
            low = r
        if high is None:
            return SkewAnswer(None, f"no series ratio up to {GRID[-1]:g} keeps every board "
                              f"monotonic at {tol_text}: use closer-tolerance parts or fewer "
                              "bits", _max_tol(design))
        while high - low > RESOLUTION:
            mid = 0.5 * (low + high)
            step = _min_step(design, mid)
            if step >= 0.0:
                high, high_step = mid, step
            else:
                low = mid
    except Undecided as exc:
        return SkewAnswer(None, str(exc), _max_tol(design))
    except DesignError as exc:  # e.g. a skewed value beyond the preferred-value decades
        return SkewAnswer(None, f"the search stopped: {exc}", _max_tol(design))
    return _answer(design, high, high_step, f"worst-case search over every part at {tol_text}")


def _answer(design: Design, ratio: float, step: float, reason: str) -> SkewAnswer:
    if design.topology == "binary-weighted":
        reason += (f"; bit resistors step by 2 × {format_quantity(ratio)} = "
                   f"{format_quantity(2 * ratio)} instead of 2")
    inl, gain = nominal_figures(design.replace(series_ratio=ratio))
    base_inl, base_gain = nominal_figures(design)
    return SkewAnswer(float(ratio), reason, _max_tol(design), step, inl, gain,
                      base_inl, base_gain)


def _max_tol(design: Design) -> float:
    from .worst_case import part_tolerances

    _, tol = part_tolerances(design, build(design))
    return float(np.max(tol)) if tol.size else 0.0


def _tolerance_text(design: Design) -> str:
    tol = _max_tol(design)
    return f"±{format_percent(tol)}"
