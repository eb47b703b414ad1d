"""The spectrum of a coherently sampled test sine through the converter's static transfer.

Codes code[n] = round(c_mid + a·c_mid·sin(2π·J·n/S)), c_mid = (2^N − 1)/2, n = 0 … S − 1, with
S samples, J cycles (coprime with S, so every sample falls on a different phase) and a the
amplitude as a fraction of full scale; ``round`` takes halves upwards. The values are the
network's outputs at those codes. A rectangular-window DFT (the sampling is coherent, so the
signal is exactly bin J with no leakage); DC is excluded; power per bin is two-sided (bins
1 … S/2 − 1 counted twice, the Nyquist bin once). Harmonics 2 … 10 are folded into 0 … S/2;
a bin reached by two harmonics counts once and a harmonic folded onto DC is left out.

- SINAD = signal / every other bin, dB;  THD = harmonics / signal, dB (negative);
- SFDR = signal / the largest other bin, dB;  ENOB = (SINAD − 1.76 dB)/6.02 dB.

These follow IEEE Std 1241 (sine-wave testing with coherent sampling) with two differences:
no noise is added (the outputs are the static transfer's, so "noise" here is quantisation and
static nonlinearity only) and THD stops at the 10th harmonic.
"""

from __future__ import annotations

import numpy as np

HARMONICS = range(2, 11)
"""Harmonic orders counted in THD."""

METRICS = ("sfdr_db", "thd_db", "sinad_db", "enob")
"""The figures :func:`spectrum_figures` returns, in order."""


def sine_codes(bits: int, samples: int, cycles: int, amplitude: float) -> np.ndarray:
    """The test sine's codes, shape (samples,), int."""
    c_mid = (2**bits - 1) / 2
    n = np.arange(samples)
    x = c_mid + amplitude * c_mid * np.sin(2 * np.pi * cycles * n / samples)
    return np.clip(np.floor(x + 0.5), 0, 2**bits - 1).astype(np.int64)


def harmonic_bins(samples: int, cycles: int) -> np.ndarray:
    """Distinct bins of harmonics 2 … 10 folded into 0 … samples/2, DC left out."""
    b = (np.array(HARMONICS) * cycles) % samples
    b = np.where(b > samples // 2, samples - b, b)
    return np.unique(b[(b != 0) & (b != cycles)])


def bin_powers(values: np.ndarray) -> np.ndarray:
    """Two-sided power of bins 0 … S/2 of ``values`` (..., S), V² (rectangular window)."""
    s = values.shape[-1]
    x = np.fft.rfft(values, axis=-1) / s
    p = np.abs(x) ** 2
    p[..., 1:(s + 1) // 2] *= 2.0
    return p


def spectrum_figures(values: np.ndarray, cycles: int) -> dict[str, np.ndarray]:
    """SFDR, THD, SINAD (dB) and ENOB (bits) of outputs ``values`` (..., S) at the test sine."""
    s = values.shape[-1]
    p = bin_powers(np.asarray(values, float))
    sig = p[..., cycles]
    others = p.copy()
    others[..., [0, cycles]] = 0.0
    harm = p[..., harmonic_bins(s, cycles)].sum(axis=-1)
    with np.errstate(divide="ignore"):
        sinad = 10 * np.log10(sig / others.sum(axis=-1))
        thd = 10 * np.log10(harm / sig)
        sfdr = 10 * np.log10(sig / others.max(axis=-1))
    return {"sfdr_db": sfdr, "thd_db": thd, "sinad_db": sinad, "enob": (sinad - 1.76) / 6.02}


def spectrum_db(values: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Bins 1 … S/2 (DC left out, as in the figures) and their power relative to the largest
    of them, dB (for plots)."""
    p = bin_powers(np.asarray(values, float))[1:]
    ref = np.max(p) if p.size else 1.0
    return np.arange(1, p.size + 1), 10 * np.log10(np.maximum(p, 1e-300) / ref)


def design_sine(design) -> tuple[np.ndarray, int]:
    """The design's test-sine codes and its cycles (``sine`` table, defaults filled in)."""
    from ..timing import sine_value

    cycles = int(sine_value(design, "cycles"))
    codes = sine_codes(design.bits, int(sine_value(design, "samples")), cycles,
                       float(sine_value(design, "amplitude")))
    return codes, cycles


PERCENTILES = (5, 50, 95)
"""Percentiles of the Monte Carlo spectrum figures."""


def spectrum_trials(design, trials: int, seed: int) -> dict[str, np.ndarray]:
    """Spectrum figures of ``trials`` Monte Carlo boards (the statistics' sampling and seed),
    each shape (trials,)."""
    from ..montecarlo import _feedback_factor, sample_trials
    from ..solve import solve
    from ..topologies import build

    codes, cycles = design_sine(design)
    net = build(design)
    wanted, where = np.unique(codes, return_inverse=True)
    ohms = sample_trials(design, seed, 0, trials)
    v = solve(net, ohms=ohms, codes=wanted).vout * _feedback_factor(net, ohms)
    return spectrum_figures(np.asarray(v)[..., where], cycles)


def percentiles(figures: dict[str, np.ndarray]) -> dict[str, dict[str, float]]:
    """``{metric: {"p5": …, "p50": …, "p95": …}}`` of Monte Carlo figures."""
    return {k: {f"p{q}": float(np.percentile(v, q)) for q in PERCENTILES}
            for k, v in figures.items()}
