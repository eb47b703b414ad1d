"""Say the real reason when no tolerance grade can help: the nominal design already misses a target.

A design that is non-monotonic (or beyond the INL/DNL limit) with every part exactly at its value
fails at any grade; "tighter than ±0.01 %" or "none" hides that. :func:`nominal_failure` finds the
missed target, tries the design with each non-ideal element made ideal in turn (switch resistance,
load, snapping to a series, reference resistance) to name the cause, and looks for a change that
fixes it (a larger unit resistor, equal switch resistances, a finer series, a buffered output).
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field
from typing import Any

import numpy as np

from .design import Design
from .errors import RungwiseError
from .evaluate import linearity_curves
from .formatting import format_percent, format_quantity
from .metrics import linearity
from .solve import solve
from .targets import Targets
from .topologies import build

R_STEPS = (2.0, 5.0, 10.0, 20.0, 50.0, 100.0)
"""Multiples of the unit resistor tried when the switches are the cause."""


def misses(summary: dict[str, Any], targets: Targets, criterion: str = "all") -> list[str]:
    """The targets a nominal solution misses (only those ``criterion`` judges), as phrases."""
    out = []
    if criterion in ("all", "monotonic") and targets.monotonic and not summary["monotonic"]:
        out.append("non-monotonic")
    if criterion in ("all", "dnl") and not summary["max_abs_dnl"] <= targets.max_dnl_lsb:
        out.append(f"max |DNL| {format_quantity(summary['max_abs_dnl'], 'LSB')} > "
                   f"{format_quantity(targets.max_dnl_lsb, 'LSB')}")
    inl = summary[f"max_abs_inl_{targets.inl_line}"]
    if criterion in ("all", "inl") and not inl <= targets.max_inl_lsb:
        out.append(f"max |INL| {format_quantity(inl, 'LSB')} > {format_quantity(targets.max_inl_lsb, 'LSB')}")
    return out


@dataclass(frozen=True)
class NominalFailure:
    """Why a design fails before any mismatch.

    Attributes
    ----------
    missed : list[str]
        The targets missed by the nominal design, with figures.
    worst_step : str
        Where the DNL is worst (``"DNL −1.42 LSB at transition 128"``).
    causes : list[str]
        Elements that, made ideal alone, let the nominal design meet the targets.
    changes : list[str]
        Concrete changes that make the nominal design meet them (checked by solving).
    """

    missed: list[str]
    worst_step: str
    causes: list[str] = field(default_factory=list)
    changes: list[str] = field(default_factory=list)

    def text(self) -> str:
        """One paragraph for people."""
        out = (f"The nominal design already fails before any part mismatch ({', '.join(self.missed)}; "
               f"{self.worst_step}), so no tolerance grade can meet the target.")
        if self.causes:
            out += " Cause: " + "; ".join(self.causes) + "."
        else:
            out += (" No single non-ideal element explains it: the network itself misses the "
                    "target at this resolution.")
        if self.changes:
            out += " To change: " + "; or ".join(self.changes) + "."
        return out


def linearity_summary(design: Design) -> dict[str, Any]:
    """The nominal linearity figures ``misses`` reads, from one solve (no power, noise or
    switching figures: a trial change costs one solve)."""
    v = solve(build(design), vout_only=True).vout
    curves = linearity_curves(v)
    return {"monotonic": bool(linearity.monotonic(v)),
            "max_abs_dnl": float(np.abs(curves["dnl"]).max()) if curves["dnl"].size else 0.0,
            "max_abs_inl_endpoint": float(np.nanmax(np.abs(curves["inl_endpoint"]))),
            "max_abs_inl_bestfit": float(np.nanmax(np.abs(curves["inl_bestfit"]))),
            "dnl": curves["dnl"]}


class _Stopped(Exception):
    """The caller's cancel event was set between trial solves."""


def _meets(design: Design, targets: Targets, criterion: str, cancel: Any = None) -> bool:
    if cancel is not None and cancel.is_set():
        raise _Stopped
    try:
        return not misses(linearity_summary(design), targets, criterion)
    except RungwiseError:
        return False


def _ohms(x: float) -> str:
    return format_quantity(x, "Ω")


def nominal_failure(design: Design, targets: Targets | None = None, criterion: str = "all",
                    summary: dict[str, Any] | None = None, cancel: Any = None,
                    cached_only: bool = False) -> NominalFailure | None:
    """Why ``design`` misses ``targets`` with every part at its value, or ``None`` when it meets
    (also ``None`` when ``cancel.is_set()`` stops it between its trial solves).

    ``summary``: the design's evaluation summary when already computed. ``cached_only``: answer
    only from earlier calls (``None`` if not asked before), never solving — for the GUI thread.
    """
    targets = targets or Targets()
    key = repr((sorted(design.to_dict().items()), targets, criterion))
    if key in _CACHE or cached_only:
        return _CACHE.get(key)
    try:
        found = _failure(design, targets, criterion, summary, cancel)
    except _Stopped:
        return None
    if len(_CACHE) >= CACHE_SIZE:
        _CACHE.pop(next(iter(_CACHE)))
    _CACHE[key] = found
    return found


CACHE_SIZE = 256
"""Designs whose answer is kept (a view asks again on every redraw; a worker fills it first)."""

_CACHE: dict[str, NominalFailure | None] = {}


def _failure(design: Design, targets: Targets, criterion: str, summary: dict[str, Any] | None,
             cancel: Any) -> NominalFailure | None:
    if summary is None:
        summary = linearity_summary(design)
    missed = misses(summary, targets, criterion)
    if not missed:
        return None
    dnl = linearity_summary(design)["dnl"]
    mono = "non-monotonic" in missed
    k = (int(dnl.argmin()) if mono else int(abs(dnl).argmax())) if dnl.size else 0
    step = format_quantity(float(dnl[k]), signed=True) if dnl.size else ""
    worst = f"DNL {step} LSB at transition {k + 1}" if dnl.size else "one code"
    causes, changes = [], []
    d = design
    switches = d.ron_high > 0 or d.ron_low > 0
    if switches and _meets(d.replace(ron_high=0.0, ron_low=0.0), targets, criterion, cancel):
        causes.append(f"switch resistance ({_ohms(d.ron_high)} on / {_ohms(d.ron_low)} off against "
                      f"R = {_ohms(d.unit_r)}) — with ideal switches it meets")
        for m in R_STEPS:
            try:
                bigger = d.replace(unit_r=d.unit_r * m)
            except RungwiseError:
                break
            if _meets(bigger, targets, criterion, cancel):
                changes.append(f"raise R to {_ohms(bigger.unit_r)} (×{format_quantity(m)}) so the "
                               "switches are a smaller share")
                break
        if d.ron_high != d.ron_low and _meets(d.replace(ron_low=d.ron_high), targets, criterion, cancel):
            changes.append("switches with equal resistance in both states")
    if math.isfinite(d.load_r) and _meets(d.replace(load_r=math.inf), targets, criterion, cancel):
        causes.append(f"the load ({_ohms(d.load_r)}) — open it meets")
        changes.append("buffer the output or raise the load resistance")
    if d.series != "exact" and _meets(d.replace(series="exact"), targets, criterion, cancel):
        causes.append(f"snapping to {d.series} values — with exact values it meets")
        finer = "E192" if d.series != "E192" else None
        if finer and _meets(d.replace(series=finer), targets, criterion, cancel):
            changes.append(f"a finer series ({finer})")
        changes.append("exact (custom or trimmed) values")
    if d.ref_r > 0 and _meets(d.replace(ref_r=0.0), targets, criterion, cancel):
        causes.append(f"the reference's output resistance ({_ohms(d.ref_r)}) — ideal it meets")
        changes.append("drive the network from a buffered reference")
    return NominalFailure(missed, worst, causes, changes)


def loosest_grade_words(design: Design, grade: float | None, tightest: float,
                        targets: Targets | None = None, criterion: str = "all",
                        cancel: Any = None, undecided_boards: int = 0) -> str:
    """The loosest-grade answer in words: ``"±0.1 %"``; when none passes, either the real reason
    (the nominal design already fails: ``"none — The nominal design already fails …"``), or
    "none decided within N boards" when ``undecided_boards`` > 0 (some grade's yield was left
    undecided), or ``"tighter than ±0.01 %"``."""
    if grade is not None:
        return f"±{format_percent(grade)}"
    failure = nominal_failure(design, targets, criterion, cancel=cancel)
    if failure is not None:
        return "none — " + failure.text()
    if undecided_boards:
        return (f"none decided within {undecided_boards} boards per grade (more boards may "
                "decide it; undecided is not 'meets')")
    return f"tighter than ±{format_percent(tightest)}"
