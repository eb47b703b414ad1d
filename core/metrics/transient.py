"""Exact transient response of a switched RC network to a code change.

Between switching events the network is linear and time-invariant: C·dx/dt = −G·x + r0 + r1·τ
(nodes without capacitance are eliminated exactly by their Schur complement). With C diagonal and
positive, A = C^(−½)·G·C^(−½) is symmetric positive definite; its eigen-decomposition gives
modes z = Qᵀ·C^(½)·x with dz/dτ = −λ·z + β0 + β1·τ, solved in closed form:

    z(τ) = P0 + P1·τ + (z(0) − P0)·e^(−λτ),   P1 = β1/λ,  P0 = β0/λ − β1/λ².

So the output of every segment is y(τ) = y0 + y1·τ + Σ_m amp_m·e^(−λ_m τ), exact and integrable
in closed form; nothing is stepped in time. A batch of transitions shares one event grid (every
edge's start, midpoint and end), so all arrays are (batch, segment[, mode]).

Switch model (``switching.py``): a bit's edge starts at its skew and takes ``rise`` (to the high
rail) or ``fall`` (to the low rail); the driven end moves linearly between the rails' ideal
voltages; at the edge's midpoint the leg's conducting position (and so its on-resistance) changes
over. Before the midpoint the moving end is the old rail plus s(t)·ΔV, after it the new rail
minus (1 − s(t))·ΔV, with s the edge's 0 → 1 ramp and ΔV the change of ideal rail voltage (0 for
a rail with none: an open position or a current-steering pair of 0 V rails, where the change-over
at the midpoint is the whole switching).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from .switching import Branches


@dataclass
class Segments:
    """The exact output of a batch of responses, piece by piece.

    times : (J,) segment start times, s (the last segment lasts for ever)
    y0, y1 : (B, J) the non-decaying part of each segment, V and V/s (y1 = 0 in the last)
    amp, lam : (B, J, m) the decaying modes' output amplitudes (V) and rates (1/s)
    """

    times: np.ndarray
    y0: np.ndarray
    y1: np.ndarray
    amp: np.ndarray
    lam: np.ndarray

    @property
    def final(self) -> np.ndarray:
        """The settled output, (B,) V."""
        return self.y0[:, -1]

    def piece(self, seg: np.ndarray) -> tuple[np.ndarray, ...]:
        """The parameters of segments ``seg`` (int, (B, P)), for :meth:`piece_at`."""
        return (np.take_along_axis(self.y0, seg, axis=1), np.take_along_axis(self.y1, seg, axis=1),
                np.take_along_axis(self.amp, seg[..., None], axis=1),
                np.take_along_axis(self.lam, seg[..., None], axis=1))

    @staticmethod
    def piece_at(piece: tuple[np.ndarray, ...], tau: np.ndarray) -> np.ndarray:
        """Output of gathered segments at ``tau`` s after their starts (broadcast), V."""
        y0, y1, amp, lam = piece
        return y0 + y1 * tau + np.sum(amp * np.exp(-lam * tau[..., None]), axis=-1)

    def on_grid(self, seg: np.ndarray, tau: np.ndarray) -> np.ndarray:
        """Output at points (segment ``seg``, ``tau``) shared by the whole batch ((P,) each),
        (B, P) V."""
        piece = (self.y0[:, seg], self.y1[:, seg], self.amp[:, seg], self.lam[:, seg])
        return self.piece_at(piece, np.broadcast_to(tau, (self.y0.shape[0], tau.size)))

    def at(self, seg: np.ndarray, tau: np.ndarray) -> np.ndarray:
        """Output in segment ``seg`` (int, (B, P)) at ``tau`` s after its start, (B, P) V."""
        return self.piece_at(self.piece(np.broadcast_to(seg, tau.shape)), tau)

    def segment_of(self, t: np.ndarray) -> np.ndarray:
        """Segment index of absolute times ``t`` (any shape)."""
        return np.searchsorted(self.times, t, side="right") - 1

    def value(self, t: np.ndarray) -> np.ndarray:
        """Output at absolute times ``t`` ((B, P) or (P,)), (B, P) V."""
        t = np.broadcast_to(t, (self.y0.shape[0], *np.shape(t)[-1:]))
        seg = self.segment_of(t)
        return self.at(seg, t - self.times[seg])

    def area(self) -> np.ndarray:
        """∫₀^∞ (y − y(∞)) dt, (B,) V·s, in closed form."""
        fin = self.final[:, None]
        span = np.diff(self.times)[None, :]
        y0, y1, amp, lam = self.y0[:, :-1], self.y1[:, :-1], self.amp[:, :-1], self.lam[:, :-1]
        sp = np.broadcast_to(span[..., None], lam.shape)
        decay = np.where(lam > 0, -np.expm1(-lam * sp) / np.where(lam > 0, lam, 1.0), sp)
        finite = (y0 - fin) * span + 0.5 * y1 * span**2 + np.sum(amp * decay, axis=-1)
        tail = np.sum(self.amp[:, -1] / self.lam[:, -1], axis=-1)
        return np.sum(finite, axis=1) + tail


def event_times(skews: np.ndarray, rise: float, fall: float) -> np.ndarray:
    """Every instant a leg's edge starts, passes its midpoint or ends (and 0), sorted, s."""
    s = np.unique(np.asarray(skews, float))
    t = np.concatenate([[0.0], s, s + rise / 2, s + fall / 2, s + rise, s + fall])
    return np.unique(t)


HELD = 1e-13
"""A mode slower than this fraction of the fastest is a floating node holding its charge (a
switch that breaks before it makes): it neither charges nor decays within the segment."""


class _Reduced:
    """Schur elimination of the nodes without capacitance and the modes of the rest."""

    def __init__(self, G: np.ndarray, cap: np.ndarray) -> None:
        kap = cap > 0
        self.kap, self.alp = kap, ~kap
        self.sc = 1.0 / np.sqrt(cap[kap])
        if self.alp.any():
            ga = G[:, self.alp]
            self.inv = np.linalg.inv(ga[:, :, self.alp])
            self.g_ka = G[:, kap][:, :, self.alp]
            self.X = self.inv @ ga[:, :, kap]
            g_red = G[:, kap][:, :, kap] - self.g_ka @ self.X
        else:
            self.inv = None
            g_red = G
        m = int(kap.sum())
        if m:
            lam, self.Q = np.linalg.eigh(g_red * self.sc[:, None] * self.sc[None, :])
            self.lam = np.maximum(lam, 0.0)
        else:
            self.Q = np.zeros((*G.shape[:1], 0, 0))
            self.lam = np.zeros((*G.shape[:1], 0))

    def _mat(self, M: np.ndarray, v: np.ndarray) -> np.ndarray:
        return np.einsum("bij,bj->bi", M, v)

    def rhs(self, r: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
        """Modal drive β (B, m) and the algebraic nodes' share r_α solved (B, nα)."""
        if self.inv is None:
            return self._mat(np.swapaxes(self.Q, 1, 2), self.sc * r), np.zeros((*r.shape[:1], 0))
        xa = self._mat(self.inv, r[:, self.alp])
        red = r[:, self.kap] - self._mat(self.g_ka, xa)
        return self._mat(np.swapaxes(self.Q, 1, 2), self.sc * red), xa

    def output(self, oc: np.ndarray) -> np.ndarray:
        """Modal output weights (B, m) of output coefficients oc (B, n)."""
        red = oc[:, self.kap]
        if self.inv is not None:
            red = red - np.einsum("bi,bij->bj", oc[:, self.alp], self.X)
        return self._mat(np.swapaxes(self.Q, 1, 2), self.sc * red)

    def to_modes(self, x_k: np.ndarray) -> np.ndarray:
        return self._mat(np.swapaxes(self.Q, 1, 2), x_k / self.sc)

    def from_modes(self, z: np.ndarray) -> np.ndarray:
        return self.sc * self._mat(self.Q, z)


def _ramp_integrals(lam: np.ndarray, span: float) -> tuple[np.ndarray, np.ndarray]:
    """∫₀^Δ e^(−λ(Δ−s)) ds and ∫₀^Δ e^(−λ(Δ−s))·s ds, evaluated without cancellation when λΔ is
    small (an edge far shorter than a time constant): series in x = λΔ below 1e-3."""
    x = lam * span
    small = x < 1e-3
    xs = np.where(small, 1.0, x)
    f1 = np.where(small, span * (1 - x / 2 + x**2 / 6 - x**3 / 24), -np.expm1(-xs) / xs * span)
    f2 = np.where(small, span**2 * (0.5 - x / 6 + x**2 / 24 - x**3 / 120),
                  (xs + np.expm1(-xs)) / xs**2 * span**2)
    return f1, f2


def _same_batch(G: np.ndarray) -> bool:
    return G.shape[0] > 1 and bool(np.all(G[:1] == G))


def _reduce(G: np.ndarray, cap: np.ndarray) -> _Reduced:
    """Reduction of G (B, n, n); one decomposition when every batch row is the same matrix."""
    if _same_batch(G):
        red = _Reduced(G[:1], cap)
        b = G.shape[0]
        for name in ("inv", "g_ka", "X", "Q", "lam"):
            val = getattr(red, name, None)
            if val is not None:
                setattr(red, name, np.broadcast_to(val, (b, *val.shape[1:])))
        return red
    return _Reduced(G, cap)


def _assemble(br: Branches, w: np.ndarray, e0: np.ndarray, e1: np.ndarray):
    """Nodal matrix, right-hand side (value and slope) and output terms of weights w (B, K)."""
    b, n = w.shape[0], br.n
    G = np.asarray(br.S.T @ w.T).T.reshape(b, n, n)
    we0, we1 = w * e0, w * e1
    r0 = w @ br.R + we0 @ br.P
    r1 = we1 @ br.P
    oc = w @ br.Oc + br.out_gain
    d0 = w @ br.Od + we0 @ br.Oe
    d1 = we1 @ br.Oe
    return G, r0, r1, oc, d0, d1


def _per_branch(br: Branches, per_leg: np.ndarray) -> np.ndarray:
    """A per-leg value (B, L) copied onto both of each leg's branches (B, K); resistors 0."""
    out = np.zeros(per_leg.shape[:1] + br.static_w.shape)
    out[:, br.leg_high] = per_leg
    has = br.leg_low >= 0
    out[:, br.leg_low[has]] = per_leg[:, has]
    return out


def dc_state(br: Branches, drive: np.ndarray, scale: np.ndarray | None = None
             ) -> tuple[np.ndarray, np.ndarray]:
    """Settled node voltages (B, n) and output (B,) for drive states (B, L); ``scale`` (B, K)
    multiplies each branch's conductance per row (a template network's values)."""
    w = br.weights(drive) * (1.0 if scale is None else scale)
    zero = np.zeros_like(w)
    G, r0, _, oc, d0, _ = _assemble(br, w, zero, zero)
    x = np.linalg.solve(G, r0[..., None])[..., 0] if br.n else np.zeros((w.shape[0], 0))
    return x, np.sum(oc * x, axis=-1) + d0


def respond(br: Branches, leg_start: np.ndarray, rise: float, fall: float,
            from_codes: np.ndarray, to_codes: np.ndarray, scale: np.ndarray | None = None
            ) -> tuple[Segments, Segments]:
    """The exact output of each change ``from_codes`` → ``to_codes`` (shape (B,)), and of the
    same change made by every switch at t = 0 as a step (the simultaneous-switching response).

    ``leg_start`` (L,) s: when each leg's edge starts. Both start settled at the old code.
    ``scale`` (B, K) multiplies each branch's conductance per row (see :func:`dc_state`).
    """
    d_f = np.asarray(br.decode(np.asarray(from_codes)), bool)
    d_t = np.asarray(br.decode(np.asarray(to_codes)), bool)
    b = d_f.shape[0]
    x0, _ = dc_state(br, d_f, scale)
    k = 1.0 if scale is None else scale
    w_f, w_t = br.weights(d_f) * k, br.weights(d_t) * k
    edge = np.where(d_t, rise, fall)
    start = np.broadcast_to(leg_start, edge.shape)
    mid, end = start + edge / 2, start + edge
    ideal_new = np.where(d_t, br.ideal_high, br.ideal_low)
    ideal_old = np.where(d_f, br.ideal_high, br.ideal_low)
    dv = np.nan_to_num(ideal_new - ideal_old) * (d_f != d_t)
    times = event_times(leg_start, rise, fall)
    kap = br.cap > 0

    def segments(plan, seg_times: np.ndarray) -> Segments:
        J = len(plan)
        y0, y1 = np.zeros((b, J)), np.zeros((b, J))
        m = int(kap.sum())
        amp, lam = np.zeros((b, J, m)), np.ones((b, J, m))
        x_k = x0[:, kap]
        red, last_w = None, None
        for j, (w, e0, e1, span) in enumerate(plan):
            G, r0, r1, oc, d0, d1 = _assemble(br, w, e0, e1)
            if red is None or not np.array_equal(w, last_w):
                red, last_w = _reduce(G, br.cap), w
            beta0, xa0 = red.rhs(r0)
            beta1, xa1 = red.rhs(r1)
            lam_j = red.lam
            held = lam_j <= HELD * np.max(lam_j, axis=-1, keepdims=True) if m else lam_j > 0
            safe = np.where(held, 1.0, lam_j)
            p1 = np.where(held, 0.0, beta1 / safe)
            p0 = np.where(held, 0.0, beta0 / safe - beta1 / safe**2)
            lam_j = np.where(held, 0.0, lam_j)
            wm = red.output(oc)
            feed0 = np.sum(oc[:, ~kap] * xa0, axis=-1) if xa0.size else 0.0
            feed1 = np.sum(oc[:, ~kap] * xa1, axis=-1) if xa1.size else 0.0
            z0 = red.to_modes(x_k)
            a = z0 - p0
            y0[:, j] = np.sum(wm * p0, axis=-1) + d0 + feed0
            y1[:, j] = np.sum(wm * p1, axis=-1) + d1 + feed1
            amp[:, j], lam[:, j] = wm * a, lam_j
            if span is not None and m:  # z(Δ) by the convolution, free of cancellation
                f1, f2 = _ramp_integrals(lam_j, span)
                x_k = red.from_modes(z0 * np.exp(-lam_j * span) + beta0 * f1 + beta1 * f2)
        return Segments(times=seg_times, y0=y0, y1=y1, amp=amp, lam=lam)

    plan = []
    for j, t in enumerate(times):
        passed = mid <= t
        w = np.where(_per_branch(br, passed) > 0, w_t, w_f)
        ramp = np.where(t >= end, 1.0,  # also an edge shorter than the times' resolution
                        np.where(edge > 0, np.clip((t - start) / np.where(edge > 0, edge, 1), 0, 1),
                                 (t >= start).astype(float)))
        slope = np.where((edge > 0) & (t >= start) & (t < end), 1 / np.where(edge > 0, edge, 1), 0)
        e0 = _per_branch(br, (ramp - passed) * dv)
        e1 = _per_branch(br, slope * dv)
        span = times[j + 1] - t if j + 1 < len(times) else None
        plan.append((w, e0, e1, span))
    actual = segments(plan, times)
    zero = np.zeros_like(w_t)
    sync = segments([(w_t, zero, zero, None)], np.zeros(1))
    return actual, sync
