"""The review question a yield sweep answers, in words: where does each candidate first reach the
target yield, and what does that cost in parts?

Used by the trade-off view under its plot and by ``rungwise sweep`` after its table.
"""

from __future__ import annotations

import math

from .sweep import SWEEP_KEYS, SweepPoint, SweepResult

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


def answer_lines(result: SweepResult, target: float, metric: str = "yield_monotonic") -> list[str]:
    """One line per candidate: where ``metric`` first reaches ``target`` (a fraction) and the
    resistor and switch counts there, or the best value reached. Empty when the sweep carries no
    such figure (no yields asked for)."""
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
            lines.append(f"{design.label}: {target * 100:g} % {what} first reached at {sym} = "
                         f"{p.value} ({f[metric] * 100:.4g} %) — {f.get('n_resistors', '?')} "
                         f"resistors, {f.get('n_switches', '?')} switches")
            continue
        best = _best(result, ci, metric)
        mine = [q for q in (result.point(ci, v) for v in result.values) if q is not None]
        if mine and all(q.design is None for q in mine):  # the swept variable does not apply
            lines.append(f"{design.label}: not swept — {mine[0].note.split(': ', 1)[-1]}")
        elif best is None:
            lines.append(f"{design.label}: no {what} figure{partial} in this sweep")
        else:
            lines.append(f"{design.label}: never {target * 100:g} % {what}{partial} (best "
                         f"{best.figures[metric] * 100:.4g} % at {sym} = {best.value})")
    return lines
