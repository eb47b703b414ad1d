"""Thermal (Johnson–Nyquist) noise at the output, per code.

e_n = √(4kT·R) for a resistance R at temperature T (J. B. Johnson, Phys. Rev. 32, 97, 1928;
H. Nyquist, Phys. Rev. 32, 110, 1928), k = 1.380649e-23 J/K. Every resistive element of the
network is at one temperature, so the noise at a node is that of its Thevenin resistance.

- node output: √(4kT·(rout ∥ load_r)), times |gain| after an ideal buffer;
- virtual-ground output: the network's Norton noise current √(4kT/rout) and the feedback
  resistor's own noise, both through Rf: √(4kT·Rf·(1 + Rf/rout)) (the amplifier taken noiseless).

RMS over a bandwidth B: density·√B for a brick-wall band; with an RC pole at the output
(τ = R_th·C, f_c = 1/(2πτ)) the band is folded through it: density·√(f_c·atan(B/f_c)), which
tends to √(kT/C) as B → ∞ (the single-pole noise bandwidth π·f_c/2).
"""

from __future__ import annotations

import math

import numpy as np

from ..network import Network
from ..types import BOLTZMANN, ZERO_CELSIUS


def johnson_density(ohms: np.ndarray | float, temperature_c: float) -> np.ndarray:
    """Open-circuit thermal noise density of a resistance.

    Parameters
    ----------
    ohms : float or ndarray, any shape, ohms
    temperature_c : float, °C

    Returns
    -------
    ndarray, same shape, V/√Hz
    """
    t = temperature_c + ZERO_CELSIUS
    return np.sqrt(4.0 * BOLTZMANN * t * np.asarray(ohms, dtype=float))


def output_density(net: Network, rout: np.ndarray, temperature_c: float,
                   feedback_ohms: float | None = None) -> np.ndarray:
    """Output thermal noise density at every code.

    Parameters
    ----------
    net : Network
    rout : ndarray, shape (n_codes,), ohms — the solver's output resistance (load excluded)
    temperature_c : float, °C
    feedback_ohms : float, optional
        Overrides the network's feedback resistor, ohms.

    Returns
    -------
    ndarray, shape (n_codes,), V/√Hz
    """
    o = net.output
    rout = np.asarray(rout, dtype=float)
    if o.kind == "virtual-ground":
        rf = o.feedback_ohms if feedback_ohms is None else feedback_ohms
        with np.errstate(divide="ignore"):
            ratio = np.where(np.isfinite(rout), rf / rout, 0.0)
        return johnson_density(rf * (1.0 + ratio), temperature_c)
    r = rout if o.buffered else o.with_load(rout)
    return johnson_density(r, temperature_c) * (abs(o.gain) if o.buffered else 1.0)


def rms(density: np.ndarray | float, bandwidth: float, tau: float = 0.0) -> np.ndarray:
    """RMS noise over ``bandwidth`` (Hz) from a white density (V/√Hz), volts, through an output
    pole of time constant ``tau`` (s; 0 or NaN: none, a brick-wall band)."""
    d = np.asarray(density, dtype=float)
    if not (tau > 0 and math.isfinite(tau)):
        return d * np.sqrt(bandwidth)
    fc = 1.0 / (2 * math.pi * tau)
    return d * np.sqrt(fc * math.atan(bandwidth / fc))
