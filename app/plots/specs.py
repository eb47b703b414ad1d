"""What the exported and reported plots show, without Qt: titles, axis labels and data series.

A :class:`PlotSpec` is drawn by ``paint.paint_plot`` onto any Qt paint device (PNG image, SVG,
PDF page), so every output shows the same data.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass

import numpy as np

from rungwise.core import Evaluation


@dataclass(frozen=True)
class Series:
    """One curve: ``x`` and ``y`` of equal length (non-finite points are left out of the line).

    ``colour`` picks the palette entry (default: the curve's position); ``dashed`` draws it dashed.
    """

    label: str
    x: np.ndarray
    y: np.ndarray
    colour: int | None = None
    dashed: bool = False


@dataclass(frozen=True)
class PlotSpec:
    """One plot: file stem ``name``, ``title``, axis labels with units, curves."""

    name: str
    title: str
    x_label: str
    y_label: str
    series: tuple[Series, ...]


def comparison_plots(evs: Sequence[Evaluation]) -> list[PlotSpec]:
    """The comparison's key plots: transfer curve, endpoint INL, DNL and output resistance vs code."""

    def per_code(attr: str) -> tuple[Series, ...]:
        out = []
        for e in evs:
            y = np.asarray(getattr(e, attr), dtype=float)
            out.append(Series(e.design.label, np.asarray(e.codes[: y.size], dtype=float), y))
        return tuple(out)

    return [
        PlotSpec("transfer", "Output voltage against code", "code", "Vout (V)", per_code("vout")),
        PlotSpec("inl", "INL against code (endpoint line)", "code", "INL (LSB)",
                 per_code("inl_endpoint")),
        PlotSpec("dnl", "DNL after each code", "code", "DNL (LSB)", per_code("dnl")),
        PlotSpec("rout", "Output resistance against code", "code", "Rout (Ω)", per_code("rout")),
    ]


def spread_plot(evs: Sequence[Evaluation], stats: Sequence[object | None]) -> PlotSpec | None:
    """INL bands over the Monte Carlo trials (1 %, 50 %, 99 % per code) of each candidate with
    statistics, or ``None`` when none has them."""
    series = []
    for i, (ev, s) in enumerate(zip(evs, stats, strict=True)):
        if s is None:
            continue
        bands = np.asarray(s.inl_envelope, dtype=float)
        codes = np.asarray(s.envelope_codes, dtype=float)
        for pct, row in zip((1, 50, 99), bands, strict=True):
            series.append(Series(f"{ev.design.label} {pct} %", codes, row, colour=i,
                                 dashed=pct != 50))
    if not series:
        return None
    return PlotSpec("inl_spread", "INL over the random trials (1 %, 50 %, 99 % at each code)", "code",
                    "INL (LSB)", tuple(series))


def nice_ticks(lo: float, hi: float, target: int = 6) -> np.ndarray:
    """Round tick positions inside ``lo … hi`` (steps of 1, 2 or 5 × 10^k), about ``target`` of them."""
    if not (np.isfinite(lo) and np.isfinite(hi)) or hi <= lo:
        return np.array([lo if np.isfinite(lo) else 0.0])
    raw = (hi - lo) / max(target - 1, 1)
    mag = 10.0 ** np.floor(np.log10(raw))
    step = next(m * mag for m in (1, 2, 5, 10) if m * mag >= raw)
    first = np.ceil(lo / step - 1e-9) * step
    n = int(np.floor((hi - first) / step + 1e-9)) + 1
    return first + step * np.arange(max(n, 1))


def axis_range(values: np.ndarray, pad: float = 0.0) -> tuple[float, float]:
    """``(low, high)`` of the finite ``values``, widened by ``pad`` × span (never zero width)."""
    v = values[np.isfinite(values)]
    if v.size == 0:
        return 0.0, 1.0
    lo, hi = float(v.min()), float(v.max())
    if hi == lo:
        half = abs(lo) * 0.05 or 1.0
        return lo - half, hi + half
    span = hi - lo
    return lo - pad * span, hi + pad * span
