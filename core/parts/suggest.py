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
from ..metrics import linearity, noise, settling
from ..solve import CHUNK_ELEMENTS, solve
from ..topologies import build
from ..units import format_value
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


def _figures(design: Any, units: np.ndarray) -> list[Suggestion]:
    """Solve the design at each unit value: parts scaled from the unsnapped network, snapped
    together (shape (n_values, n_parts)) and solved as one batch per chunk."""
    base = build(design.replace(series="exact"))
    snapped = set(snapped_ids(design, base))
    parts = base.parts
    scale = units / design.unit_r
    unit_nominal = np.array([unit_ohms(p) for p in parts])[None, :] * np.where(
        [p.part_id in snapped for p in parts], scale[:, None], 1.0)
    logs = np.log(unit_nominal)
    inside = np.all((logs >= np.log(LOWEST_OHMS) - 0.05) & (logs <= np.log(HIGHEST_OHMS) + 0.05), axis=1)
    unit_nominal, units = unit_nominal[inside], units[inside]
    chosen = np.array([p.part_id in snapped for p in parts])
    unit_vals = np.where(chosen, snap(np.clip(unit_nominal, LOWEST_OHMS, HIGHEST_OHMS),
                                      design.series), unit_nominal)
    ohms_all = np.column_stack([compose(unit_vals[:, k], p.units, p.joined)
                                for k, p in enumerate(parts)])
    column = {p.part_id: k for k, p in enumerate(parts)}
    solved_ids = [g.part_id for g in base.legs] + [r.part_id for r in base.resistors
                                                   if r.part_id in column]
    solved_ids += [f"{g.prefix}{i}" for g in [*base.groups, *base.chains] for i in range(g.size)]
    step = max(1, CHUNK_ELEMENTS // base.n_codes)
    out = []
    for start in range(0, len(units), step):
        rows = slice(start, start + step)
        ohms = {pid: ohms_all[rows, column[pid]][:, None] for pid in solved_ids}
        sol = solve(base, ohms=ohms)
        for i, r in enumerate(units[rows]):
            vout, rout = sol.vout[i], sol.rout[i]
            rf = None
            if base.output.kind == "virtual-ground":
                rf = float(ohms_all[start + i, column["feedback"]])
                vout = vout * rf / base.output.feedback_ohms
            tau = settling.time_constant(base, rout, design.load_c)
            density = float(np.max(noise.output_density(base, rout, design.temperature_c, rf)))
            lsb = abs(float(linearity.endpoint_lsb(vout)))
            out.append(Suggestion(
                unit_r=float(r), iref_max=float(np.max(np.abs(sol.iref[i]))),
                rout_max=float(np.max(rout)), settling_time=settling.settling_time(tau, base.n_codes),
                noise_lsb=float(noise.rms(density, design.bandwidth)) / lsb if lsb else math.nan,
                max_abs_inl=float(np.nanmax(np.abs(linearity.inl_endpoint(vout))))))
    return out


def suggest(design: Any, limits: Limits, series: str | None = None, top: int = 10
            ) -> list[Suggestion]:
    """Unit values of ``series`` (default: the design's, E96 when it is ``"exact"``), best first.

    Parameters
    ----------
    design : Design
    limits : Limits
    series : str, optional
    top : int
        How many to return.

    Returns
    -------
    list[Suggestion]
        Each with ``reason`` in words; ``misses`` names the limits it does not meet.
    """
    series = series or (design.series if design.series != "exact" else "E96")
    d = design.replace(series=series, parts={})
    found = _figures(d, values(series))
    checks = [("reference current", "iref_max", limits.iref_max, "A"),
              ("output resistance", "rout_max", limits.rout_max, "Ω"),
              ("settling time", "settling_time", limits.settling_max, "s"),
              ("noise", "noise_lsb", limits.noise_lsb_max, "LSB")]
    for s in found:
        for label, attr, limit, unit in checks:
            value = getattr(s, attr)
            if limit is not None and not value <= limit:
                shown = f"{value:.3g} LSB" if unit == "LSB" else format_value(value, unit)
                s.misses.append(f"{label} {shown} over the limit")
    found.sort(key=lambda s: (len(s.misses), round(s.max_abs_inl, 4), s.iref_max))
    for rank, s in enumerate(found[:top], start=1):
        head = "meets every limit" if not s.misses else "; ".join(s.misses)
        s.reason = (f"#{rank}: {head}; snapping leaves max |INL| {s.max_abs_inl:.3g} LSB; reference "
                    f"current {format_value(s.iref_max, 'A')}")
    return found[:top]
