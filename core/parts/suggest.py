"""Suggest unit values: every value of a preferred series tried as ``unit_r``, checked against the
user's limits and ranked.

All candidates are solved together as a batch (one trial per value, like Monte Carlo), with
their parts snapped as they would be built. Ranking, best first: values meeting every limit
before those that miss some (fewest misses first); then the smallest max |INL| that snapping
leaves; then the smallest reference current.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field
from typing import Any

import numpy as np

from ..build_style import unit_ohms
from ..formatting import format_quantity
from ..metrics import linearity, noise, settling
from ..ranges import FieldSpec
from ..solve import CHUNK_ELEMENTS, solve
from ..topologies import build
from .eseries import HIGHEST_OHMS, LOWEST_OHMS, snap, values
from .snapping import compose, snapped_ids


@dataclass(frozen=True)
class Limits:
    """What a suggested unit value must satisfy (``None`` = no limit).

    Attributes
    ----------
    iref_max : float | None, A — largest reference current
    rout_max : float | None, Ω — largest output resistance
    settling_max : float | None, s — largest settling time to ½ LSB (needs ``load_c``)
    noise_lsb_max : float | None, LSB — largest RMS thermal noise over the bandwidth
    """

    iref_max: float | None = None
    rout_max: float | None = None
    settling_max: float | None = None
    noise_lsb_max: float | None = None


LIMIT_SPECS: dict[str, FieldSpec] = {
    "iref_max": FieldSpec("Largest reference current", "A", 0.0, 1e3, low_open=True, optional=True),
    "rout_max": FieldSpec("Largest output resistance", "Ω", 0.0, 1e15, low_open=True, optional=True),
    "settling_max": FieldSpec("Longest settling time", "s", 0.0, 1e6, low_open=True, optional=True),
    "noise_lsb_max": FieldSpec("Largest noise", "LSB", 0.0, 1e6, low_open=True, optional=True),
}
"""What each limit accepts (empty: no limit)."""


@dataclass
class Suggestion:
    """One unit value tried, with its figures and why it ranks where it does."""

    unit_r: float
    iref_max: float
    rout_max: float
    settling_time: float
    noise_lsb: float
    max_abs_inl: float
    misses: list[str] = field(default_factory=list)
    reason: str = ""


def _alike_columns(parts: list, snapped: set[str]) -> tuple[list[tuple], np.ndarray]:
    """Parts that snap and compose alike share one value column.

    Returns the distinct (unit value Ω, units, joined, snapped) kinds and, per part, the index of
    its kind (shape (n_parts,)): a 65,536-part string is one kind, so the series is snapped and
    composed once per value, not once per part.
    """
    kinds: dict[tuple, int] = {}
    index = [kinds.setdefault((unit_ohms(p), p.units, p.joined, p.part_id in snapped), len(kinds))
             for p in parts]
    return list(kinds), np.array(index, dtype=np.int64)


def _figures(design: Any, units: np.ndarray, cancel: Any = None) -> list[Suggestion] | None:
    """Solve the design at each unit value: parts scaled from the unsnapped network, snapped
    together (shape (n_values, n_kinds)) and solved as one batch per chunk; ``None`` once
    ``cancel`` (checked between chunks) is set."""
    base = build(design.replace(series="exact"))
    parts = list(base.parts)
    kinds, kind_of = _alike_columns(parts, set(snapped_ids(design, base)))
    chosen = np.array([k[3] for k in kinds], dtype=bool)
    scale = units / design.unit_r
    unit_nominal = np.array([k[0] for k in kinds])[None, :] * np.where(chosen, scale[:, None], 1.0)
    logs = np.log(unit_nominal)
    inside = np.all((logs >= np.log(LOWEST_OHMS) - 0.05) & (logs <= np.log(HIGHEST_OHMS) + 0.05), axis=1)
    unit_nominal, units = unit_nominal[inside], units[inside]
    unit_vals = np.where(chosen, snap(np.clip(unit_nominal, LOWEST_OHMS, HIGHEST_OHMS),
                                      design.series), unit_nominal)
    ohms_kinds = np.column_stack([compose(unit_vals[:, j], k[1], k[2]) for j, k in enumerate(kinds)])
    column = {p.part_id: int(kind_of[i]) for i, p in enumerate(parts)}
    solved_ids = [g.part_id for g in base.legs] + [r.part_id for r in base.resistors
                                                   if r.part_id in column]
    solved_ids += [f"{g.prefix}{i}" for g in [*base.groups, *base.chains] for i in range(g.size)]
    solved_kinds = [column[pid] for pid in solved_ids]
    step = max(1, CHUNK_ELEMENTS // base.n_codes)
    out = []
    for start in range(0, len(units), step):
        if cancel is not None and cancel.is_set():
            return None
        rows = slice(start, start + step)
        per_kind = [ohms_kinds[rows, j][:, None] for j in range(len(kinds))]  # shared, not copied
        ohms = dict(zip(solved_ids, [per_kind[j] for j in solved_kinds], strict=True))
        sol = solve(base, ohms=ohms)
        for i, r in enumerate(units[rows]):
            vout, rout = sol.vout[i], sol.rout[i]
            rf = None
            if base.output.kind == "virtual-ground":
                rf = float(ohms_kinds[start + i, column["feedback"]])
                vout = vout * rf / base.output.feedback_ohms
            tau = settling.time_constant(base, rout, settling.output_capacitance(design))
            density = float(np.max(noise.output_density(base, rout, design.temperature_c, rf)))
            lsb = abs(float(linearity.endpoint_lsb(vout)))
            out.append(Suggestion(
                unit_r=float(r), iref_max=float(np.max(np.abs(sol.iref[i]))),
                rout_max=float(np.max(rout)), settling_time=settling.settling_time(tau, base.n_codes),
                noise_lsb=float(noise.rms(density, design.bandwidth, tau)) / lsb if lsb else math.nan,
                max_abs_inl=float(np.nanmax(np.abs(linearity.inl_endpoint(vout))))))
    return out


def suggest(design: Any, limits: Limits, series: str | None = None, top: int = 10,
            cancel: Any = None) -> list[Suggestion]:
    """Unit values of ``series`` (default: the design's, E96 when it is ``"exact"``), best first.

    Parameters
    ----------
    design : Design
    limits : Limits
    series : str, optional
    top : int
        How many to return.
    cancel : object with ``is_set()``, optional
        Checked between solver batches (a ``threading.Event``); once set, the search stops
        within one batch and returns an empty list.

    Returns
    -------
    list[Suggestion]
        Each with ``reason`` in words; ``misses`` names the limits it does not meet.
    """
    series = series or (design.series if design.series != "exact" else "E96")
    d = design.replace(series=series, parts={})
    found = _figures(d, values(series), cancel)
    if found is None:
        return []
    checks = [("reference current", "iref_max", limits.iref_max, "A"),
              ("output resistance", "rout_max", limits.rout_max, "Ω"),
              ("settling time", "settling_time", limits.settling_max, "s"),
              ("noise", "noise_lsb", limits.noise_lsb_max, "LSB")]
    for s in found:
        for label, attr, limit, unit in checks:
            value = getattr(s, attr)
            if limit is not None and not value <= limit:
                shown = format_quantity(value, unit)
                s.misses.append(f"{label} {shown} over the limit")
    found.sort(key=lambda s: (len(s.misses), round(s.max_abs_inl, 4), s.iref_max))
    for rank, s in enumerate(found[:top], start=1):
        head = "meets every limit" if not s.misses else "; ".join(s.misses)
        s.reason = (f"#{rank}: {head}; snapping leaves max |INL| "
                    f"{format_quantity(s.max_abs_inl, 'LSB')}; reference current "
                    f"{format_quantity(s.iref_max, 'A')}")
    return found[:top]
