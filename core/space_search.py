"""Search the design space for the cheapest design that meets the targets.

``search(base, question, targets, cost)`` tries every network of the question's space (topology and
output, thermometer bits, unit resistor, series) at every tolerance grade:

1. deterministic figures first — each network's nominal solution against the targets and limits
   (``search_point.check_network``); a network that already fails is pruned with the real reason;
2. then each remaining (network, grade) point's yield by seeded Monte Carlo with early stopping
   (``search_point.decide_point``): "meets" only when decided above the target at the stated
   confidence; "undecided" within the trial budget never counts as meeting.

Points are independent and run through any ``concurrent.futures.Executor``: a process pool here by
default (:func:`default_executor`), or e.g. a cluster's executor (Dask distributed's
``Client.get_executor()``) — seeds travel as arguments, so cached (``pure``) calls stay right.
Every point uses the same seed, so grades and networks are compared on the same random boards.
"""

from __future__ import annotations

import math
import multiprocessing
import os
from collections.abc import Callable, Iterator
from concurrent.futures import FIRST_COMPLETED, Executor, Future, ProcessPoolExecutor, wait
from dataclasses import dataclass, field
from typing import Any

from .cost import CostTable
from .design import Design
from .errors import DesignError
from .formatting import format_percent, format_quantity
from .search_point import FIRST_LOOK, check_network, decide_point
from .search_question import LIMIT_KEYS, MAX_POINTS, SearchQuestion
from .targets import Targets
from .yield_decision import decide_yield, look_schedule

WAIT_STEP = 0.1
"""Seconds between cancel checks while points run."""


class InlineExecutor(Executor):
    """Runs each call at ``submit`` in the calling thread (tests, tiny searches, no processes)."""

    def submit(self, fn: Callable[..., Any], /, *args: Any, **kwargs: Any) -> Future:
        fut: Future = Future()
        try:
            fut.set_result(fn(*args, **kwargs))
        except BaseException as exc:  # handed to the caller through the future, like a pool
            fut.set_exception(exc)
        return fut


def default_executor(max_workers: int | None = None) -> ProcessPoolExecutor:
    """A process pool on this machine (``forkserver`` where available: safe from threaded callers)."""
    methods = multiprocessing.get_all_start_methods()
    ctx = multiprocessing.get_context("forkserver" if "forkserver" in methods else "spawn")
    return ProcessPoolExecutor(max_workers or max(1, min(os.cpu_count() or 1, 4)), mp_context=ctx)


@dataclass
class SearchPoint:
    """One design of the space, judged.

    ``verdict`` is "meets", "fails", "undecided" (Monte Carlo) or "pruned" (the nominal figures
    already rule it out; ``reason`` says why). ``yield_`` etc. are NaN for pruned points.
    """

    design: Design
    grade: float
    cost: float
    breakdown: dict[str, Any]
    verdict: str
    reason: str
    summary: dict[str, Any]
    yield_: float = math.nan
    yield_stderr: float = math.nan
    yield_lower: float = math.nan
    trials: int = 0
    inl_p99: float = math.nan

    @property
    def meets(self) -> bool:
        """Decided to meet every target and limit."""
        return self.verdict == "meets"

    @property
    def network(self) -> str:
        """Topology and output, e.g. ``"r2r-voltage (unbuffered)"``."""
        return f"{self.design.topology} ({self.design.output})"

    def counts(self) -> tuple[int, int, int]:
        """(resistors, switches, amplifiers)."""
        s = self.summary
        return (int(s.get("n_resistors", 0)), int(s.get("n_switches", 0)),
                int(s.get("n_amplifiers", 0)))

    def describe(self) -> str:
        """Short words: network, M, R, series and grade."""
        d = self.design
        m = f", M = {d.thermometer_bits}" if d.topology == "segmented" else ""
        build = "".join(f", {k} {v}" for k, v in sorted(d.build.items()))
        return (f"{self.network}{m}{build}, R = {format_quantity(d.unit_r, 'Ω')}, {d.series}, "
                f"±{format_percent(self.grade)}")

    def to_dict(self) -> dict[str, Any]:
        """The JSON entry of the command-line contract (plus the breakdown and decision)."""
        r, s, a = self.counts()
        out = {"design": _plain_design(self.design), "cost": self.cost, "meets": self.meets,
               "yield": _num(self.yield_), "yield_stderr": _num(self.yield_stderr),
               "trials": int(self.trials), "resistors": r, "switches": s, "amplifiers": a,
               "verdict": self.verdict, "yield_lower": _num(self.yield_lower),
               "cost_breakdown": self.breakdown.get("lines", {}), "reason": self.reason}
        return out


def _num(x: float) -> float | None:
    return float(x) if math.isfinite(x) else None


def _plain_design(d: Design) -> dict[str, Any]:
    """``Design.to_dict`` with JSON-safe values (``inf`` → "open", ``None`` left out)."""
    out = {}
    for k, v in d.to_dict().items():
        if v is None or (isinstance(v, dict) and not v):
            continue
        out[k] = "open" if isinstance(v, float) and math.isinf(v) else v
    return out


@dataclass
class SearchResult:
    """Every judged point (cheapest first), the answer, the Pareto front and why others lost."""

    base: Design
    question: SearchQuestion
    targets: Targets
    target_yield: float
    method: str
    prices: str
    points: list[SearchPoint] = field(default_factory=list)
    done: int = 0
    total: int = 0
    cancelled: bool = False

    @property
    def seed(self) -> int:
        """Seed of every point's Monte Carlo run."""
        return int(self.question.seed)

    @property
    def decided(self) -> list[SearchPoint]:
        """Points judged by Monte Carlo, by cost (then the larger yield bound first)."""
        pts = [p for p in self.points if p.verdict != "pruned"]
        return sorted(pts, key=lambda p: (p.cost, not p.meets, -_or(p.yield_lower), p.describe()))

    @property
    def pruned(self) -> list[SearchPoint]:
        """Points ruled out by the nominal figures, by cost."""
        return sorted((p for p in self.points if p.verdict == "pruned"), key=lambda p: p.cost)

    @property
    def answer(self) -> SearchPoint | None:
        """The cheapest point that meets everything (None when none does)."""
        return next((p for p in self.decided if p.meets), None)

    def front(self) -> list[SearchPoint]:
        """Meeting points no other meeting point beats on cost, yield bound and INL together."""
        ok = [p for p in self.decided if p.meets]

        def beats(a: SearchPoint, b: SearchPoint) -> bool:
            ge = (a.cost <= b.cost and _or(a.yield_lower) >= _or(b.yield_lower)
                  and _or(a.inl_p99, math.inf) <= _or(b.inl_p99, math.inf))
            gt = (a.cost < b.cost or _or(a.yield_lower) > _or(b.yield_lower)
                  or _or(a.inl_p99, math.inf) < _or(b.inl_p99, math.inf))
            return ge and gt

        return [p for p in ok if not any(beats(q, p) for q in ok if q is not p)]

    def why_lost(self) -> dict[str, str]:
        """For each network (topology and output) other than the answer's: why it lost."""
        best = self.answer
        groups: dict[str, list[SearchPoint]] = {}
        for p in self.points:
            groups.setdefault(p.network, []).append(p)
        out = {}
        for label, pts in groups.items():
            if best is not None and label == best.network:
                continue
            out[label] = _why(pts, best, self.question.trials)
        return out

    def answer_text(self) -> str:
        """The answer in one paragraph."""
        best = self.answer
        partial = " (search stopped early; points not run are missing)" if self.cancelled else ""
        if best is None:
            return (f"No design in the space meets the targets{partial}. " + " ".join(
                f"{k}: {v}." for k, v in self.why_lost().items()))
        r, s, a = best.counts()
        return (f"Cheapest design that meets every target{partial}: {best.describe()} — cost "
                f"{format_quantity(best.cost)} ({self.prices}); {r} resistors, {s} switches, {a} amplifiers; "
                f"yield {_yield_words(best)} over {best.trials} boards (target "
                f"{format_percent(self.target_yield)}).")

    def to_dict(self) -> dict[str, Any]:
        """``{"seed", "method", "designs": [...]}`` plus the answer's index, front, why others lost."""
        designs = self.decided
        best = self.answer
        return {"seed": self.seed, "method": self.method,
                "designs": [p.to_dict() for p in designs],
                "answer": None if best is None else designs.index(best),
                "front": [designs.index(p) for p in self.front()],
                "why_lost": self.why_lost(), "prices": self.prices,
                "target_yield": self.target_yield, "criterion": self.question.criterion,
                "pruned": [{"design": _plain_design(p.design), "cost": p.cost, "reason": p.reason}
                           for p in self.pruned],
                "done": self.done, "total": self.total, "cancelled": self.cancelled}


def _or(x: float, default: float = 0.0) -> float:
    return x if math.isfinite(x) else default


def _yield_words(p: SearchPoint) -> str:
    if p.trials and p.yield_ == 1.0:
        return f"≥ {format_percent(p.yield_lower)} (no failures)"
    return f"{format_percent(p.yield_)} (lower bound {format_percent(p.yield_lower)})"


def _why(pts: list[SearchPoint], best: SearchPoint | None, budget: int) -> str:
    ok = sorted((p for p in pts if p.meets), key=lambda p: p.cost)
    spread = max((float(p.summary.get("spread", 1.0)) for p in pts), default=1.0)
    spread_words = f"1:{format_quantity(spread)} spread, " if spread >= 8 else ""
    if ok:
        p = ok[0]
        ratio = (f", cost {format_quantity(p.cost / best.cost, '×', digits=3)} the answer"
                 if best and best.cost > 0 else "")
        tighter = (f"needs ±{format_percent(p.grade)} parts" if best is None or p.grade < best.grade
                   else f"{sum(p.counts())} parts")
        return f"{spread_words}{tighter}{ratio} ({p.describe()})"
    judged = [p for p in pts if p.verdict != "pruned"]
    if not judged:
        return pts[0].reason or "ruled out by its nominal figures"
    undecided = [p for p in judged if p.verdict == "undecided"]
    top = max(judged, key=lambda p: _or(p.yield_))
    if undecided:
        return (f"{spread_words}undecided within {budget} boards (best yield "
                f"{format_percent(top.yield_)} at ±{format_percent(top.grade)}); not counted as meeting")
    return (f"{spread_words}misses the yield at every grade tried (best {format_percent(top.yield_)} at "
            f"±{format_percent(top.grade)})")


@dataclass(frozen=True)
class SearchProgress:
    """A partial result: ``result.done`` of ``result.total`` tasks finished."""

    result: SearchResult

    @property
    def fraction(self) -> float:
        """0 … 1."""
        r = self.result
        return r.done / r.total if r.total else 0.0


def method_text(question: SearchQuestion) -> str:
    """How yields were decided, in words (the JSON ``method``)."""
    looks = look_schedule(question.trials, FIRST_LOOK)
    rule = decide_yield(0, 1, 0.5, question.confidence, question.method,  # type: ignore[arg-type]
                        looks=len(looks)).method
    stops = "first crossing of its limits" if question.method == "wald-sprt" else (
        "looks at " + ", ".join(str(n) for n in looks) + " boards")
    return (f"nominal figures prune first; then seeded Monte Carlo (seed {question.seed}, the exact "
            f"per-bit engine where superposition holds), stopping early at the {stops}; yield "
            f"decided by {rule}; undecided within {question.trials} boards is not 'meets'")


def _context(question: SearchQuestion, targets: Targets, target_yield: float) -> dict[str, Any]:
    ctx = {"targets": targets.to_dict(), "criterion": question.criterion,
           "target_yield": target_yield, "trials": int(question.trials),
           "confidence": question.confidence, "method": question.method,
           "grades": list(question.grades), "ratings": question.ratings}
    ctx.update({k: getattr(question, k) for k in LIMIT_KEYS})
    return ctx


def iter_search(base: Design, question: SearchQuestion | None = None, targets: Targets | None = None,
                cost: CostTable | None = None, executor: Executor | None = None,
                cancel: Any = None) -> Iterator[SearchProgress]:
    """Run the search, yielding the partial result after every finished task (then the whole).

    Parameters
    ----------
    base : Design
        Fixes bits, reference, switches, load, temperature, the board table and the mismatch model.
    question : SearchQuestion, optional
        The space, limits and decision settings (default: ``SearchQuestion()``).
    targets : Targets, optional
        INL/DNL/monotonic targets; the yield target is ``question.target_yield`` or
        ``targets.min_yield``.
    cost : CostTable, optional
        Prices (default: the invented examples).
    executor : concurrent.futures.Executor, optional
        Runs the points; default a process pool made (and shut down) here.
    cancel : object with ``is_set()``, optional
        Stops submitting and waiting; the result says ``cancelled``.

    Raises
    ------
    DesignError
        A bad space (no point, too many, a grade the prices do not cover, the on-chip model).
    """
    question = question or SearchQuestion()
    targets = targets or Targets()
    cost = cost or CostTable()
    target_yield = question.target_yield if question.target_yield is not None else targets.min_yield
    if not 0 < target_yield < 1:
        raise DesignError("target_yield", f"{target_yield!r} is out of range; allowed: above 0 and "
                          "below 100 %")
    if base.mismatch.get("model", "parts") == "on-chip":
        raise DesignError("mismatch.model", "the search tries tolerance grades, which apply to "
                          "discrete parts or matched arrays, not to the on-chip area law")
    networks = question.networks_of(base)
    n_points = len(networks) * len(question.grades)
    if not networks:
        raise DesignError("topology", "the space holds no network (check --topology and the bits)")
    if n_points > MAX_POINTS:
        raise DesignError("search", f"the space holds {n_points} points; allowed at most "
                          f"{MAX_POINTS} (narrow the grades, series, unit_r or thermometer bits)")
    for grade in question.grades:
        key = "array_package" if base.board.get("array_size", 0) else "resistor"
        cost.grade_price(key, grade, question.series[0])  # refuses a grade the prices lack
    ctx = _context(question, targets, target_yield)
    result = SearchResult(base, question, targets, target_yield, method_text(question), cost.source,
                          total=len(networks) + n_points)
    own = executor is None
    ex = executor or default_executor()
    pending: dict[Future, tuple[str, Any]] = {}
    try:
        for d in networks:
            pending[ex.submit(check_network, _plain_design(d), ctx, cost)] = ("check", d)
        while pending:
            if cancel is not None and cancel.is_set():
                result.cancelled = True
                break
            done, _ = wait(list(pending), timeout=WAIT_STEP, return_when=FIRST_COMPLETED)
            for fut in done:
                kind, info = pending.pop(fut)
                _take(result, kind, info, fut.result(), question, ctx, ex, pending)
                result.done += 1
                yield SearchProgress(result)
    finally:
        for fut in pending:
            fut.cancel()
        if own:
            ex.shutdown(wait=not result.cancelled, cancel_futures=True)
    yield SearchProgress(result)


def _take(result: SearchResult, kind: str, info: Any, out: dict[str, Any], question: SearchQuestion,
          ctx: dict[str, Any], ex: Executor, pending: dict[Future, tuple[str, Any]]) -> None:
    """Record a finished task; a network that survives its check gets one task per grade."""
    if kind == "check":
        d: Design = info
        if out["pruned"]:
            result.total -= len(question.grades)
            for grade in question.grades:
                bd = out["costs"].get(grade, {"total": math.nan})
                result.points.append(SearchPoint(_graded(d, grade), grade, bd["total"], bd,
                                                 "pruned", out["pruned"], out["summary"]))
            return
        for grade in question.grades:
            fut = ex.submit(decide_point, _plain_design(d), grade, ctx, int(question.seed))
            pending[fut] = ("point", (d, grade, out))
        return
    d, grade, check = info
    if out.get("cancelled"):
        return
    bd = check["costs"][grade]
    dec = out["decision"]
    result.points.append(SearchPoint(
        _graded(d, grade), grade, bd["total"], bd, dec["verdict"],
        f"{dec['verdict']}: {dec['passed']} of {dec['trials']} boards [{dec['method']}]",
        check["summary"], out["yield"], out["yield_stderr"], dec["lower"], out["trials"],
        out["inl_p99"]))


def _graded(d: Design, grade: float) -> Design:
    return d.replace(mismatch={**d.to_dict()["mismatch"], "tolerance": float(grade)})


def search(base: Design, question: SearchQuestion | None = None, targets: Targets | None = None,
           cost: CostTable | None = None, executor: Executor | None = None) -> SearchResult:
    """The whole search (see :func:`iter_search`); returns the final :class:`SearchResult`."""
    *_, last = iter_search(base, question, targets, cost, executor)
    return last.result
