"""Transitions of a long resistor string with node capacitance, solved in the Laplace domain.

With ``timing.node_c`` set every tap of a 2^N string is a node with charge, so a dense modal
solution costs O(4^N) memory and O(8^N) time per transition. The string is a path, though: its
taps form a tridiagonal system, and the output hangs from one tap through the switch. For every
Laplace point s one pass up and one down the string (continued fractions; each step works on all
points at once) gives at every tap the driving-point impedance Z_b(s) and the transfer to any other
tap. The output after a change from tap a to tap b (relative to its final value) is then

    ΔV(s) = [c_o·Δv_o + h_b(s)/(R_on + Z_b(s))] / (s·c_o + G_L + 1/(R_on + Z_b(s))),

with h_b the open-circuit response of tap b to the string's own initial state (zero unless a load
draws current from the string: the load's current moves from tap a to tap b). ΔV(t) follows by the
fixed-Talbot inversion (Abate & Valkó 2004) with :data:`TALBOT_NODES` points, accurate to about
2e−12 of the step for the sums of decaying exponentials an RC network gives (checked in the tests);
nothing is stepped in time.

Where this holds (:func:`applies`): every tap switch of a string starts its edge together (a tap is
decoded from every bit), so with ``rise == fall`` the old tap opens and the new closes at the same
instant t_sw, and the whole change is the simultaneous response delayed by t_sw; with
``rise > fall`` (break before make) on an output with no load resistor the output floats meanwhile
and the string carries no current, so again nothing moves before t_sw. Then, exactly:
net glitch impulse = −(y_b − y_a)·t_sw; the peak and the settling time come from the waveform on a
shared grid (:data:`POINTS_PER_DECADE`), refined in the grid cells that hold them, up to a horizon
past which no excursion can exceed ½ LSB (an energy bound on the slowest decay).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from ..design import MIN_OHMS
from ..network import Network
from ..timing import Timing
from .switching import CAP_FLOOR

TALBOT_NODES = 18
"""Points of the fixed-Talbot contour per time (about 2e−12 of the step in double precision)."""

POINTS_PER_DECADE = 16
"""Times per decade of the shared grid the waveform is first looked at."""

REFINE_POINTS = 16
"""Extra times in each grid cell that holds a peak or a settling instant (one round over the
distinct cells of the batch; then the settling instant is interpolated taking |ΔV| as exponential
across the remaining sub-cell, and the peak from a parabola through its three best points)."""

CHUNK_CELLS = 2**22
"""Taps × Laplace points per pass along the string (bounds memory: 64 MiB an array)."""


def applies(net: Network, timing: Timing) -> bool:
    """Whether the Laplace-domain string solution holds (see the module docstring)."""
    if not (net.selector is not None and len(net.chains) == 1 and timing.node_c > 0
            and not net.legs and not net.groups
            and all(r.role == "reference" for r in net.resistors)):
        return False
    return timing.rise == timing.fall or (timing.rise > timing.fall and _load_g(net) == 0)


def _load_g(net: Network) -> float:
    out = net.output
    if out.buffered or not np.isfinite(out.load_ohms):
        return 0.0
    return 1.0 / out.load_ohms


@dataclass
class StringPath:
    """A string as a path of resistors from ground to the source, with its output.

    series (P + 1,) Ω: resistors along the path; P unknown nodes between them (taps 1 … 2^N − 1,
    then the reference node when it sits behind ``ref_r``); x (P,) Ω: resistance from ground to
    each node; n_codes; node_c F; out_c F and load_g S at the output node; gain; vref V; ron Ω
    the tap switch in the transient (at least 1 mΩ, as the dense solver takes an ideal switch),
    ron_static Ω as given (the settled values, as the static solver).
    """

    series: np.ndarray
    x: np.ndarray
    node_c: float
    out_c: float
    load_g: float
    ron: float
    gain: float
    vref: float
    n_codes: int
    ron_static: float

    @property
    def total(self) -> float:
        return float(self.x[-1] + self.series[-1])

    def r_res(self, j: np.ndarray, k: np.ndarray) -> np.ndarray:
        """Static resistance matrix entries (path indices; −1 is ground, giving 0), Ω."""
        xj = np.where(j >= 0, self.x[np.maximum(j, 0)], 0.0)
        xk = np.where(k >= 0, self.x[np.maximum(k, 0)], 0.0)
        return np.minimum(xj, xk) * (self.total - np.maximum(xj, xk)) / self.total

    def settled(self, taps: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
        """Output node voltage (V) and the load current drawn from the tap (A) at ``taps``."""
        p = np.asarray(taps) - 1
        v_open = np.where(p >= 0, self.vref * self.x[np.maximum(p, 0)] / self.total, 0.0)
        r_th = self.r_res(p, p) + self.ron_static
        v = v_open / (1.0 + self.load_g * r_th)
        return v, v * self.load_g


def string_path(net: Network, timing: Timing) -> StringPath:
    """The path form of a string network (``applies`` must hold)."""
    chain, sel, out = net.chains[0], net.selector, net.output
    series = list(np.asarray(chain.ohms, float))
    series += [r.ohms for r in net.resistors if r.role == "reference"]
    series = np.asarray(series)
    x = np.cumsum(series)[:-1]
    load_c = timing.load_c if not out.buffered and timing.load_c >= CAP_FLOOR else 0.0
    return StringPath(series=series, x=x, node_c=timing.node_c, out_c=timing.node_c + load_c,
                      load_g=_load_g(net), ron=max(sel.ron, MIN_OHMS),
                      gain=out.gain if out.buffered else 1.0, vref=float(net.fixed[net.source]),
                      n_codes=net.n_codes, ron_static=sel.ron)


def _talbot(times: np.ndarray) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Contour points s (T, M), weights (T, M) and factors r/M (T,) of the fixed Talbot method:
    f(t) ≈ (r/M)·Re Σ_k w_k·e^(s_k t)·F(s_k), r = 2M/(5t)."""
    m = TALBOT_NODES
    k = np.arange(m)
    th = k * np.pi / m
    cot = np.zeros(m)
    cot[1:] = np.cos(th[1:]) / np.sin(th[1:])
    sig = th + (th * cot - 1) * cot
    shape = np.where(k > 0, th * (cot + 1j), 1.0)
    w = np.where(k > 0, 1 + 1j * sig, 0.5)
    r = 2 * m / (5 * times)
    return r[:, None] * shape[None, :], np.broadcast_to(w, (times.size, m)), r / m


class _Sweeps:
    """Driving-point impedances and transfers along the path at Laplace points s (S,); ``far``:
    also the cumulative logs for transfers between taps that are not neighbours."""

    def __init__(self, path: StringPath, s: np.ndarray, far: bool) -> None:
        g = 1.0 / path.series
        p = g.size - 1
        d = s[None, :] * path.node_c + (g[:-1] + g[1:])[:, None]  # (P, S)
        e2 = (g[1:-1] ** 2)[:, None]
        fwd = np.empty((p, s.size), complex)
        bwd = np.empty_like(fwd)
        fwd[0] = d[0]
        for j in range(1, p):  # a continued fraction is sequential along the string
            fwd[j] = d[j] - e2[j - 1] / fwd[j - 1]
        bwd[-1] = d[-1]
        for j in range(p - 2, -1, -1):
            bwd[j] = d[j] - e2[j] / bwd[j + 1]
        self.z = 1.0 / (fwd + bwd - d)
        self.fwd, self.g_link = fwd, np.append(g[1:-1], 0.0)
        self.log_t = None
        if far:  # K_ab = Z_b·Π_{j=a}^{b−1} (−e_j/δ_j) for a < b, as a cumulative sum of logs
            steps = np.log(g[1:-1][:, None] / fwd[:-1])
            self.log_t = np.concatenate([np.zeros((1, s.size)), np.cumsum(steps, axis=0)])

    def impedance(self, p: np.ndarray) -> np.ndarray:
        """Z at path nodes p (B,) (ground: 0), (B, S) Ω."""
        return np.where(p[:, None] >= 0, self.z[np.maximum(p, 0)], 0.0)

    def transfer(self, pa: np.ndarray, pb: np.ndarray) -> np.ndarray:
        """K(s) between path nodes pa and pb (B,) (either ground: 0), (B, S) Ω: for neighbours
        Z_hi·g/δ_lo, further apart through the cumulative logs."""
        lo, hi = np.minimum(pa, pb), np.maximum(pa, pb)
        lo_i, hi_i = np.maximum(lo, 0), np.maximum(hi, 0)
        k = self.z[hi_i] * (self.g_link[lo_i, None] / self.fwd[lo_i])
        far = np.nonzero((hi - lo > 1) & (lo >= 0))[0]
        if far.size:
            k[far] = self.z[hi_i[far]] * np.exp(self.log_t[hi_i[far]] - self.log_t[lo_i[far]])
        return np.where((lo >= 0)[:, None], k, 0.0)


class StringTransitions:
    """The output of changes between taps ``from_taps`` → ``to_taps`` (B,) of one string."""

    def __init__(self, net: Network, timing: Timing, from_taps: np.ndarray, to_taps: np.ndarray
                 ) -> None:
        self.path = string_path(net, timing)
        self.a = np.asarray(from_taps, np.int64)
        self.b = np.asarray(to_taps, np.int64)
        v_a, self.i_a = self.path.settled(self.a)
        v_b, self.i_b = self.path.settled(self.b)
        self.y_a, self.y_b = self.path.gain * v_a, self.path.gain * v_b
        self.dv = v_a - v_b
        start = max(timing.skew, default=0.0)
        self.t_sw = start + timing.rise / 2  # the new tap closes (the old opened at or before)
        self.loaded = self.path.load_g > 0
        pa, pb = self.a - 1, self.b - 1
        self.far = bool(np.any((np.abs(pa - pb) > 1) & (np.minimum(pa, pb) >= 0)))

    def lsb(self) -> float:
        """Endpoint LSB, V."""
        n = self.path.n_codes
        ends = self.path.gain * self.path.settled(np.array([0, n - 1]))[0]
        return float((ends[1] - ends[0]) / (n - 1))

    def slowest(self) -> float:
        """An upper bound of the slowest time constant, s: the largest row sum of R·C (R the
        resistance matrix of the string with its output pendant, C the node capacitances) bounds
        the spectral radius of R·C, whose eigenvalues are the network's time constants."""
        pth = self.path
        x, tot = pth.x, pth.total
        below = np.cumsum(x) - x  # Σ_{k<j} x_k
        above = np.concatenate([np.cumsum((tot - x)[::-1])[::-1][1:], [0.0]])  # Σ_{k>j} tot − x_k
        rows = ((tot - x) * below + x * above + x * (tot - x)) / tot  # Σ_k R_jk over the path
        diag = x * (tot - x) / tot  # R_jj; the output's column repeats its tap's
        path_rows = pth.node_c * rows + pth.out_c * diag
        out_row = pth.node_c * np.max(rows) + pth.out_c * (np.max(diag) + pth.ron)
        return float(max(np.max(path_rows), out_row))

    def horizon(self, half_lsb: float) -> float:
        """A time after the switch past which |ΔV| < ½ LSB for every transition, s."""
        pth = self.path
        tau = self.slowest()
        dx = np.max(pth.r_res(np.arange(pth.x.size), np.arange(pth.x.size))) * (
            np.abs(self.i_a) + np.abs(self.i_b))
        energy = pth.node_c * pth.x.size * dx**2 + pth.out_c * self.dv**2
        amp = np.sqrt(np.max(energy) / pth.out_c) * pth.gain
        return tau * max(np.log(max(amp, 1e-300) / half_lsb), 1.0)

    def fastest(self) -> float:
        """A time below every time constant that matters at the start, s."""
        pth = self.path
        return min(pth.node_c * float(np.min(pth.series)) / 4, pth.out_c * pth.ron,
                   pth.out_c * float(np.min(pth.series)))

    def response(self, times: np.ndarray, cancel=None) -> np.ndarray:
        """y(t) − y_b of the simultaneous change at ``times`` (T,) > 0 after it, (B, T) V."""
        pth = self.path
        times = np.asarray(times, float)
        s, w, fac = _talbot(times)
        s_flat, w_flat, t_flat = s.reshape(-1), w.reshape(-1), times.repeat(TALBOT_NODES)
        out = np.empty((self.b.size, s_flat.size))
        pa, pb = self.a - 1, self.b - 1
        at_tap = (pb >= 0)[:, None]
        step = max(64, CHUNK_CELLS // max(pth.x.size, 1))
        for c0 in range(0, s_flat.size, step):
            if cancel is not None and cancel.is_set():
                raise InterruptedError("cancelled")
            part = slice(c0, c0 + step)
            sc = s_flat[part]
            sw = _Sweeps(pth, sc, far=self.loaded and self.far)
            z_b = sw.impedance(pb)
            link = 1.0 / (pth.ron + z_b)  # the switch and the string as seen from tap b
            num = pth.out_c * self.dv[:, None] + 0j
            if self.loaded:  # the string's own start: K·C·R = (R − K)/s
                h = (-(pth.r_res(pb, pa)[:, None] - sw.transfer(pb, pa)) * self.i_a[:, None]
                     + (pth.r_res(pb, pb)[:, None] - z_b) * self.i_b[:, None]) / sc[None, :]
                num = num + np.where(at_tap, h * link, 0.0)
            big_v = num / (sc[None, :] * pth.out_c + pth.load_g + link)
            out[:, part] = np.real(np.exp(sc * t_flat[part]) * w_flat[part] * big_v)
        y = out.reshape(self.b.size, times.size, TALBOT_NODES).sum(axis=-1) * fac[None, :]
        return pth.gain * y


def _interior(lo: float, hi: float, n: int) -> np.ndarray:
    """``n`` points strictly inside (lo, hi): geometric, or even when lo is 0."""
    if lo <= 0:
        return hi * np.arange(1, n + 1) / (n + 1)
    return np.geomspace(lo, hi, n + 2)[1:-1]


class _Cells:
    """Per-transition grid cells [lo, hi] (B,), refined together: the union of the distinct
    cells' interior points is solved once for the whole batch."""

    def __init__(self, lo: np.ndarray, hi: np.ndarray) -> None:
        self.lo, self.hi = lo, hi

    def points(self) -> tuple[np.ndarray, np.ndarray]:
        """Interior times of every distinct cell (U·n,) and each transition's columns (B, n)."""
        pairs, inverse = np.unique(np.stack([self.lo, self.hi], axis=1), axis=0,
                                   return_inverse=True)
        pts = np.concatenate([_interior(lo, hi, REFINE_POINTS) for lo, hi in pairs])
        cols = inverse.reshape(-1)[:, None] * REFINE_POINTS + np.arange(REFINE_POINTS)[None, :]
        return pts, cols


def transition_figures(net: Network, timing: Timing, from_codes: np.ndarray,
                       to_codes: np.ndarray, half_lsb: float, cancel=None
                       ) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Net glitch impulse (V·s), peak glitch (V) and settling time (s) of each change
    ``from_codes`` → ``to_codes`` (B,) of a string (``applies`` must hold); see the module
    docstring for how each is found."""
    st = StringTransitions(net, timing, from_codes, to_codes)
    b = st.b.size
    rows = np.arange(b)
    jump = st.y_a - st.y_b  # R(0+): the output node holds its charge across the switch
    impulse = jump * st.t_sw
    hi_t = st.horizon(half_lsb)
    lo_t = max(min(st.fastest() / 10, hi_t / 10), hi_t * 1e-15)
    n = int(np.ceil(np.log10(hi_t / lo_t) * POINTS_PER_DECADE)) + 1
    tau = np.geomspace(lo_t, hi_t, n)

    # settling: the last time |actual − y_b| > ½ LSB; actual(t) = y_b + R(t − t_sw) after t_sw
    r = st.response(tau, cancel)
    mag = np.abs(r)
    out = mag > half_lsb
    any_out = out.any(axis=1) | (np.abs(jump) > half_lsb)
    k = np.where(out.any(axis=1), n - 1 - np.argmax(out[:, ::-1], axis=1), -1)
    lo = np.where(k >= 0, tau[np.maximum(k, 0)], 0.0)
    f_lo = np.where(k >= 0, mag[rows, np.maximum(k, 0)], np.abs(jump))
    hi, f_hi = tau[np.minimum(k + 1, n - 1)], mag[rows, np.minimum(k + 1, n - 1)]
    pts, cols = _Cells(lo, hi).points()
    t_ext = np.concatenate([lo[:, None], pts[cols], hi[:, None]], axis=1)
    f_ext = np.concatenate([f_lo[:, None],
                            np.abs(np.take_along_axis(st.response(pts, cancel), cols, axis=1)),
                            f_hi[:, None]], axis=1)
    outside = f_ext > half_lsb
    last = np.minimum(REFINE_POINTS - np.argmax(outside[:, ::-1][:, 1:], axis=1), REFINE_POINTS)
    t1, t2 = t_ext[rows, last], t_ext[rows, last + 1]
    f1, f2 = f_ext[rows, last], f_ext[rows, last + 1]
    with np.errstate(divide="ignore", invalid="ignore"):  # |R| taken as exponential in the cell
        frac = np.log(f1 / half_lsb) / np.log(f1 / f2)
    frac = np.where(np.isfinite(frac), np.clip(frac, 0.0, 1.0), 1.0)
    settling = np.where(any_out, st.t_sw + t1 + (t2 - t1) * frac, 0.0)

    # peak of actual − sync: before t_sw (y_a − y_b) − R(t); after, R(t − t_sw) − R(t)
    if st.t_sw <= 0:
        return impulse, np.zeros(b), settling
    n_before = int(np.sum(tau < st.t_sw))
    # where |R| stays below half the peak found before the switch, |R(t − t_sw) − R(t)| cannot
    # exceed that peak: the grid after the switch stops at the last sample above it
    pre = np.abs(jump[:, None] - r[:, :n_before])
    peak = np.max(pre, axis=1, initial=0.0)
    above = mag > peak[:, None] / 2
    last_above = np.where(above.any(axis=1), n - 1 - np.argmax(above[:, ::-1], axis=1), n - 1)
    reach = min(int(np.max(last_above)) + 2, tau.size)
    grid = np.concatenate([[0.0], tau[:reach]])
    r_now = np.concatenate([jump[:, None], r[:, :reach]], axis=1)
    after = np.abs(r_now - st.response(st.t_sw + grid, cancel))
    peak = np.maximum(np.max(after, axis=1), peak)
    i = np.argmax(after, axis=1)
    lo, hi = grid[np.maximum(i - 1, 0)], grid[np.minimum(i + 1, grid.size - 1)]
    pts, cols = _Cells(lo, hi).points()
    t_in = pts[cols]
    gap = np.abs(np.take_along_axis(st.response(pts, cancel) - st.response(st.t_sw + pts, cancel),
                                    cols, axis=1))
    j = np.clip(np.argmax(gap, axis=1), 1, REFINE_POINTS - 2)
    x = np.stack([t_in[rows, j - 1], t_in[rows, j], t_in[rows, j + 1]], axis=1)
    f = np.stack([gap[rows, j - 1], gap[rows, j], gap[rows, j + 1]], axis=1)
    peak = np.maximum(peak, np.maximum(np.max(gap, axis=1), _vertex(x, f)))
    return impulse, peak, settling


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
    st = StringTransitions(net, timing, np.array([from_code]), np.array([to_code]))
    t = np.asarray(times, float)

    def at(x: np.ndarray) -> np.ndarray:
        y = np.full(x.shape, st.y_a[0])
        pos = x > 0
        if pos.any():
            y[pos] = st.y_b[0] + st.response(x[pos])[0]
        return y

    return at(t - st.t_sw), at(t)
