"""One point of a design search, as plain functions an executor can run anywhere.

Both take and return plain values (design dicts, numbers, strings) and get the seed as an argument,
so a process pool or a cluster executor (whose ``submit`` may cache by argument values) gives the
same result for the same arguments:

- :func:`check_network` — deterministic figures first: the nominal solution against the targets
  and the optional limits, the part counts and the cost at every grade;
- :func:`decide_point` — the yield at one grade by Monte Carlo with early stopping
  (``yield_decision.SequentialYield``); the exact engine is used where it holds.
"""

from __future__ import annotations

import math
from typing import Any

import numpy as np

from .cost import CostTable, design_cost
from .design import Design
from .errors import RungwiseError
from .evaluate import evaluate
from .formatting import format_quantity
from .grades import with_tolerance
from .montecarlo import iter_monte_carlo
from .nominal_reason import misses, nominal_failure
from .parts.board import board_value
from .parts.bom import bill_of_materials
from .search_question import LIMIT_KEYS
from .stats_result import MonteCarloResult
from .targets import Targets
from .yield_decision import SequentialYield

FIRST_LOOK = 100
"""Boards at a point's first look; later looks double up to the budget."""

KEPT = ("max_abs_inl_endpoint", "max_abs_inl_bestfit", "max_abs_dnl", "monotonic", "spread",
        "n_resistors", "n_switches", "n_amplifiers", "iref_max", "rout_max", "settling_time",
        "noise_rms_lsb")
"""Summary figures a point keeps."""


def limit_misses(summary: dict[str, Any], context: dict[str, Any]) -> list[str]:
    """Phrases for every optional limit the nominal figures exceed."""
    out = []
    for key, (words, unit, figure) in LIMIT_KEYS.items():
        limit = context.get(key, math.inf)
        got = summary.get(figure, math.nan)
        if key == "max_iref":
            got = max(abs(summary.get("iref_max", 0.0)), abs(summary.get("iref_min", 0.0)))
        if math.isfinite(limit):
            if isinstance(got, float) and math.isnan(got):
                out.append(f"{words} not defined here (e.g. settling needs load_c and no amplifier)")
            elif got > limit:
                out.append(f"{words} {format_quantity(got, unit)} > {format_quantity(limit, unit)}")
    return out


def check_network(design: dict[str, Any], context: dict[str, Any], cost: CostTable
                  ) -> dict[str, Any]:
    """The nominal figures of one network and what they rule out.

    Returns
    -------
    dict
        ``summary`` (``KEPT`` figures), ``costs`` ({grade: breakdown dict}), ``pruned`` (why no
        grade can meet, or ""), ``nominal_fails`` (bool: the nominal design misses a target).
    """
    d = Design.from_dict(design)
    targets = Targets(**context["targets"])
    try:
        ev = evaluate(d)
    except RungwiseError as exc:
        return {"summary": {}, "costs": {}, "pruned": f"cannot be solved: {exc}",
                "nominal_fails": False}
    s = ev.summary
    summary = {k: (float(s[k]) if not isinstance(s[k], bool | int) else s[k]) for k in KEPT if k in s}
    reasons = limit_misses(s, context)
    if context.get("ratings", True):
        flagged = [f"{line.kind} {line.note}" for line in bill_of_materials(ev) if line.flagged]
        reasons += flagged[:2]
    nominal_fails = False
    if misses(s, targets, context["criterion"]):
        nominal_fails = True
        failure = nominal_failure(d, targets, context["criterion"], summary=s)
        reasons.insert(0, failure.text() if failure else "the nominal design misses a target")
    size = int(board_value(d, "array_size"))
    costs = {}
    for grade in context["grades"]:
        try:
            costs[grade] = design_cost(cost, ev.network, grade, d.series, size, s).to_dict()
        except RungwiseError as exc:
            return {"summary": summary, "costs": {}, "pruned": str(exc), "nominal_fails": False}
    return {"summary": summary, "costs": costs, "pruned": "; ".join(reasons),
            "nominal_fails": nominal_fails}


def board_passes(result: MonteCarloResult, criterion: str) -> np.ndarray:
    """One bool per board (in board order): does it meet ``criterion`` of the result's targets."""
    t = result.targets
    mono = result.monotonic if t.monotonic else np.ones(result.done, bool)
    dnl = result.max_abs_dnl <= t.max_dnl_lsb
    inl = result.max_abs_inl <= t.max_inl_lsb
    return {"monotonic": mono, "dnl": dnl, "inl": inl, "all": mono & dnl & inl}[criterion]


def decide_point(design: dict[str, Any], grade: float, context: dict[str, Any], seed: int,
                 cancel: Any = None) -> dict[str, Any]:
    """Yield of ``design`` at tolerance ``grade``, decided against the target with early stopping.

    Returns
    -------
    dict
        ``decision`` (``YieldDecision.to_dict()``), ``yield``, ``yield_stderr``, ``trials`` (boards
        behind the decision), ``inl_p99`` (99th percentile of max |INL| over those boards, LSB),
        ``engine``; or ``cancelled`` = True.
    """
    d = with_tolerance(Design.from_dict(design), grade)
    targets = Targets(**context["targets"])
    budget = int(context["trials"])
    seq = SequentialYield(context["target_yield"], budget, context["confidence"], context["method"],
                          first=FIRST_LOOK)
    decision, result = None, None
    reports = max(1, budget // FIRST_LOOK)
    for result in iter_monte_carlo(d, budget, seed, cancel=cancel, targets=targets, reports=reports):
        if result.cancelled:
            return {"cancelled": True}
        decision = seq.update(board_passes(result, context["criterion"]))
        if decision is not None:
            break
    assert decision is not None
    assert result is not None
    n = decision.trials
    p = decision.estimate
    inl = result.max_abs_inl[:n]
    return {"decision": decision.to_dict(), "yield": p, "yield_stderr": math.sqrt(p * (1 - p) / n),
            "trials": n, "inl_p99": float(np.percentile(inl, 99)) if inl.size else math.nan,
            "engine": result.engine, "cancelled": False}
