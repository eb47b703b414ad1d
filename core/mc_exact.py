"""Exact O(N)-per-trial linearity statistics where superposition holds.

When the output is affine in the bits, V(k) = V(0) + Σ_i b_i(k)·w_i with the per-bit weights
w_i = V(2^i) − V(0), so every figure over all 2^N codes follows from the N weights:

- endpoint INL(k) = Σ_i b_i(k)·ε_i with ε_i = w_i/LSB − 2^i: its maximum is the sum of the positive
  ε_i, its minimum the sum of the negative ones;
- best-fit INL(k) = Σ_i (b_i(k) − ½)·δ_i with δ_i = w_i/slope − 2^i (the least-squares line over all
  codes is affine in the bits too; slope = 3·Σ w_i 2^i/(4^N − 1)), so max |INL| = Σ |δ_i| / 2;
- the step after code k depends only on t, the number of trailing ones of k:
  V(k+1) − V(k) = w_t − Σ_{i<t} w_i.

Inputs and outputs carry the trial axis first: ``w : ndarray, shape (n_trials, N), volts``.
"""

from __future__ import annotations

import numpy as np

from .network import Network


def is_bitwise(net: Network, n_bits: int, max_checked: int = 1 << 16) -> bool:
    """True when the legs driven at any code are exactly the union of those of its bits.

    Every code is checked when there are at most ``max_checked``; otherwise ``max_checked`` codes
    spread over the range (both ends included).
    """
    basis = net.decode(np.array([0] + [1 << i for i in range(n_bits)], dtype=np.int64))
    if basis[0].any():
        return False
    per_bit = basis[1:].astype(np.int64)
    if np.any(per_bit.sum(axis=0) > 1):
        return False
    n_codes = net.n_codes
    if n_codes <= max_checked:
        codes = np.arange(n_codes, dtype=np.int64)
    else:
        codes = np.unique(np.linspace(0, n_codes - 1, max_checked).astype(np.int64))
    for start in range(0, codes.size, 4096):
        chunk = codes[start:start + 4096]
        bits = (chunk[:, None] >> np.arange(n_bits)[None, :]) & 1
        if not np.array_equal(net.decode(chunk), (bits @ per_bit) > 0):
            return False
    return True


def basis_codes(n_bits: int) -> np.ndarray:
    """Codes 0, 1, 2, 4, …, 2^(N−1): the solves the exact path needs; shape (N + 1,)."""
    return np.array([0] + [1 << i for i in range(n_bits)], dtype=np.int64)


def endpoint_errors(w: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """(ε, endpoint LSB): per-bit endpoint errors, shape (n_trials, N), LSB; LSB shape (n_trials,)."""
    n_bits = w.shape[-1]
    lsb = w.sum(axis=-1) / (2.0**n_bits - 1.0)
    with np.errstate(invalid="ignore", divide="ignore"):
        eps = w / lsb[:, None] - 2.0 ** np.arange(n_bits)
    return eps, lsb


def bestfit_errors(w: np.ndarray) -> np.ndarray:
    """δ: per-bit errors against the least-squares line, shape (n_trials, N), LSB of the fit."""
    n_bits = w.shape[-1]
    weights = 2.0 ** np.arange(n_bits)
    slope = 3.0 * (w @ weights) / (4.0**n_bits - 1.0)
    with np.errstate(invalid="ignore", divide="ignore"):
        return w / slope[:, None] - weights


def statistics(w: np.ndarray) -> dict[str, np.ndarray]:
    """Per-trial figures from the per-bit weights.

    Parameters
    ----------
    w : ndarray, shape (n_trials, N), volts
        w_i = V(2^i) − V(0) for each trial.

    Returns
    -------
    dict of ndarray, shape (n_trials,)
        ``max_abs_inl_endpoint`` and ``max_abs_dnl`` (endpoint LSB), ``max_abs_inl_bestfit`` (LSB of
        the fit), ``monotonic`` (bool), ``lsb`` (endpoint LSB, volts).
    """
    eps, lsb = endpoint_errors(w)
    top = np.sum(np.maximum(eps, 0.0), axis=-1)
    bottom = np.sum(np.minimum(eps, 0.0), axis=-1)
    delta = bestfit_errors(w)
    below = np.cumsum(w, axis=-1) - w  # Σ_{i<t} w_i
    steps = w - below  # step after a code with t trailing ones, volts
    with np.errstate(invalid="ignore", divide="ignore"):
        dnl = steps / lsb[:, None] - 1.0
    sign = np.where(lsb < 0, -1.0, 1.0)[:, None]
    return {
        "max_abs_inl_endpoint": np.maximum(top, -bottom),
        "max_abs_inl_bestfit": 0.5 * np.sum(np.abs(delta), axis=-1),
        "max_abs_dnl": np.max(np.abs(dnl), axis=-1),
        "monotonic": np.all(steps * sign >= 0, axis=-1),
        "lsb": lsb,
    }


def inl_at(w: np.ndarray, codes: np.ndarray, line: str) -> np.ndarray:
    """INL at ``codes`` from the weights; shape (n_trials, n_codes), LSB.

    ``line`` is ``"endpoint"`` or ``"bestfit"``.
    """
    n_bits = w.shape[-1]
    bits = ((codes[:, None] >> np.arange(n_bits)[None, :]) & 1).astype(float)
    if line == "bestfit":
        return bestfit_errors(w) @ (bits - 0.5).T
    return endpoint_errors(w)[0] @ bits.T
