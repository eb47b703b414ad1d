"""Per-bit weights of a measured curve: V(k) ≈ V0 + Σ b_i(k)·w_i, least squares over measured codes.

Where superposition holds (equal switch resistances, an ideal reference) a binary network's output
is exactly of this form, so the fit residual measures what is *not* linear in the bits: switch
resistance differences, a loaded reference, meter noise.

Weight errors are given against the fitted gain: the ideal weight of bit i is 2^i · L with
L = Σ w_i / (2^N − 1) (the fitted full scale over its steps), and the error is (w_i − 2^i·L) / L
in LSB. Taking the gain out this way makes the errors linearity errors (they sum to zero); a
reference or gain error does not show in them.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np


@dataclass(frozen=True, eq=False)
class BitFit:
    """Result of :func:`fit_bit_weights`.

    Attributes
    ----------
    offset : float — V0, volts
    weights : ndarray, shape (bits,), volts — w_i, LSB first; NaN where not identifiable
    stderr : ndarray, shape (bits,), volts — standard error of each weight (NaN without spare data)
    weight_error_lsb : ndarray, shape (bits,), LSB — see the module docstring
    fitted_lsb : float — L, volts per code
    residual : ndarray, shape (n,), volts — measured − fitted, at the measured codes
    residual_rms_lsb : float — RMS of ``residual`` over |L| (over the endpoint slope when L is unknown)
    identifiable : ndarray of bool, shape (bits,) — the bit toggles among the measured codes
    """

    offset: float
    weights: np.ndarray
    stderr: np.ndarray
    weight_error_lsb: np.ndarray
    fitted_lsb: float
    residual: np.ndarray
    residual_rms_lsb: float
    identifiable: np.ndarray


def bit_matrix(codes: np.ndarray, bits: int) -> np.ndarray:
    """Bits of each code, LSB first, as floats; shape (n_codes, bits)."""
    return ((np.asarray(codes, np.int64)[:, None] >> np.arange(bits)) & 1).astype(float)


def fit_bit_weights(codes: np.ndarray, volts: np.ndarray, bits: int) -> BitFit:
    """Least-squares bit weights of a curve measured at ``codes`` (missing codes allowed).

    Parameters
    ----------
    codes : ndarray of int, shape (n,)
    volts : ndarray, shape (n,), volts — one value per code (the mean of repeats)
    bits : int — N

    Returns
    -------
    BitFit
        A bit that never changes among the measured codes, or a set of codes that cannot separate
        the weights, leaves the affected weights NaN.
    """
    b = bit_matrix(codes, bits)
    v = np.asarray(volts, dtype=float)
    n = v.size
    toggles = (b.min(axis=0) == 0) & (b.max(axis=0) == 1)
    x = np.column_stack([np.ones(n), b[:, toggles]])
    weights = np.full(bits, np.nan)
    stderr = np.full(bits, np.nan)
    identifiable = toggles.copy()
    q, r = np.linalg.qr(x) if n >= x.shape[1] else (None, None)
    diag = np.abs(np.diag(r)) if r is not None else np.zeros(1)
    if r is None or diag.min() <= 1e-9 * diag.max():
        identifiable[:] = False
        coef = np.array([np.mean(v)])
        x = np.ones((n, 1))
        r_inv = None
    else:
        r_inv = np.linalg.inv(r)
        coef = r_inv @ (q.T @ v)
        weights[toggles] = coef[1:]
    residual = v - x @ coef
    dof = n - x.shape[1]
    if dof > 0 and r_inv is not None and identifiable.any():
        s2 = float(residual @ residual) / dof
        cov = s2 * (r_inv @ r_inv.T)  # (XᵀX)⁻¹ = R⁻¹R⁻ᵀ
        stderr[identifiable] = np.sqrt(np.diag(cov)[1:])
    lsb = float(np.sum(weights) / (2 ** bits - 1)) if identifiable.all() else float("nan")
    if lsb == 0 or not np.isfinite(lsb):
        err = np.full(bits, np.nan)
        c = np.asarray(codes)
        scale = abs((v[-1] - v[0]) / (c[-1] - c[0])) if n > 1 and c[-1] != c[0] else 0.0
    else:
        err = (weights - 2.0 ** np.arange(bits) * lsb) / lsb
        scale = abs(lsb)
    rms = float(np.sqrt(np.mean(residual**2)) / scale) if scale else float("nan")
    return BitFit(offset=float(coef[0]), weights=weights, stderr=stderr, weight_error_lsb=err,
                  fitted_lsb=lsb, residual=residual, residual_rms_lsb=rms,
                  identifiable=identifiable)
