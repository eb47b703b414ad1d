"""Monte Carlo results as text: the rows the command line prints (table and CSV). No Qt."""

from __future__ import annotations

from typing import Any

from rungwise.core.design import Design
from rungwise.core.formatting import format_percent, format_quantity
from rungwise.core.grades import STANDARD_GRADES, YieldCurve, yield_vs_tolerance
from rungwise.core.mismatch import MismatchModel
from rungwise.core.nominal_reason import loosest_grade_words
from rungwise.core.stats_result import PERCENTILES, STAT_UNITS, YIELDS, MonteCarloResult

STAT_LABELS: dict[str, str] = {
    "max_abs_inl_endpoint": "Max |INL|, endpoint",
    "max_abs_inl_bestfit": "Max |INL|, best fit",
    "max_abs_dnl": "Max |DNL|",
    "offset": "Offset",
    "gain_error": "Gain error",
}
"""Label of each per-trial figure."""

SHOWN_PERCENTILES: dict[str, tuple[float, ...]] = {
    "max_abs_inl_endpoint": (50.0, 99.0), "max_abs_inl_bestfit": (50.0, 99.0),
    "max_abs_dnl": (50.0, 99.0), "offset": (1.0, 99.0), "gain_error": (1.0, 99.0),
}
"""Percentiles shown in the table per figure (all of ``PERCENTILES`` go to JSON and CSV)."""


def _figure(key: str, value: float) -> str:
    return format_quantity(value, STAT_UNITS[key])


def _ordinal(p: float) -> str:
    n = int(p)
    return f"{n}{'st' if n % 10 == 1 and n % 100 != 11 else 'th'}"


def stat_rows(r: MonteCarloResult) -> list[tuple[str, str]]:
    """(label, text) rows of one result, in display order."""
    t = r.targets
    rows = [("Seed", str(r.seed)), ("Trials", f"{r.done} of {r.trials}" if r.done < r.trials
                                     else str(r.trials)),
            ("Engine", r.engine), ("Mismatch", r.model.describe()),
            ("Targets", f"|INL| ≤ {format_quantity(t.max_inl_lsb, 'LSB')} ({t.inl_line}), "
             f"|DNL| ≤ {format_quantity(t.max_dnl_lsb, 'LSB')}"
             + (", monotonic" if t.monotonic else ""))]
    rows += [(label, getattr(r, key).text()) for key, label in YIELDS.items()]
    pct = r.percentiles
    for key, label in STAT_LABELS.items():
        for p in SHOWN_PERCENTILES[key]:
            rows.append((f"{label}, {_ordinal(p)} percentile", _figure(key, pct[key][p])))
    return rows


def grade_curves(designs: list[Design], trials: int, seed: int, targets: Any, criterion: str
                 ) -> list[YieldCurve | None]:
    """Each design's yield over ``STANDARD_GRADES`` (``None`` for the on-chip model)."""
    return [None if MismatchModel.of(d).model == "on-chip" else
            yield_vs_tolerance(d, STANDARD_GRADES, trials, seed, targets, criterion) for d in designs]


def grades_dict(curve: YieldCurve, target: float, targets: Any = None) -> dict[str, Any]:
    """A curve as plain values: criterion, target, yield per grade, loosest passing grade, and
    ``reason``: when none passes, why in words (the nominal design's real reason when it already
    fails)."""
    loosest = curve.loosest(target)
    open_ = any(d is not None and d.verdict == "undecided" for d in curve.decisions)
    reason = "" if loosest is not None else loosest_grade_words(
        curve.design, None, float(min(curve.steps)), targets, curve.criterion,
        undecided_boards=curve.trials if open_ else 0)
    return {"criterion": curve.criterion, "target_yield": target,
            "curve": [{"tolerance": float(g), "yield": y.value, "stderr": y.stderr}
                      for g, y in zip(curve.steps, curve.yields, strict=True)],
            "loosest": loosest, "reason": reason}


def _grade_rows(grades: list[dict[str, Any] | None]) -> list[list[str]]:
    first = next(g for g in grades if g is not None)
    rows = []
    for i, point in enumerate(first["curve"]):
        label = f"Yield ({first['criterion']}) at ±{format_percent(point['tolerance'])}"
        rows.append([label, *["—" if g is None else format_percent(g['curve'][i]['yield'])
                              for g in grades]])
    loosest = ["—" if g is None else f"±{format_percent(g['loosest'])}" if g["loosest"] is not None
               else "none (see below)" for g in grades]
    rows.append([f"Loosest grade for {format_percent(first['target_yield'])}", *loosest])
    return rows


def render_stats_table(labels: list[str], results: list[MonteCarloResult],
                       grades: list[dict[str, Any] | None] | None = None) -> str:
    """Aligned text: one row per statistic, one column per candidate."""
    per = [stat_rows(r) for r in results]
    rows = [["Statistics", *labels]]
    for i, (label, _) in enumerate(per[0]):
        rows.append([label, *[p[i][1] for p in per]])
    notes = []
    if grades and any(g is not None for g in grades):
        rows += _grade_rows(grades)
        notes = [f"{label}: loosest grade: {g['reason']}" for label, g in zip(labels, grades, strict=True)
                 if g is not None and g["loosest"] is None and g.get("reason")]
    widths = [max(len(row[i]) for row in rows) for i in range(len(rows[0]))]
    return "\n".join(["  ".join(c.ljust(w) for c, w in zip(row, widths, strict=True)).rstrip()
                      for row in rows] + notes)


def stats_csv_rows(results: list[MonteCarloResult], grades: list[dict[str, Any] | None] | None = None
                   ) -> list[list[Any]]:
    """CSV rows ``[metric, value per candidate]`` (metric names prefixed ``stat.``; with grades,
    ``stat.grade.<tolerance>`` yields and ``stat.grade.loosest``)."""
    rows: list[list[Any]] = [["stat.seed", *[r.seed for r in results]],
                             ["stat.trials", *[r.done for r in results]],
                             ["stat.engine", *[r.engine for r in results]]]
    for key in YIELDS:
        rows.append([f"stat.{key}", *[getattr(r, key).value for r in results]])
        rows.append([f"stat.{key}_stderr", *[getattr(r, key).stderr for r in results]])
    for key in STAT_UNITS:
        for p in PERCENTILES:
            rows.append([f"stat.{key}.p{p:g}", *[r.percentiles[key][p] for r in results]])
    for i, g in enumerate(STANDARD_GRADES if grades else ()):
        rows.append([f"stat.grade.{g:g}", *[None if d is None else d["curve"][i]["yield"]
                                            for d in grades]])
    if grades:
        rows.append(["stat.grade.loosest", *[None if d is None else d["loosest"] for d in grades]])
    return rows
