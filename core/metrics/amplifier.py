"""A real amplifier behind the network: input offset, finite open-loop gain, output rails.

Virtual-ground output (summing node, feedback Rf): with the network's Norton current I_sc and its
resistance rout(k) seen from the summing node, the noise gain is NG(k) = 1 + Rf/rout(k) and

    Vout(k) = (−Rf·I_sc(k) + Vos·NG(k)) / (1 + NG(k)/A)

so the offset becomes a code-dependent error (NG changes with the code) and shows up as INL.
Buffered node output of gain G (non-inverting): Vout = G·(v(k) + Vos)/(1 + G/A), an offset and
a gain error only. Codes whose output passes a rail are counted (the output is clipped there).
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from ..network import Network
from . import linearity


@dataclass
class AmplifierEffect:
    """What a real amplifier does to the ideal outputs.

    Attributes
    ----------
    vout : ndarray, shape (n_codes,), volts — with offset, finite gain and clipping
    offset_error : float, volts — V(0) change from the ideal amplifier
    gain_error : float, fraction — endpoint slope change relative to the ideal amplifier's
    inl_added : float, endpoint LSB — largest |INL| change the amplifier causes; NaN when the real
        output has no step between its endpoints (the rails clip every code alike, or a signal
        below 1e-16 of the offset is lost in round-off; then ``gain_error`` is −1)
    noise_gain : ndarray, shape (n_codes,) — 1 + Rf/rout (virtual ground) or G (buffer)
    codes_clipped : int — codes whose output lies beyond a rail
    """

    vout: np.ndarray
    offset_error: float
    gain_error: float
    inl_added: float
    noise_gain: np.ndarray
    codes_clipped: int


def has_amplifier(net: Network) -> bool:
    """True when the output is taken through an amplifier (buffer or virtual ground)."""
    return net.output.kind == "virtual-ground" or net.output.buffered


def apply(net: Network, vout: np.ndarray, rout: np.ndarray, offset: float, open_loop: float,
          rail_low: float, rail_high: float, nominal_inl: np.ndarray | None = None
          ) -> AmplifierEffect:
    """The outputs with a real amplifier.

    Parameters
    ----------
    net : Network
        Must have an amplifier (:func:`has_amplifier`).
    vout, rout : ndarray, shape (n_codes,)
        The ideal amplifier's outputs (V) and the network's output resistance (Ω).
    offset : float, volts
    open_loop : float, V/V (``inf`` for ideal)
    rail_low, rail_high : float, volts (``∓inf`` for none)
    nominal_inl : ndarray, shape (n_codes,), optional
        ``linearity.inl_endpoint(vout)`` when the caller already has it (not computed twice).
    """
    o = net.output
    vout = np.asarray(vout, dtype=float)
    if o.kind == "virtual-ground":
        with np.errstate(divide="ignore"):
            ng = 1.0 + np.where(np.isfinite(rout), o.feedback_ohms / rout, 0.0)
        real = (vout + offset * ng) / (1.0 + ng / open_loop)
    else:
        ng = np.full(vout.shape, abs(o.gain))
        real = (vout + o.gain * offset) / (1.0 + ng / open_loop)
    outside = (real < rail_low) | (real > rail_high)
    real = np.clip(real, rail_low, rail_high)
    ideal_lsb = float(linearity.endpoint_lsb(vout))
    lsb = float(linearity.endpoint_lsb(real))
    base = linearity.inl_endpoint(vout) if nominal_inl is None else nominal_inl
    inl_added = np.abs(linearity.inl_endpoint(real) - base)
    inl_added = inl_added[np.isfinite(inl_added)]  # none when the real output is flat
    return AmplifierEffect(
        vout=real,
        offset_error=float(real[0] - vout[0]),
        gain_error=lsb / ideal_lsb - 1.0 if ideal_lsb else float("nan"),
        inl_added=float(inl_added.max()) if inl_added.size else (0.0 if vout.size < 2 else math.nan),
        noise_gain=ng,
        codes_clipped=int(np.count_nonzero(outside)),
    )
