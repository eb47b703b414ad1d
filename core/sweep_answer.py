"""The review question a yield sweep answers, in words: where does each candidate first reach the
target yield, what does that cost in parts — and, over the bit count, the **largest** N that still
meets it (yield falls as N grows, so "first reached" is the trivial low end).

"Meets" at a point is decided at a stated confidence (``yield_decision``: Clopper–Pearson, 95 %
one-sided), never read off the plain estimate. A candidate that never meets because its nominal
design already fails says so and why (``nominal_reason``).

Used by the trade-off view under its plot and by ``rungwise sweep`` after its table.
"""

from __future__ import annotations

import math

from .formatting import format_percent
from .nominal_reason import misses, nominal_failure
from .sweep import SWEEP_KEYS, SweepPoint, SweepResult
from .targets import Targets
from .yield_decision import YieldDecision, decide_yield

SHORT_NAME = {"bits": "N", "thermometer_bits": "M"}
"""Symbol of each swept variable in the answer."""


def first_reaching(result: SweepResult, candidate: int, metric: str, target: float
                   ) -> SweepPoint | None:
    """The first point of ``candidate`` in swept order whose ``metric`` is ≥ ``target``."""
    for value in result.values:
        p = result.point(candidate, value)
        if p is None or p.design is None:
            continue
        got = p.figures.get(metric)
        if got is not None and not (isinstance(got, float) and math.isnan(got)) and got >= target:
            return p
    return None


def _best(result: SweepResult, candidate: int, metric: str) -> SweepPoint | None:
    pts = [result.point(candidate, v) for v in result.values]
    scored = [p for p in pts if p is not None and p.design is not None
              and isinstance(p.figures.get(metric), (int, float))
              and not math.isnan(p.figures[metric])]
    return max(scored, key=lambda p: p.figures[metric], default=None)


def answer_lines(result: SweepResult, target: float, metric: str = "yield_monotonic",
                 solve_reasons: bool = True) -> list[str]:
    """One line per candidate: where ``metric`` first reaches ``target`` (a fraction) and the
    resistor and switch counts there, or the best value reached. Empty when the sweep carries no
    such figure (no yields asked for). ``solve_reasons=False`` gives a nominal design's reason only
    when an earlier call solved it (the window asks from its GUI thread; its job solves first)."""
    if metric not in result.metrics():
        return []
    what = SWEEP_KEYS[metric][0].replace("Yield, ", "").strip()
    sym = SHORT_NAME.get(result.over, result.over)
    partial = " so far" if result.done < result.total else ""
    lines = []
    for ci, design in enumerate(result.candidates):
        p = first_reaching(result, ci, metric, target)
        if p is not None:
            f = p.figures
            lines.append(f"{design.label}: {format_percent(target)} {what} first reached at {sym} = "
                         f"{p.value} ({format_percent(f[metric])}) — {f.get('n_resistors', '?')} "
                         f"resistors, {f.get('n_switches', '?')} switches")
            continue
        best = _best(result, ci, metric)
        mine = [q for q in (result.point(ci, v) for v in result.values) if q is not None]
        if mine and all(q.design is None for q in mine):  # the swept variable does not apply
            lines.append(f"{design.label}: not swept — {mine[0].note.split(': ', 1)[-1]}")
        elif best is None:
            lines.append(f"{design.label}: no {what} figure{partial} in this sweep")
        else:
            lines.append(f"{design.label}: never {format_percent(target)} {what}{partial} (best "
                         f"{format_percent(best.figures[metric])} at {sym} = {best.value})"
                         + nominal_note(best, metric, solve=solve_reasons))
    if result.over == "bits":
        lines += largest_lines(result, target, metric)
    return lines


CRITERION_OF = {"yield_monotonic": "monotonic", "yield_dnl": "dnl", "yield_inl": "inl",
                "yield_all": "all"}


def nominal_note(point: SweepPoint, metric: str, targets: Targets | None = None,
                 solve: bool = True) -> str:
    """`` — the nominal design already fails …`` when it does at ``point``, else ``""``."""
    criterion = CRITERION_OF.get(metric, "all")
    f = point.figures
    needed = ("monotonic", "max_abs_dnl", "max_abs_inl_endpoint", "max_abs_inl_bestfit")
    if point.design is None or not all(k in f for k in needed):
        return ""
    if not misses(f, targets or Targets(), criterion):
        return ""
    failure = nominal_failure(point.design, targets, criterion, summary=f, cached_only=not solve)
    return "" if failure is None else " — " + failure.text()


def decision_at(point: SweepPoint, metric: str, trials: int, target: float) -> YieldDecision | None:
    """The point's yield decided against ``target`` (None without a yield figure)."""
    y = point.figures.get(metric)
    if point.design is None or not isinstance(y, int | float) or math.isnan(y) or trials < 1:
        return None
    return decide_yield(round(y * trials), trials, target)


def largest_meeting(result: SweepResult, candidate: int, metric: str, target: float
                    ) -> tuple[SweepPoint, YieldDecision] | None:
    """The largest swept value whose yield is decided to meet ``target``."""
    trials = result.statistics.trials if result.statistics is not None else 0
    best = None
    for value in result.values:
        p = result.point(candidate, value)
        d = None if p is None else decision_at(p, metric, trials, target)
        if p is not None and d is not None and d.meets:
            best = (p, d)
    return best


def largest_lines(result: SweepResult, target: float, metric: str = "yield_monotonic") -> list[str]:
    """Over the bit count: per candidate, the largest N still meeting the target (decided at a
    stated confidence) and what the next N gets; the cheapest design at a required N comes from
    the design search (``rungwise search --set bits=N``)."""
    if metric not in result.metrics() or result.statistics is None:
        return []
    what = SWEEP_KEYS[metric][0].replace("Yield, ", "").strip()
    trials = result.statistics.trials
    out = []
    for ci, design in enumerate(result.candidates):
        found = largest_meeting(result, ci, metric, target)
        if found is None:
            if any(q.design is not None for q in result.points if q.candidate == ci):
                out.append(f"{design.label}: no N decided to meet {format_percent(target)} {what} at 95 % "
                           f"confidence over {trials} boards (more boards may decide it)")
            continue
        p, d = found
        nxt = result.point(ci, p.value + 1)
        nd = None if nxt is None else decision_at(nxt, metric, trials, target)
        after = ""
        if nd is not None and not nd.meets:
            word = "is undecided" if nd.verdict == "undecided" else "misses"
            after = f"; N = {p.value + 1} {word} ({nd.yield_text()})"
        out.append(f"{design.label}: largest N still meeting {format_percent(target)} {what}: N = {p.value} "
                   f"({d.yield_text()} over {trials} boards, {d.method}){after}")
    return out
