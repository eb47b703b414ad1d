"""INL, DNL, offset and gain error (IEEE Std 1658 DAC terminology; IEEE Std 1241 reference lines).

Every function works on the last axis (codes) and keeps any leading axes (Monte Carlo trials):
``v : ndarray, shape (..., n_codes), volts``.
"""

from __future__ import annotations

import numpy as np


def endpoint_lsb(v: np.ndarray) -> np.ndarray:
    """Slope of the line through the first and last code, volts per code; shape (...,)."""
    n = v.shape[-1]
    return (v[..., -1] - v[..., 0]) / max(n - 1, 1)


def _oriented(v: np.ndarray) -> np.ndarray:
    """Flip inverting transfers (negative full scale) so that INL/DNL read the same for both."""
    sign = np.where(v[..., -1:] - v[..., :1] < 0, -1.0, 1.0)
    return v * sign


def inl_endpoint(v: np.ndarray) -> np.ndarray:
    """INL against the endpoint line, in endpoint LSB; shape (..., n_codes).

    An inverting output (full scale below zero) is measured on ``−v`` so that the definitions
    apply unchanged.
    """
    v = _oriented(v)
    lsb = endpoint_lsb(v)[..., None]
    codes = np.arange(v.shape[-1])
    line = v[..., :1] + lsb * codes
    with np.errstate(invalid="ignore", divide="ignore"):
        return (v - line) / lsb


def bestfit_line(v: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Least-squares line over all codes: (offset in volts, slope in volts per code), shapes (...,)."""
    n = v.shape[-1]
    c = np.arange(n, dtype=float)
    cm = c.mean()
    vm = v.mean(axis=-1)
    cc = c - cm
    denom = float(np.einsum("i,i->", cc, cc)) or 1.0
    # einsum, not ``@``: a BLAS dot of one long vector may start threads, which costs
    # milliseconds per call on a busy machine (measured 0.03 → 12 ms at 65,536 codes)
    slope = np.einsum("...i,i->...", v, cc) / denom
    return vm - slope * cm, slope


def inl_bestfit(v: np.ndarray) -> np.ndarray:
    """INL against the least-squares line, in units of the fitted slope; shape (..., n_codes)."""
    v = _oriented(v)
    a, b = bestfit_line(v)
    c = np.arange(v.shape[-1])
    with np.errstate(invalid="ignore", divide="ignore"):
        return (v - a[..., None] - b[..., None] * c) / b[..., None]


def dnl(v: np.ndarray) -> np.ndarray:
    """DNL(k) = step / endpoint LSB − 1 for k = 0 … n_codes − 2; shape (..., n_codes − 1)."""
    v = _oriented(v)
    lsb = endpoint_lsb(v)[..., None]
    with np.errstate(invalid="ignore", divide="ignore"):
        return np.diff(v, axis=-1) / lsb - 1.0


def monotonic(v: np.ndarray) -> np.ndarray:
    """True where every step goes the way of full scale (a zero step counts); shape (...,)."""
    v = _oriented(v)
    return np.all(np.diff(v, axis=-1) >= 0, axis=-1)
