"""Glitch impulse, peak and settling of a long string's transitions from its Laplace-domain
solution (``string_laplace.py``, ``string_overlap.py``): a shared time grid, refined where the
figures lie."""

from __future__ import annotations

import numpy as np

from ..network import Network
from ..timing import Timing
from .string_laplace import POINTS_PER_DECADE, REFINE_POINTS, StringTransitions, load_g
from .string_overlap import TwoStage

OVERLAP_GRID = 33
"""Even points across the overlap of two tap switches (ends included) on the time grid."""

CELL_BLOCK = 16
"""Distinct grid cells refined together (their transitions only), bounding memory however the
transitions' cells spread."""


def _interior(lo: float, hi: float, n: int) -> np.ndarray:
    """``n`` points strictly inside (lo, hi): geometric, or even when lo is 0."""
    if lo <= 0:
        return hi * np.arange(1, n + 1) / (n + 1)
    return np.geomspace(lo, hi, n + 2)[1:-1]


def _in_cells(lo: np.ndarray, hi: np.ndarray, value) -> tuple[np.ndarray, np.ndarray]:
    """:data:`REFINE_POINTS` times inside each transition's cell [lo, hi] (B,) and the values
    there, both (B, n): ``value(rows, times)`` → (rows, T) is solved for blocks of
    :data:`CELL_BLOCK` distinct cells, each for the transitions in them only."""
    n = REFINE_POINTS
    pairs, inverse = np.unique(np.stack([lo, hi], axis=1), axis=0, return_inverse=True)
    inverse = inverse.reshape(-1)
    t_in, vals = np.empty((lo.size, n)), np.empty((lo.size, n))
    for c0 in range(0, len(pairs), CELL_BLOCK):
        pts = np.concatenate([_interior(x, y, n) for x, y in pairs[c0:c0 + CELL_BLOCK]])
        rows = np.nonzero((inverse >= c0) & (inverse < c0 + CELL_BLOCK))[0]
        cols = (inverse[rows] - c0)[:, None] * n + np.arange(n)[None, :]
        t_in[rows] = pts[cols]
        vals[rows] = np.take_along_axis(value(rows, pts), cols, axis=1)
    return t_in, vals


def _time_grid(st: StringTransitions, half_lsb: float) -> np.ndarray:
    """Geometric grid of times after a switch, from below the fastest time constant to the
    horizon, :data:`POINTS_PER_DECADE` a decade, s."""
    hi_t = st.horizon(half_lsb)
    lo_t = max(min(st.fastest() / 10, hi_t / 10), hi_t * 1e-15)
    n = int(np.ceil(np.log10(hi_t / lo_t) * POINTS_PER_DECADE)) + 1
    return np.geomspace(lo_t, hi_t, n)


def _settling(times: np.ndarray, mag: np.ndarray, magnitude, half_lsb: float) -> np.ndarray:
    """The last instant |error| > ½ LSB, s (B,), 0 where never.

    ``times`` (T,) a grid from 0 on which the error magnitudes are ``mag`` (B, T) and after whose
    last point it cannot leave the band; ``magnitude(rows, times)`` → (rows, T) evaluates it
    anywhere.
    The last grid cell outside is refined once (:data:`REFINE_POINTS`), then the crossing is
    interpolated taking the error as exponential across the remaining sub-cell."""
    b, n = mag.shape
    rows = np.arange(b)
    out = mag > half_lsb
    any_out = out.any(axis=1)
    k = np.where(any_out, n - 1 - np.argmax(out[:, ::-1], axis=1), 0)
    k = np.minimum(k, n - 2)
    lo, hi = times[k], times[k + 1]
    t_in, f_in = _in_cells(lo, hi, magnitude)
    t_ext = np.concatenate([lo[:, None], t_in, hi[:, None]], axis=1)
    f_ext = np.concatenate([mag[rows, k][:, None], f_in, mag[rows, k + 1][:, None]], axis=1)
    outside = f_ext > half_lsb
    last = np.minimum(REFINE_POINTS - np.argmax(outside[:, ::-1][:, 1:], axis=1), REFINE_POINTS)
    t1, t2 = t_ext[rows, last], t_ext[rows, last + 1]
    f1, f2 = f_ext[rows, last], f_ext[rows, last + 1]
    with np.errstate(divide="ignore", invalid="ignore"):
        frac = np.log(f1 / half_lsb) / np.log(f1 / f2)
    frac = np.where(np.isfinite(frac), np.clip(frac, 0.0, 1.0), 1.0)
    return np.where(any_out, t1 + (t2 - t1) * frac, 0.0)


def _peak(times: np.ndarray, gap: np.ndarray, gap_at, events: tuple[float, ...] = ()
          ) -> np.ndarray:
    """Largest |actual − simultaneous| (B,): the grid's (``gap`` (B, T) at ``times`` (T,)),
    refined once in the cells beside each maximum (``gap_at(rows, times)`` → (rows, T)) and by a
    parabola through the best three points unless a switching instant in ``events`` (a kink)
    lies between them."""
    b = gap.shape[0]
    rows = np.arange(b)
    i = np.argmax(gap, axis=1)
    lo, hi = times[np.maximum(i - 1, 0)], times[np.minimum(i + 1, times.size - 1)]
    t_in, inner = _in_cells(lo, hi, gap_at)
    j = np.clip(np.argmax(inner, axis=1), 1, REFINE_POINTS - 2)
    x = np.stack([t_in[rows, j - 1], t_in[rows, j], t_in[rows, j + 1]], axis=1)
    f = np.stack([inner[rows, j - 1], inner[rows, j], inner[rows, j + 1]], axis=1)
    kink = np.zeros(b, bool)
    for e in events:
        kink |= (x[:, 0] < e) & (e < x[:, 2])
    smooth = np.where(kink, 0.0, _vertex(x, f))
    return np.maximum(np.max(gap, axis=1), np.maximum(np.max(inner, axis=1), smooth))


def transition_figures(net: Network, timing: Timing, from_codes: np.ndarray,
                       to_codes: np.ndarray, half_lsb: float, cancel=None
                       ) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Net glitch impulse (V·s), peak glitch (V) and settling time (s) of each change
    ``from_codes`` → ``to_codes`` (B,) of a string (``applies`` must hold); see the module
    docstring for how each is found."""
    if _two_stage(net, timing):
        return _staged_figures(TwoStage(net, timing, from_codes, to_codes), half_lsb, cancel)
    st = StringTransitions(net, timing, from_codes, to_codes)
    jump = st.y_a - st.y_b  # R(0+): the output node holds its charge across the switch
    impulse = jump * st.t_sw
    tau = _time_grid(st, half_lsb)

    # settling: the last time |actual − y_b| > ½ LSB; actual(t) = y_b + R(t − t_sw) after t_sw
    r = st.response(tau, cancel)
    grid = np.concatenate([[0.0], tau])
    r0 = np.concatenate([jump[:, None], r], axis=1)
    settling = _settling(grid, np.abs(r0),
                         lambda rows, t: np.abs(st.subset(rows).response(t, cancel)), half_lsb)
    settling = np.where(settling > 0, st.t_sw + settling,
                        np.where(np.abs(jump) > half_lsb, st.t_sw, 0.0))
    if st.t_sw <= 0:
        return impulse, np.zeros(jump.size), settling

    # peak of actual − sync: before t_sw (y_a − y_b) − R(t); after, R(t − t_sw) − R(t). Where
    # |R| stays below half the peak found before the switch, |R(t − t_sw) − R(t)| cannot exceed
    # that peak: the grid after the switch stops at the last sample above it
    pre = np.abs(jump[:, None] - r[:, :int(np.sum(tau < st.t_sw))])
    peak = np.max(pre, axis=1, initial=0.0)
    above = np.abs(r) > peak[:, None] / 2
    n = tau.size
    last_above = np.where(above.any(axis=1), n - 1 - np.argmax(above[:, ::-1], axis=1), n - 1)
    reach = min(int(np.max(last_above)) + 2, n) + 1
    after = np.abs(r0[:, :reach] - st.response(st.t_sw + grid[:reach], cancel))
    def gap_at(rows: np.ndarray, t: np.ndarray) -> np.ndarray:
        part = st.subset(rows)
        return np.abs(part.response(t, cancel) - part.response(st.t_sw + t, cancel))

    late = _peak(grid[:reach], after, gap_at)
    return impulse, np.maximum(peak, late), settling


def _two_stage(net: Network, timing: Timing) -> bool:
    """Whether the taps switch at different instants in a way that moves the output."""
    return timing.rise != timing.fall and not (timing.rise > timing.fall and load_g(net) == 0)


def _staged_figures(st: TwoStage, half_lsb: float, cancel=None
                    ) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Impulse, peak and settling of a :class:`TwoStage` batch on one absolute time grid."""
    span = st.t2 - st.t1
    tau = _time_grid(st, half_lsb)  # absolute times; one past t2 + the horizon is added
    overlap = np.unique(np.concatenate([np.geomspace(min(tau[0], span / 100), span, 17)[:-1],
                                        np.linspace(0.0, span, OVERLAP_GRID)[1:-1]]))
    later = tau[tau > st.t2]
    first = later[0] - st.t2 if later.size else span
    fresh = st.t2 + np.geomspace(min(tau[0], first / 100), first, 17)[:-1]  # just after t2
    grid = np.unique(np.concatenate([[0.0], tau, st.t1 + overlap, [st.t1, st.t2], fresh,
                                     [st.t2 + tau[-1]]]))

    def sync(part: TwoStage, t: np.ndarray) -> np.ndarray:
        out = np.empty((part.b.size, t.size))
        out[:, t <= 0] = (part.y_a - part.y_b)[:, None]
        if (t > 0).any():
            out[:, t > 0] = part.response(t[t > 0], cancel)
        return out

    def gap_at(rows: np.ndarray, t: np.ndarray) -> np.ndarray:
        part = st.subset(rows)
        return np.abs(part.actual(t, cancel) - sync(part, t))

    actual = st.actual(grid, cancel)
    settling = _settling(grid, np.abs(actual),
                         lambda rows, t: np.abs(st.subset(rows).actual(t, cancel)), half_lsb)
    peak = _peak(grid, np.abs(actual - sync(st, grid)), gap_at, events=(st.t1, st.t2))
    return st.impulse, peak, settling


def _vertex(x: np.ndarray, f: np.ndarray) -> np.ndarray:
    """Largest value of the parabola through three points per row (x, f (B, 3)); the middle
    value where the parabola has no interior maximum."""
    d1 = (f[:, 1] - f[:, 0]) / (x[:, 1] - x[:, 0])
    d2 = (f[:, 2] - f[:, 1]) / (x[:, 2] - x[:, 1])
    curv = (d2 - d1) / (x[:, 2] - x[:, 0])
    with np.errstate(divide="ignore", invalid="ignore"):
        xv = (x[:, 0] + x[:, 1]) / 2 - d1 / (2 * curv)
        fv = f[:, 1] + d1 * (xv - x[:, 1]) + curv * (xv - x[:, 0]) * (xv - x[:, 1])
    inside = (curv < 0) & (xv > x[:, 0]) & (xv < x[:, 2]) & np.isfinite(fv)
    return np.where(inside, fv, f[:, 1])


def waveforms(net: Network, timing: Timing, from_code: int, to_code: int, times: np.ndarray
              ) -> tuple[np.ndarray, np.ndarray]:
    """The output of one change and its simultaneous-switching response at ``times`` (P,), V."""
    a, b = np.array([from_code]), np.array([to_code])
    staged = _two_stage(net, timing)
    st = (TwoStage if staged else StringTransitions)(net, timing, a, b)
    t = np.asarray(times, float)

    def sync(x: np.ndarray) -> np.ndarray:
        y = np.full(x.shape, st.y_a[0])
        pos = x > 0
        if pos.any():
            y[pos] = st.y_b[0] + st.response(x[pos])[0]
        return y

    if staged:
        return st.y_b[0] + st.actual(t)[0], sync(t)
    return sync(t - st.t_sw), sync(t)
