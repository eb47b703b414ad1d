"""Peak-keeping decimation of per-code curves for drawing (Qt-free).

A 16-bit curve has 65 536 points but a plot is under 2 000 pixels wide. :func:`envelope` keeps, for
each bin of codes, the lowest and the highest value in code order, so a single-code DNL spike or INL
step stays visible at any zoom while the GUI thread draws a few thousand points.
"""

from __future__ import annotations

import numpy as np

MAX_POINTS = 2400
"""Most points drawn per curve (about two per pixel of a wide plot)."""


def envelope(y: np.ndarray, lo: float = -np.inf, hi: float = np.inf,
             max_points: int = MAX_POINTS) -> tuple[np.ndarray, np.ndarray]:
    """The visible part of a per-code curve, decimated to at most ``max_points`` points.

    Parameters
    ----------
    y : ndarray, shape (n_codes,)
        Values at codes 0 … n_codes − 1 (NaN allowed: a gap).
    lo, hi : float
        Visible code range; one code either side is kept so lines reach the edges.
    max_points : int
        Point budget (even, ≥ 4).

    Returns
    -------
    x, y : ndarray, shape (m,), m ≤ max_points (+ 2 for the edges)
        Codes and values; in each bin the minimum and the maximum in code order.
    """
    n = y.shape[-1]
    first = int(max(0, np.floor(lo) - 1)) if np.isfinite(lo) else 0
    last = int(min(n, np.ceil(hi) + 2)) if np.isfinite(hi) else n
    first, last = min(first, n), max(last, min(first, n))
    seg = y[first:last]
    m = seg.shape[0]
    if m <= max_points:
        return np.arange(first, last, dtype=float), seg.astype(float, copy=False)
    bins = max_points // 2
    width = -(-m // bins)  # ceil
    pad = bins * width - m
    padded = np.concatenate([seg, np.full(pad, np.nan)]) if pad else seg
    blocks = padded.reshape(bins, width)
    finite = np.isfinite(blocks)
    has = finite.any(axis=1)
    lo_idx = np.argmin(np.where(finite, blocks, np.inf), axis=1)
    hi_idx = np.argmax(np.where(finite, blocks, -np.inf), axis=1)
    a = np.minimum(lo_idx, hi_idx)
    b = np.maximum(lo_idx, hi_idx)
    rows = np.arange(bins)
    xs = np.empty((bins, 2))
    ys = np.empty((bins, 2))
    xs[:, 0] = first + rows * width + a
    xs[:, 1] = first + rows * width + b
    ys[:, 0] = blocks[rows, a]
    ys[:, 1] = blocks[rows, b]
    ys[~has] = np.nan
    keep = xs[:, 0] < last
    return xs[keep].ravel(), ys[keep].ravel()


def value_range(arrays: list[np.ndarray]) -> tuple[float, float] | None:
    """Lowest and highest finite value over ``arrays`` (None when there is none)."""
    lows, highs = [], []
    for a in arrays:
        f = a[np.isfinite(a)]
        if f.size:
            lows.append(float(f.min()))
            highs.append(float(f.max()))
    if not lows:
        return None
    return min(lows), max(highs)
