"""The search's question and answer in words and table rows, for the report, the command line's
table and the window (no Qt, no HTML: callers render the rows their own way).

``file_search(doc)`` runs the search a design file asks (its ``[search]`` table, its first
candidate as the base, its ``[targets]`` and ``[cost]``); ``search_summary(result)`` turns any
result into :class:`SearchSummary`.
"""

from __future__ import annotations

import math
from concurrent.futures import Executor
from dataclasses import dataclass
from typing import Any

from .cost import CostTable
from .design import Design
from .designfile import DesignFile
from .formatting import format_percent, format_quantity
from .review import describe_targets
from .search_question import LIMIT_KEYS, SearchQuestion
from .space_search import SearchPoint, SearchResult, iter_search
from .targets import Targets

TABLE_HEAD = ("Design", "Cost", "Verdict", "Yield", "Boards", "Resistors", "Switches", "Amplifiers")
"""Columns of :attr:`SearchSummary.rows`."""


def question_lines(base: Design, question: SearchQuestion, targets: Targets,
                   cost: CostTable) -> list[str]:
    """The question in words: the space, the targets and limits, how yields are decided, prices."""
    nets = ", ".join(f"{t} ({o})" for t, o in question.network_choices(base))
    r = (", ".join(format_quantity(x, "Ω") for x in question.unit_r) if question.unit_r
         else format_quantity(base.unit_r, "Ω"))
    target = question.target_yield if question.target_yield is not None else targets.min_yield
    limits = [f"{words} ≤ {format_quantity(getattr(question, k), unit)}"
              for k, (words, unit, _) in LIMIT_KEYS.items() if math.isfinite(getattr(question, k))]
    if question.ratings:
        limits.append("every part within its rating")
    lines = [
        f"Which is the cheapest {base.bits}-bit design that meets {describe_targets(targets)} on at "
        f"least {format_percent(target)} of boards (criterion: {question.criterion})?",
        f"Networks: {nets}; thermometer bits M: "
        f"{', '.join(map(str, question.m_choices(base)))} (segmented only); unit R: {r}; series: "
        f"{', '.join(question.series)}; grades: "
        f"{', '.join(f'±{format_percent(g)}' for g in question.grades)}.",
        f"Fixed by the design: reference {format_quantity(base.vref, 'V')}, switches "
        f"{format_quantity(base.ron_high, 'Ω')} / {format_quantity(base.ron_low, 'Ω')}, load "
        f"{format_quantity(base.load_r, 'Ω')}, mismatch model {base.mismatch.get('model', 'parts')}.",
    ]
    if limits:
        lines.append("Limits: " + "; ".join(limits) + ".")
    lines.append(f"Costs: {cost.source}.")
    return lines


def _yield_cell(p: SearchPoint) -> str:
    if p.verdict == "pruned":
        return "—"
    if p.yield_ == 1.0:
        return f"≥ {format_percent(p.yield_lower)}"
    return f"{format_percent(p.yield_)} ± {format_percent(p.yield_stderr)}"


def point_row(p: SearchPoint) -> list[str]:
    """One table row (``TABLE_HEAD`` order)."""
    r, s, a = p.counts()
    return [p.describe(), format_quantity(p.cost), p.verdict, _yield_cell(p), str(p.trials or "—"),
            str(r), str(s), str(a)]


@dataclass(frozen=True)
class SearchSummary:
    """Everything a report or view shows about one search."""

    question: list[str]
    answer: str
    method: str
    prices: str
    rows: list[list[str]]
    front: list[list[str]]
    why_lost: list[str]
    cost_lines: list[str]


def search_summary(result: SearchResult, base: Design | None = None, cost: CostTable | None = None,
                   rows: int = 10) -> SearchSummary:
    """Words and rows for ``result``: the ``rows`` cheapest judged designs, the Pareto front, why
    each other network lost, and the answer's cost breakdown."""
    base = base or result.base
    best = result.answer
    breakdown = []
    if best is not None:
        breakdown = [f"{k}: {format_quantity(v)}" for k, v in best.breakdown.get("lines", {}).items()]
        breakdown.append(f"total {format_quantity(best.cost)} ({result.prices})")
    return SearchSummary(
        question=question_lines(base, result.question, result.targets, cost or CostTable()),
        answer=result.answer_text(), method=result.method, prices=result.prices,
        rows=[point_row(p) for p in result.decided[:rows]],
        front=[point_row(p) for p in result.front()],
        why_lost=[f"{k}: {v}" for k, v in result.why_lost().items()],
        cost_lines=breakdown)


def file_search(doc: DesignFile, executor: Executor | None = None, cancel: Any = None,
                progress: Any = None) -> SearchResult | None:
    """Run the search ``doc`` asks for (None when it has no ``[search]`` table).

    ``progress(fraction)`` is called after every finished task; ``cancel.is_set()`` stops it.
    """
    if doc.search is None:
        return None
    last = None
    for step in iter_search(doc.candidates[0], doc.search, doc.targets, doc.cost, executor, cancel):
        last = step
        if progress is not None:
            progress(step.fraction)
    return None if last is None else last.result


def answer_lines(doc: DesignFile, cancel: Any = None, executor: Executor | None = None,
                 rows: int = 5) -> list[str]:
    """The search's question and answer as plain lines for a report (empty when ``doc`` holds no
    ``[search]`` or the run was cancelled). Runs the search here (points in a process pool
    unless ``executor`` is given); ``cancel.is_set()`` stops it between points."""
    result = file_search(doc, executor, cancel)
    if result is None or result.cancelled:
        return []
    s = search_summary(result, cost=doc.cost, rows=rows)
    out = [f"Question: {line}" for line in s.question]
    out.append(f"Answer: {s.answer}")
    if s.cost_lines:
        out.append("Cost of the answer: " + "; ".join(s.cost_lines))
    out += [f"Cheapest judged: {r[0]} — cost {r[1]} ({s.prices}), {r[2]}, yield {r[3]} over "
            f"{r[4]} boards" for r in s.rows]
    out += [f"Why it lost: {line}" for line in s.why_lost]
    out.append(f"Method: {s.method}.")
    return out
