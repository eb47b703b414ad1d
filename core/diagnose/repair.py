"""A repair plan for a built board: the fewest changes that bring it within a target, whichever
fitting explanation of its curve is true.

Three kinds of change, each to one part:

- ``replace``: a new part of the nearest preferred value to the design's value. It helps only
  when that part is the one that is off (under another explanation it changes a good part).
- ``parallel``: a resistor added across the part, R ∥ R_t; lowers the part by a known share of
  its value, whatever its true value.
- ``series``: a resistor added in line with it, R + R_s; raises it by a known amount.

Trim values are sized to bring the part back to its design value under each explanation that
blames it, then taken to the nearest preferred value. Every plan of one, two, then three changes
(at most one per part) is tried under every explanation: the board is that explanation's
values with the changes applied, and the predicted curve is the *measured* curve plus the model's
change (so what the model does not explain stays in the prediction). The first size with a plan
meeting the target (max |INL| and max |DNL|, endpoint line, at the measured codes) under every
explanation wins; among those, the smallest worst-case max |INL|. One batched solve per size.
"""

from __future__ import annotations

import itertools
from dataclasses import dataclass

import numpy as np

from ..design import Design
from ..formatting import format_quantity
from ..network import PartList
from ..parts.eseries import HIGHEST_OHMS, LOWEST_OHMS, snap
from ..solve import solve
from ..topologies import build
from .joint import Explanation
from .suspects import _element_ids

DEFAULT_TARGET_INL = 0.25
"""Target max |INL| (and |DNL|) after the repair, LSB."""

DEFAULT_SERIES = "E96"
"""Preferred-value series of the new parts."""

MAX_ACTIONS = 3
"""Most changes in one plan."""

MAX_CHOICES = 24
"""Candidate changes kept for plans of three (the most useful alone first)."""

BATCH = 1 << 21
"""Largest boards × codes of one solve."""


@dataclass(frozen=True)
class Action:
    """One change: ``id`` (part), ``action`` (replace | parallel | series), ``ohms`` (the new part
    for replace, the added resistor otherwise)."""

    id: str
    action: str
    ohms: float

    def apply(self, true_ohms: float) -> float:
        """The part's value after the change, given its value before, ohms."""
        if self.action == "replace":
            return self.ohms
        if self.action == "parallel":
            return true_ohms * self.ohms / (true_ohms + self.ohms)
        return true_ohms + self.ohms

    def to_dict(self) -> dict:
        """The JSON form promised to scripts."""
        return {"id": self.id, "action": self.action, "ohms": float(self.ohms)}

    def describe(self) -> str:
        """In words, e.g. ``"leg3: add 1.1 MΩ in parallel"``."""
        from ..formatting import format_si

        if self.action == "replace":
            return f"{self.id}: replace with {format_si(self.ohms, 'Ω')}"
        where = "in parallel" if self.action == "parallel" else "in series"
        return f"{self.id}: add {format_si(self.ohms, 'Ω')} {where}"


@dataclass(frozen=True, eq=False)
class RepairPlan:
    """Result of :func:`plan_repair`.

    Attributes
    ----------
    actions : list[Action] — empty when the board already meets the target
    predicted_max_abs_inl : float — worst over the explanations, LSB (endpoint line)
    predicted_max_abs_dnl : float — worst over the explanations, LSB
    per_explanation : list[float] — predicted max |INL| under each explanation, in their order
    meets_target : bool
    target_inl : float — LSB
    series : str
    assumptions : list[str]
    """

    actions: list[Action]
    predicted_max_abs_inl: float
    predicted_max_abs_dnl: float
    per_explanation: list[float]
    meets_target: bool
    target_inl: float
    series: str
    assumptions: list[str]

    def to_dict(self) -> dict:
        """The JSON form (``actions`` and ``predicted_max_abs_inl`` are promised to scripts)."""
        return {"actions": [a.to_dict() for a in self.actions],
                "predicted_max_abs_inl": self.predicted_max_abs_inl,
                "predicted_max_abs_dnl": self.predicted_max_abs_dnl,
                "predicted_max_abs_inl_per_explanation": self.per_explanation,
                "meets_target": self.meets_target, "target_inl": self.target_inl,
                "series": self.series, "assumptions": list(self.assumptions)}

    def repaired(self, built: Design) -> Design:
        """``built`` (a design whose ``parts`` hold the board's values) with the changes made."""
        values = {p.part_id: p.ohms for p in build(built).parts}
        parts = dict(built.parts)
        for a in self.actions:
            parts[a.id] = a.apply(values[a.id])
        return built.replace(parts=parts, name=f"{built.label}, repaired")


def _choices(design: Design, nominal: dict[str, float], explanations: list[Explanation],
             series: str) -> list[Action]:
    """Candidate changes: a replacement and the trims each explanation calls for."""
    out: dict[tuple, Action] = {}
    for e in explanations:
        for pid, dev in e.parts.items():
            nom = nominal[pid]
            new = float(snap(nom, series, field=f"repair ({pid})"))
            out.setdefault((pid, "replace", new), Action(pid, "replace", new))
            true = nom * (1.0 + dev)
            if dev > 0:
                ideal = true * nom / (true - nom)
                kind = "parallel"
            else:
                ideal = nom - true
                kind = "series"
            if LOWEST_OHMS <= ideal <= HIGHEST_OHMS:
                val = float(snap(ideal, series, field=f"repair ({pid})"))
                out.setdefault((pid, kind, val), Action(pid, kind, val))
    return list(out.values())


def _curves(design: Design, boards: list[dict[str, float]], codes: np.ndarray) -> np.ndarray:
    """Output at ``codes`` of boards given as part id → ohms; shape (n_boards, n_codes)."""
    net = build(design)
    elements = _element_ids(net)
    rows = []
    step = max(1, BATCH // max(codes.size, 1))
    ids = sorted({pid for b in boards for pid in b})
    nominal = {p.part_id: p.ohms for p in net.parts}
    for start in range(0, len(boards), step):
        chunk = boards[start:start + step]
        ohms = {pid: np.array([b.get(pid, nominal[pid]) for b in chunk])[:, None]
                for pid in ids if pid in elements}
        scale = np.ones((len(chunk), 1))
        if "feedback" in ids and net.output.kind == "virtual-ground":
            scale = np.array([b.get("feedback", nominal["feedback"]) for b in chunk])[:, None] \
                / nominal["feedback"]
        v = solve(net, ohms=ohms or None, codes=codes).vout
        rows.append(np.broadcast_to(v, (len(chunk), codes.size)) * scale)
    return np.concatenate(rows, axis=0)


def figures(codes: np.ndarray, volts: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Max |INL| and max |DNL| of each row of ``volts`` (shape (rows, n)) at the measured ``codes``,
    by the rules of ``curve.py``: endpoint line through the lowest and highest measured code, DNL
    per measured step over the codes it spans; an inverting curve is read flipped. Shapes (rows,)."""
    c = np.asarray(codes, dtype=float)
    v = np.asarray(volts, dtype=float)
    slope = (v[:, -1] - v[:, 0]) / (c[-1] - c[0])
    v = v * np.where(slope < 0, -1.0, 1.0)[:, None]
    slope = np.abs(slope)[:, None]
    with np.errstate(divide="ignore", invalid="ignore"):
        inl = (v - v[:, :1] - (c - c[0]) * slope) / slope
        dnl = np.diff(v, axis=1) / (np.diff(c) * slope) - 1.0
    return np.max(np.abs(inl), axis=1), (np.max(np.abs(dnl), axis=1) if dnl.shape[1]
                                         else np.zeros(v.shape[0]))


def plan_repair(design: Design, codes: np.ndarray, volts: np.ndarray,
                explanations: list[Explanation], target_inl: float = DEFAULT_TARGET_INL,
                series: str = DEFAULT_SERIES) -> RepairPlan:
    """The fewest changes that meet ``target_inl`` under every explanation (module docstring).

    Parameters
    ----------
    design : Design — as designed
    codes, volts : ndarray, shape (n,) — the measured curve (means), volts
    explanations : list[Explanation] — those that fit (or the closest ones); each a possible board
    target_inl : float — LSB, > 0
    series : str — preferred-value series of new parts (E3 … E192)
    """
    net = build(design)
    nominal = {p.part_id: p.ohms for p in PartList.of(net.parts)}
    assumptions = [
        "the board is one of the explanations listed; every other part is as the measurement shows",
        "a new part or trim has exactly its preferred value (its own tolerance is not counted)",
        "predicted curve = measured curve + the model's change, so unexplained effects remain",
        f"target: max |INL| and max |DNL| ≤ {target_inl:g} LSB (endpoint line, measured codes)",
    ]
    base_inl, base_dnl = figures(codes, np.asarray(volts)[None, :])
    if not explanations or (base_inl[0] <= target_inl and base_dnl[0] <= target_inl):
        why = ("the board already meets the target" if explanations else
               "no explanation of the curve: nothing to base a repair on")
        return RepairPlan([], float(base_inl[0]), float(base_dnl[0]),
                          [float(base_inl[0])] * len(explanations),
                          bool(base_inl[0] <= target_inl and base_dnl[0] <= target_inl),
                          target_inl, series, [why, *assumptions])
    boards = [{pid: nominal[pid] * (1.0 + d) for pid, d in e.parts.items()} for e in explanations]
    before = _curves(design, boards, codes)  # (explanations, codes)
    choices = _choices(design, nominal, explanations, series)

    def evaluate(plans: list[tuple[Action, ...]]) -> tuple[np.ndarray, np.ndarray]:
        """Predicted max |INL|, |DNL| of each plan under each explanation; (plans, explanations)."""
        rows = []
        for plan in plans:
            for b in boards:
                after = dict(b)
                for a in plan:
                    after[a.id] = a.apply(b.get(a.id, nominal[a.id]))
                rows.append(after)
        model = _curves(design, rows, codes).reshape(len(plans), len(boards), codes.size)
        pred = np.asarray(volts)[None, None, :] + model - before[None, :, :]
        inl, dnl = figures(codes, pred.reshape(-1, codes.size))
        return inl.reshape(len(plans), len(boards)), dnl.reshape(len(plans), len(boards))

    best: tuple[float, tuple[Action, ...], np.ndarray, float] | None = None
    single_score: dict[Action, float] = {}
    for k in range(1, MAX_ACTIONS + 1):
        pool = choices
        if k == MAX_ACTIONS and len(choices) > MAX_CHOICES:
            pool = sorted(choices, key=lambda a: single_score.get(a, np.inf))[:MAX_CHOICES]
        plans = [p for p in itertools.combinations(pool, k) if len({a.id for a in p}) == k]
        if not plans:
            continue
        inl, dnl = evaluate(plans)
        worst_inl, worst_dnl = inl.max(axis=1), dnl.max(axis=1)
        if k == 1:
            single_score = {p[0]: float(w) for p, w in zip(plans, worst_inl, strict=True)}
        ok = (worst_inl <= target_inl) & (worst_dnl <= target_inl)
        order = np.lexsort((worst_inl, ~ok))
        i = int(order[0])
        cand = (float(worst_inl[i]), plans[i], inl[i], float(worst_dnl[i]))
        if best is None or cand[0] < best[0]:
            best = cand
        if ok[i]:
            best = cand
            break
    assert best is not None
    worst, plan, per, worst_dnl = best
    meets = worst <= target_inl and worst_dnl <= target_inl
    if not meets:
        own, _ = figures(codes, _curves(design, [{}], codes))
        why = (f": the design itself (every part at its value) has max |INL| "
               f"{format_quantity(own[0], 'LSB')}"
               if own[0] > target_inl else "")
        assumptions.insert(0, f"no plan of up to {MAX_ACTIONS} changes meets the target under "
                              f"every explanation{why}; this is the closest found")
    return RepairPlan(list(plan), worst, worst_dnl, [float(x) for x in per], bool(meets),
                      target_inl, series, assumptions)
