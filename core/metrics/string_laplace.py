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

Every tap switch of a string starts its edge together (a tap is decoded from every bit). With
``rise == fall`` the old tap opens and the new closes at the same instant t_sw, so the whole change
is the simultaneous response delayed by t_sw (net glitch impulse = −(y_b − y_a)·t_sw exactly);
likewise with ``rise > fall`` on an output with no load resistor (the output floats meanwhile and
the string carries no current). Otherwise (``string_overlap.TwoStage``) the output is joined to both taps
or to neither from t1 to t2, solved with the switch currents as unknowns, and what that overlap
leaves in the string reaches the output after t2 through the resolvent identity (one more Talbot
sum, as a matrix product); the impulse is then exact from the transforms at s = 0.

The peak and the settling time (``string_figures.py``) come from the waveform on a shared grid
(:data:`POINTS_PER_DECADE`), refined in the grid cells that hold them, up to a horizon past which
no excursion can exceed ½ LSB (an energy bound on the slowest decay). Checked against the dense
solver (impulse and peak to 1e−6, settling to 1e−4) and against ngspice.
"""

from __future__ import annotations

import copy
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
"""Extra times in each grid cell that holds a peak or a settling instant (``string_figures.py``:
one round over the distinct cells of the batch; then the settling instant is interpolated taking
|ΔV| as exponential across the remaining sub-cell, and the peak from a parabola through its three
best points)."""

CHUNK_CELLS = 2**22
"""Taps × Laplace points per pass along the string (bounds memory: 64 MiB an array)."""


def applies(net: Network, timing: Timing) -> bool:
    """Whether the Laplace-domain string solution holds: one string, its tap switch, the
    reference, and node capacitance."""
    return (net.selector is not None and len(net.chains) == 1 and timing.node_c > 0
            and not net.legs and not net.groups
            and all(r.role == "reference" for r in net.resistors))


def load_g(net: Network) -> float:
    """Conductance of the output's load resistor, S (0 on a buffered or unloaded output)."""
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

    def lsb(self) -> float:
        """Endpoint LSB of the output (after a buffer's gain), V."""
        ends = self.gain * self.settled(np.array([0, self.n_codes - 1]))[0]
        return float((ends[1] - ends[0]) / (self.n_codes - 1))

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
                      load_g=load_g(net), ron=max(sel.ron, MIN_OHMS),
                      gain=out.gain if out.buffered else 1.0, vref=float(net.fixed[net.source]),
                      n_codes=net.n_codes, ron_static=sel.ron)


def talbot(times: np.ndarray, m: int = TALBOT_NODES, scale: np.ndarray | float = 1.0
            ) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Contour points s (T, M), weights (T, M) and factors r/M (T,) of the fixed Talbot method:
    f(t) ≈ (r/M)·Re Σ_k w_k·e^(s_k t)·F(s_k), r = 2M/(5t) (times ``scale``: the contour may be
    widened a little without loss)."""
    k = np.arange(m)
    th = k * np.pi / m
    cot = np.zeros(m)
    cot[1:] = np.cos(th[1:]) / np.sin(th[1:])
    sig = th + (th * cot - 1) * cot
    shape = np.where(k > 0, th * (cot + 1j), 1.0)
    w = np.where(k > 0, 1 + 1j * sig, 0.5)
    r = 2 * m / (5 * times) * scale
    return r[:, None] * shape[None, :], np.broadcast_to(w, (times.size, m)), r / m


class Sweeps:
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


def _far_apart(a: np.ndarray, b: np.ndarray) -> bool:
    """Whether any change joins two string taps that are not neighbours (neither of them the
    ground end): their transfer needs the sweeps' cumulative logs."""
    return bool(np.any((np.abs(a - b) > 1) & (np.minimum(a, b) >= 1)))


class StringTransitions:
    """The output of changes between taps ``from_taps`` → ``to_taps`` (B,) of one string."""

    ROW_FIELDS = ("a", "b", "i_a", "i_b", "y_a", "y_b", "dv")
    """Attributes with one row per transition (what :meth:`subset` slices)."""

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
        self.far = _far_apart(self.a, self.b)

    def subset(self, rows: np.ndarray) -> StringTransitions:
        """The same solution for transitions ``rows`` only (shares everything else)."""
        part = copy.copy(self)
        for name in self.ROW_FIELDS:
            setattr(part, name, getattr(self, name)[rows])
        part.far = _far_apart(part.a, part.b)
        return part

    def tap_voltage(self, state_taps: np.ndarray, at_taps: np.ndarray) -> np.ndarray:
        """Voltage of taps ``at_taps`` (B,) with the string settled at codes ``state_taps``, V."""
        pth = self.path
        p, q = np.asarray(at_taps) - 1, np.asarray(state_taps) - 1
        divider = np.where(p >= 0, pth.vref * pth.x[np.maximum(p, 0)] / pth.total, 0.0)
        return divider - pth.r_res(p, q) * pth.settled(state_taps)[1]

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
        return self.energy_horizon(np.abs(self.i_a) + np.abs(self.i_b), np.abs(self.dv),
                                   half_lsb)

    def energy_horizon(self, current: np.ndarray, dv: np.ndarray, half_lsb: float) -> float:
        """The horizon from a start whose string is off by at most the drop of ``current`` (B,)
        A through the largest tap resistance and whose output is off by ``dv`` (B,) V: the
        stored energy E decays at least as e^(−2t/τ) (τ from :meth:`slowest`) and
        |ΔV| ≤ √(2E/c_o)."""
        pth = self.path
        dx = np.max(pth.r_res(np.arange(pth.x.size), np.arange(pth.x.size))) * current
        energy = pth.node_c * pth.x.size * dx**2 + pth.out_c * dv**2
        amp = np.sqrt(np.max(energy) / pth.out_c) * pth.gain
        return self.slowest() * max(np.log(max(amp, 1e-300) / half_lsb), 1.0)

    def fastest(self) -> float:
        """A time below every time constant that matters at the start, s."""
        pth = self.path
        return min(pth.node_c * float(np.min(pth.series)) / 4, pth.out_c * pth.ron,
                   pth.out_c * float(np.min(pth.series)))

    def invert(self, times: np.ndarray, transform, cancel=None, scale=1.0) -> np.ndarray:
        """f(t) at ``times`` (T,) > 0, (B, T), of a transform F(s, sweeps) → (B, S) computed
        chunk by chunk of Laplace points (one pass along the string each)."""
        times = np.asarray(times, float)
        s, w, fac = talbot(times, TALBOT_NODES, scale)
        s_flat, w_flat, t_flat = s.reshape(-1), w.reshape(-1), times.repeat(TALBOT_NODES)
        out = np.empty((self.b.size, s_flat.size))
        step = max(64, CHUNK_CELLS // max(self.path.x.size, 1))
        for c0 in range(0, s_flat.size, step):
            if cancel is not None and cancel.is_set():
                raise InterruptedError("cancelled")
            part = slice(c0, c0 + step)
            sc = s_flat[part]
            big_f = transform(sc, Sweeps(self.path, sc, far=self.far))
            out[:, part] = np.real(np.exp(sc * t_flat[part]) * w_flat[part] * big_f)
        return out.reshape(self.b.size, times.size, TALBOT_NODES).sum(axis=-1) * fac[None, :]

    def string_start(self, sc: np.ndarray, k_ba: np.ndarray | None, z_b: np.ndarray
                     ) -> np.ndarray | float:
        """h_b(s): tap b's open-circuit response to the string's start at code a, relative to
        code b (the load's current moved from tap a to tap b; K·C·R = (R − K)/s), (B, S) V·s;
        ``k_ba`` the transfer between the taps (``None``: not yet computed)."""
        pth, pa, pb = self.path, self.a - 1, self.b - 1
        if not self.loaded:
            return 0.0
        return (-(pth.r_res(pb, pa)[:, None] - k_ba) * self.i_a[:, None]
                + (pth.r_res(pb, pb)[:, None] - z_b) * self.i_b[:, None]) / sc[None, :]

    def after_switch(self, sc: np.ndarray, sw: Sweeps, dv: np.ndarray, extra=None,
                     k_ba: np.ndarray | None = None, z_b: np.ndarray | None = None
                     ) -> np.ndarray:
        """ΔV(s) of the output joined to tap b, starting ``dv`` (B,) V off its final value with
        the string as at code a (plus ``extra`` (B, S) V·s of tap-b response), (B, S);
        ``k_ba``, ``z_b``: the taps' transfer and tap b's impedance when the caller has them."""
        pth, pa, pb = self.path, self.a - 1, self.b - 1
        z_b = sw.impedance(pb) if z_b is None else z_b
        if self.loaded and k_ba is None:
            k_ba = sw.transfer(pb, pa)
        link = 1.0 / (pth.ron + z_b)  # the switch and the string as seen from tap b
        h = self.string_start(sc, k_ba, z_b) + (0.0 if extra is None else extra)
        num = pth.out_c * dv[:, None] + np.where((pb >= 0)[:, None], h * link, 0.0)
        return num / (sc[None, :] * pth.out_c + pth.load_g + link)

    def response(self, times: np.ndarray, cancel=None) -> np.ndarray:
        """y(t) − y_b of the simultaneous change at ``times`` (T,) > 0 after it, (B, T) V."""
        return self.path.gain * self.invert(
            times, lambda sc, sw: self.after_switch(sc, sw, self.dv), cancel)
