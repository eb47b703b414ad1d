"""Two tap switches of a string that change over at different instants (``rise ≠ fall``).

From t1 to t2 the output is joined to both taps (make before break) or to neither (break before
make); then to the new tap alone. Solved in the Laplace domain with the string's continued
fractions (``string_laplace.py``); see :class:`TwoStage`.
"""

from __future__ import annotations

import numpy as np

from ..network import Network
from ..timing import Timing
from .string_laplace import TALBOT_NODES, StringTransitions, Sweeps, talbot

OVERLAP_NODES = TALBOT_NODES + 1
"""Talbot points of the overlap (coprime with :data:`TALBOT_NODES`, so the overlap's contour and
an observation time's contour share at most their real point)."""


class TwoStage(StringTransitions):
    """A change whose taps switch at different instants (``rise ≠ fall``): from t1 to t2 the
    output is joined to both taps (make before break) or to neither (break before make), then
    to tap b alone.

    The overlap is solved with the switch currents as unknowns: their changes J_a(s), J_b(s)
    follow from a 2 × 2 system of the tap impedances (K_aa, K_ab, K_bb). After t2 the output is
    :meth:`after_switch` from the state at t2, whose string part reaches tap b through
    h₁(σ) = L⁻¹_s[−Σ_{x=a,b} (K_bx(s) − K_bx(σ))·J_x(s)/(σ − s)](Δ) (K(σ)CK(s) = (K(s) − K(σ))/(σ − s),
    the resolvent identity), inverted over the overlap Δ on a full Talbot contour of
    :data:`OVERLAP_NODES` points, for every σ at once as a matrix product.
    """

    ROW_FIELDS = (*StringTransitions.ROW_FIELDS, "u_a", "u_b", "k_ba", "k_bb", "dv_end",
                  "impulse")

    def __init__(self, net: Network, timing: Timing, from_taps: np.ndarray, to_taps: np.ndarray
                 ) -> None:
        super().__init__(net, timing, from_taps, to_taps)
        pth = self.path
        start = max(timing.skew, default=0.0)
        self.t1 = start + min(timing.rise, timing.fall) / 2
        self.t2 = start + max(timing.rise, timing.fall) / 2
        self.both = timing.rise < timing.fall
        span = self.t2 - self.t1
        s, w, fac = talbot(np.array([span]), OVERLAP_NODES)
        s, w = s[0], w[0]
        sw = Sweeps(pth, s, far=self.far)
        j_a, j_b = self.overlap_currents(s, sw)
        pb, pa = self.b - 1, self.a - 1
        k_ba, k_bb = sw.transfer(pb, pa), sw.impedance(pb)
        # the full contour (the overlap's time function of a complex σ is complex): s and s̄
        weight = fac[0] * np.exp(s * span) * np.where(np.arange(s.size) > 0, w / 2, w)
        self.s_all = np.concatenate([s, np.conj(s[1:])])
        self.w_all = np.concatenate([weight, np.conj(weight[1:])])

        def full(x: np.ndarray) -> np.ndarray:
            return np.concatenate([x, np.conj(x[:, 1:])], axis=1)

        self.u_a, self.u_b = full(j_a) * self.w_all, full(j_b) * self.w_all
        self.k_ba, self.k_bb = full(k_ba), full(k_bb)
        y_out = (j_a + j_b) / (s[None, :] * pth.out_c + pth.load_g)  # δV of the output
        self.dv_end = self.dv + np.real(full(y_out) @ self.w_all)
        area1 = np.real(full(y_out / s[None, :]) @ self.w_all)
        r_bb = pth.r_res(pb, pb)
        h1_0 = np.real(self.overlap_reach(np.zeros(1), pth.r_res(pb, pa)[:, None],
                                          r_bb[:, None])[:, 0])
        link0 = 1.0 / (pth.ron + np.where(pb >= 0, r_bb, 0.0))
        a2_minus_sync = (pth.out_c * (self.dv_end - self.dv)
                         + np.where(pb >= 0, h1_0 * link0, 0.0)) / (pth.load_g + link0)
        jump = self.y_a - self.y_b
        self.impulse = (jump * self.t2 + pth.gain * (area1 + a2_minus_sync))

    def horizon(self, half_lsb: float) -> float:
        """A time after t2 (and after the code change, for the simultaneous response) past which
        |ΔV| < ½ LSB: the energy bound of :meth:`StringTransitions.horizon` with the state at
        t2 (the output's offset, and the string moved by at most the overlap's switch current,
        taken as twice tap b's voltage across the open switch over R_on)."""
        pth = self.path
        across = np.abs(self.tap_voltage(self.a, self.b) - self.y_a / pth.gain)
        current = np.abs(self.i_a) + np.abs(self.i_b) + (2 * across / pth.ron if self.both
                                                         else 0.0)
        return self.energy_horizon(current, np.maximum(np.abs(self.dv), np.abs(self.dv_end)),
                                   half_lsb)

    def overlap_currents(self, s: np.ndarray, sw: Sweeps) -> tuple[np.ndarray, np.ndarray]:
        """Changes of the switch currents into the output from taps a and b during the overlap,
        J_a(s), J_b(s), (B, S) A·s."""
        pth, pa, pb = self.path, self.a - 1, self.b - 1
        if not self.both:  # break before make: tap a's current stops, nothing flows from b
            j_a = -self.i_a[:, None] / s[None, :] + 0j
            return j_a, np.zeros_like(j_a)
        shunt = 1.0 / (s[None, :] * pth.out_c + pth.load_g)
        m_aa = pth.ron + sw.impedance(pa) + shunt
        m_bb = pth.ron + sw.impedance(pb) + shunt
        m_ab = sw.transfer(pa, pb) + shunt
        across = self.tap_voltage(self.a, self.b) - self.y_a / pth.gain  # tap b − output at t1
        drive = across[:, None] / s[None, :]
        det = m_aa * m_bb - m_ab**2
        return -m_ab * drive / det, m_aa * drive / det

    def overlap_reach(self, sigma: np.ndarray, k_ba: np.ndarray, k_bb: np.ndarray) -> np.ndarray:
        """h₁(σ) (B, S) V·s: what the overlap left in the string, seen at tap b (class doc);
        ``k_ba``, ``k_bb`` (B, S) at σ."""
        q = 1.0 / (sigma[None, :] - self.s_all[:, None])  # (N, S)
        b = self.b.size
        sums = np.concatenate([self.u_a * self.k_ba + self.u_b * self.k_bb, self.u_a,
                               self.u_b]) @ q  # one product for the three sums
        return k_ba * sums[b:2 * b] + k_bb * sums[2 * b:] - sums[:b]

    def overlap(self, times: np.ndarray, cancel=None) -> np.ndarray:
        """actual − y_b at ``times`` (T,) within the overlap (0 < u < Δ after t1), (B, T) V."""
        pth = self.path

        def transform(sc, sw):
            j_a, j_b = self.overlap_currents(sc, sw)
            return (j_a + j_b) / (sc[None, :] * pth.out_c + pth.load_g)

        return self.y_a[:, None] - self.y_b[:, None] + pth.gain * self.invert(times, transform,
                                                                             cancel)

    def after(self, times: np.ndarray, cancel=None) -> np.ndarray:
        """actual − y_b at ``times`` (T,) > 0 after t2, (B, T) V."""
        pb, pa = self.b - 1, self.a - 1

        def transform(sc, sw):
            k_ba, z_b = sw.transfer(pb, pa), sw.impedance(pb)
            extra = self.overlap_reach(sc, k_ba, z_b)
            return self.after_switch(sc, sw, self.dv_end, extra, k_ba, z_b)

        times = np.asarray(times, float)
        return self.path.gain * self.invert(times, transform, cancel,
                                            _apart(times, self.t2 - self.t1))

    def actual(self, times: np.ndarray, cancel=None) -> np.ndarray:
        """actual − y_b at absolute ``times`` (T,) from the code change, (B, T) V: held until
        t1 (and at t1: the output node keeps its charge), the overlap, then after t2."""
        t = np.asarray(times, float)
        out = np.empty((self.b.size, t.size))
        held = t <= self.t1
        mid = (t > self.t1) & (t < self.t2)
        at_t2 = t == self.t2
        late = t > self.t2
        out[:, held] = (self.y_a - self.y_b)[:, None]
        out[:, at_t2] = (self.path.gain * self.dv_end)[:, None]
        if mid.any():
            out[:, mid] = self.overlap(t[mid] - self.t1, cancel)
        if late.any():
            out[:, late] = self.after(t[late] - self.t2, cancel)
        return out


def _apart(times: np.ndarray, span: float) -> np.ndarray:
    """Contour scales (T,) that keep an observation time's Talbot contour off the overlap's: they
    meet on the real axis at τ = Δ·M/M_o, where (K(s) − K(σ))/(σ − s) would cancel to nothing;
    there the contour is widened by 2 %."""
    special = span * TALBOT_NODES / OVERLAP_NODES
    return np.where(np.abs(times / special - 1.0) < 1e-2, 1.02, 1.0)
