"""Thermal (Johnson–Nyquist) noise at the output, per code.

e_n = √(4kT·R) for a resistance R at temperature T (J. B. Johnson, Phys. Rev. 32, 97, 1928;
H. Nyquist, Phys. Rev. 32, 110, 1928), k = 1.380649e-23 J/K. Every resistive element of the
network is at one temperature, so the noise at a node is that of its Thevenin resistance.

- node output: √(4kT·(rout ∥ load_r)), times |gain| after an ideal buffer;
- virtual-ground output: the network's Norton noise current √(4kT/rout) and the feedback
  resistor's own noise, both through Rf: √(4kT·Rf·(1 + Rf/rout)) (the amplifier taken noiseless).

RMS over a bandwidth B: density·√B (a brick-wall band; an RC output pole is not folded in).
"""

from __future__ import annotations

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
    r = rout
    if not o.buffered and np.isfinite(o.load_ohms):
        r = rout * o.load_ohms / (rout + o.load_ohms)
    return johnson_density(r, temperature_c) * (abs(o.gain) if o.buffered else 1.0)


def rms(density: np.ndarray | float, bandwidth: float) -> np.ndarray:
    """RMS noise over a brick-wall ``bandwidth`` (Hz) from a white density (V/√Hz), volts."""
    return np.asarray(density, dtype=float) * np.sqrt(bandwidth)
