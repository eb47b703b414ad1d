"""Judging candidates at review: which meet the targets, the recommendation, the cautions.

Everything here is derived from computed figures: the recommendation names the candidate that meets
every target with the fewest parts (ties broken by the smaller |INL|), or says plainly that none
does and what each misses by.
"""

from __future__ import annotations

import math
from collections.abc import Mapping, Sequence
from dataclasses import dataclass, field
from typing import Any

from .evaluate import Evaluation
from .formatting import format_percent, format_quantity
from .parts.bom import bill_of_materials
from .targets import Targets
from .yield_decision import decide_yield

SAFE_DC_VOLTS = 60.0
"""Volts DC above which the review adds a shock-hazard caution (from memory: the usual ripple-free
DC limit of safety extra-low voltage, IEC 61140 / IEC 60364-4-41)."""

DEFER = ("Check every rating against the part's datasheet (with derating) and follow local codes "
         "and licensed practice; these figures are design aids, not a safety assessment.")
"""The sentence every caution ends with."""


@dataclass(frozen=True)
class Verdict:
    """How one candidate fares against the targets.

    Attributes
    ----------
    label : str
    parts : int
        Resistors + switches + amplifiers.
    inl : float
        Max |INL| on the target's line, LSB.
    dnl : float
        Max |DNL|, LSB.
    monotonic : bool
    yield_all : float or None
        Monte Carlo yield of all targets together (fraction), when statistics were computed.
    yield_text : str
        That yield in words: the one-sided lower bound when no board failed ("≥ 99.70 %"), else
        the estimate with its bounds; "" when no statistics were computed.
    failures : list[str]
        One phrase per missed target, with the figure and the limit; empty when it passes.
    """

    label: str
    parts: int
    inl: float
    dnl: float
    monotonic: bool
    yield_all: float | None
    failures: list[str] = field(default_factory=list)
    yield_text: str = ""

    @property
    def passes(self) -> bool:
        """True when every target is met."""
        return not self.failures


def part_count(summary: Mapping[str, Any]) -> int:
    """Parts a candidate needs: resistors + switches + amplifiers (from the summary)."""
    return int(sum(int(summary.get(k, 0)) for k in ("n_resistors", "n_switches", "n_amplifiers")))


def judge(ev: Evaluation, targets: Targets, yield_all: Any = None) -> Verdict:
    """Compare one candidate's figures (and its yield, if computed) with ``targets``.

    ``yield_all`` is a Monte Carlo yield with its counts (``passed``, ``trials``, as
    ``stats_result.YieldFigure``): it meets the target only when decided above it at the stated
    confidence (``yield_decision.decide_yield``); undecided counts as a miss, never as meeting.
    A bare fraction (already decided by the caller) is compared as given.
    """
    s = ev.summary
    inl = float(s[f"max_abs_inl_{targets.inl_line}"])
    dnl = float(s["max_abs_dnl"])
    mono = bool(s["monotonic"])
    fails = []
    line = "endpoint" if targets.inl_line == "endpoint" else "best-fit"
    if not inl <= targets.max_inl_lsb:
        fails.append(f"max |INL| ({line}) {format_quantity(inl, 'LSB')} > "
                     f"{format_quantity(targets.max_inl_lsb)}")
    if not dnl <= targets.max_dnl_lsb:
        fails.append(f"max |DNL| {format_quantity(dnl, 'LSB')} > {format_quantity(targets.max_dnl_lsb)}")
    if targets.monotonic and not mono:
        fails.append("not monotonic")
    value, text, miss = _judge_yield(yield_all, targets.min_yield)
    if miss:
        fails.append(miss)
    return Verdict(ev.design.label, part_count(s), inl, dnl, mono, value, fails, text)


def _judge_yield(yield_all: Any, target: float) -> tuple[float | None, str, str]:
    """(fraction, words, failure phrase or "") for a yield against ``target``."""
    if yield_all is None:
        return None, "", ""
    counts = getattr(yield_all, "trials", None)
    if counts is None:  # a bare fraction, decided by the caller
        value = float(yield_all)
        miss = "" if value >= target else f"yield {format_percent(value)} < {format_percent(target)}"
        return value, format_percent(value), miss
    decision = decide_yield(int(yield_all.passed), int(yield_all.trials), target)
    text = decision.yield_text()
    if decision.verdict == "meets":
        return decision.estimate, text, ""
    if decision.verdict == "fails":
        return decision.estimate, text, f"yield {text} < {format_percent(target)} [{decision.method}]"
    return decision.estimate, text, (f"yield {text} undecided against {format_percent(target)} over "
                                     f"{decision.trials} boards [{decision.method}]")


def describe_targets(targets: Targets, with_yield: bool = False) -> str:
    """The targets in words, e.g. ``max |INL| ≤ 0.5 LSB (endpoint), max |DNL| ≤ 0.5 LSB, monotonic``."""
    line = "endpoint" if targets.inl_line == "endpoint" else "best fit"
    words = [f"max |INL| ≤ {format_quantity(targets.max_inl_lsb, 'LSB')} ({line})",
             f"max |DNL| ≤ {format_quantity(targets.max_dnl_lsb, 'LSB')}"]
    if targets.monotonic:
        words.append("monotonic")
    if with_yield:
        words.append(f"yield ≥ {format_percent(targets.min_yield)}")
    return ", ".join(words)


@dataclass(frozen=True)
class Recommendation:
    """The review's conclusion: ``chosen`` is an index into the candidates, or ``None``."""

    chosen: int | None
    text: str
    verdicts: list[Verdict]


def recommend(evs: Sequence[Evaluation], targets: Targets,
              yields: Sequence[Any] | None = None, cancel: Any = None) -> Recommendation:
    """The candidate that meets every target with the fewest parts, and a sentence saying why.

    Parameters
    ----------
    evs : sequence of Evaluation
        The candidates, in display order.
    targets : Targets
    yields : sequence, optional
        Monte Carlo yield of all targets together per candidate (``YieldFigure`` with its counts,
        decided at a stated confidence; or a fraction), ``None`` where not run.
    cancel : object with ``is_set()``, optional
        Stops the nominal-reason solves (the recommendation then leaves the reasons out).
    """
    yields = list(yields) if yields is not None else [None] * len(evs)
    verdicts = [judge(e, targets, y) for e, y in zip(evs, yields, strict=True)]
    wanted = describe_targets(targets, with_yield=any(y is not None for y in yields))
    passing = [i for i, v in enumerate(verdicts) if v.passes]
    if not passing:
        misses = "; ".join(f"{v.label}: {', '.join(v.failures)}" for v in verdicts)
        return Recommendation(None, f"No candidate meets the targets ({wanted}). {misses}."
                              + _nominal_reasons(evs, targets, cancel), verdicts)
    best = min(passing, key=lambda i: (verdicts[i].parts, verdicts[i].inl, i))
    v = verdicts[best]
    figures = f"max |INL| {format_quantity(v.inl, 'LSB')}, max |DNL| {format_quantity(v.dnl, 'LSB')}"
    if v.yield_all is not None:
        figures += f", yield {v.yield_text}"
    others = len(passing) - 1
    if others:
        fewer = (f"the fewest parts ({v.parts}) of the {len(passing)} candidates that meet them"
                 if all(verdicts[i].parts > v.parts for i in passing if i != best)
                 else f"{v.parts} parts, as few as any other candidate that meets them, and the "
                 "smallest |INL| among those")
    else:
        fewer = f"{v.parts} parts; it is the only candidate that meets them"
    return Recommendation(best, f"Recommended: {v.label} — meets the targets ({wanted}) with "
                          f"{figures}, using {fewer}.", verdicts)


def _nominal_reasons(evs: Sequence[Evaluation], targets: Targets, cancel: Any = None) -> str:
    """`` Label: The nominal design already fails …`` for each candidate whose nominal figures
    miss a target (no tolerance grade can help it; the reason names the cause and a change)."""
    from .nominal_reason import nominal_failure  # local: it evaluates variants of the design

    out = []
    for ev in evs:
        failure = nominal_failure(ev.design, targets, summary=ev.summary, cancel=cancel)
        if failure is not None:
            out.append(f" {ev.design.label}: {failure.text()}")
    return "".join(out)


# --- cautions ------------------------------------------------------------------------------
def bom_lines(ev: Evaluation) -> tuple[list, str | None]:
    """The candidate's bill of materials, or ``([], reason)`` when it cannot be made, so that a
    review still shows every other figure (the reason is printed, never hidden)."""
    try:
        return bill_of_materials(ev), None
    except Exception as exc:  # a failing part list must not take the whole review down
        return [], f"the bill of materials could not be made ({type(exc).__name__}: {exc})"


def voltage_cautions(evs: Sequence[Evaluation]) -> list[str]:
    """One caution per candidate whose reference or output exceeds ``SAFE_DC_VOLTS`` (without the
    closing :data:`DEFER` sentence)."""
    out = []
    for ev in evs:
        volts = max(abs(ev.design.vref), float(abs(ev.vout).max()))
        if volts > SAFE_DC_VOLTS:
            out.append(f"{ev.design.label}: voltages up to {format_quantity(volts, 'V')} exceed "
                       f"{format_quantity(SAFE_DC_VOLTS, 'V')} DC, above the usual safety "
                       "extra-low-voltage limit; "
                       "the circuit needs insulation, spacing and protection by a qualified person.")
    return out


def cautions(evs: Sequence[Evaluation]) -> list[str]:
    """Cautions for the review, each with its figure: voltages above the safe low-voltage limit,
    parts and switches over their rating (the bill of materials' flags, with the design's
    ``board`` rating and derating), large reference currents; always ends with :data:`DEFER`."""
    out = []
    for ev in evs:
        label = ev.design.label
        out += voltage_cautions([ev])
        lines, problem = bom_lines(ev)
        if problem:
            out.append(f"{label}: part ratings not checked — {problem}.")
        for line in lines:
            if line.flagged:
                out.append(f"{label}: {line.designators} ({line.kind}): {line.note}.")
        iref = float(ev.summary.get("iref_max", math.nan))
        if math.isfinite(iref) and abs(iref) > 0.1:
            out.append(f"{label}: the reference must deliver up to {format_quantity(iref, 'A')}.")
    out.append(DEFER)
    return out
