"""Segment-carry DNL spread of a unit-element segmented array (``lsb_section = "unit-array"``).

Outside fact (common practice; textbook Nyquist-rate DAC chapters such as Johns & Martin, Analog
Integrated Circuit Design): with units of relative spread σ, the step from code t·2^L − 1 to t·2^L
(all L binary bits off, segment t on) has DNL σ·√(2^(L+1) − 1).

Our first-order derivation of the exact value with DNL in endpoint LSB. Unit j has conductance
(1 − e_j)/u; Vout = Vref·G_on/G_all and V(0) = 0, so
DNL = (G_seg,t − G_bits)·(2^N − 1)/(G_all − G_term) − 1
    ≈ −Σ_seg,t e + Σ_bits e + a·Σ_(all but term) e,   a = 1/(2^N − 1).
The 2^L segment units carry −1 + a, the 2^L − 1 bit units 1 + a and the other 2^N − 2^(L+1)
units a, so Var = σ²·(2^(L+1) − 1 − a): the normalisation by the endpoint LSB takes away a.
"""

from __future__ import annotations

import math

import numpy as np
import pytest

from rungwise.core import Design
from rungwise.core.montecarlo import sample_trials
from rungwise.core.solve import solve
from rungwise.core.topologies import build


def _design(bits: int, lsb_bits: int, sigma: float) -> Design:
    return Design(topology="segmented", bits=bits, thermometer_bits=bits - lsb_bits, vref=1.0,
                  unit_r=1e3, build={"lsb_section": "unit-array"},
                  mismatch={"distribution": "gaussian", "tolerance": 3 * sigma,
                            "coverage_sigma": 3.0})


def _carry_dnl(design: Design, ohms: dict) -> np.ndarray:
    """DNL at every segment carry t·2^L − 1 → t·2^L, endpoint LSB; shape (trials, 2^M − 1)."""
    n, lsb_bits = design.bits, design.bits - design.thermometer_bits
    tops = np.arange(1, 2**design.thermometer_bits) * 2**lsb_bits
    codes = np.concatenate([[0], tops - 1, tops, [2**n - 1]])
    v = solve(build(design), ohms=ohms, codes=codes).vout
    lsb = (v[:, -1] - v[:, 0]) / (2**n - 1)
    k = tops.size
    return (v[:, 1 + k:1 + 2 * k] - v[:, 1:1 + k]) / lsb[:, None] - 1.0


def _expected(bits: int, lsb_bits: int) -> float:
    """σ_DNL/σ at a segment carry, first order, with the endpoint-LSB correction."""
    return math.sqrt(2 ** (lsb_bits + 1) - 1 - 1 / (2**bits - 1))


@pytest.mark.parametrize("lsb_bits", [1, 2, 3, 4])
def test_segment_carry_dnl_sigma(lsb_bits):
    # common practice (Johns & Martin, Nyquist-rate D/A converters): σ·√(2^(L+1) − 1).
    # Tolerance: 4 standard errors of a sample σ, s/√(2(T − 1)) = 0.5 % at T = 20,000 (Gaussian
    # to first order); the carries share units, and the RMS over them varies less than one
    # carry's σ, so the band is conservative. The endpoint-LSB correction at N = 8 is
    # √(1 − 1/(255·(2^(L+1) − 1))) − 1 ≥ −0.07 %, well inside; the O(σ²) terms are ~1e-6.
    sigma, trials, bits = 0.001, 20000, 8
    d = _design(bits, lsb_bits, sigma)
    steps = _carry_dnl(d, sample_trials(d, 40 + lsb_bits, 0, trials))
    per_carry = np.std(steps, axis=0, ddof=1)
    pooled = math.sqrt(np.mean(per_carry**2))
    se = pooled / math.sqrt(2 * (trials - 1))
    formula = sigma * math.sqrt(2 ** (lsb_bits + 1) - 1)
    assert abs(pooled - formula) < 4 * se
    assert np.all(np.abs(per_carry - formula) < 5 * se)
    assert abs(_expected(bits, lsb_bits) / math.sqrt(2 ** (lsb_bits + 1) - 1) - 1) < 7e-4


@pytest.mark.parametrize(("bits", "lsb_bits"), [(2, 1), (3, 1)])
def test_endpoint_lsb_correction_is_seen_at_few_bits(bits, lsb_bits):
    # our derivation (module docstring): at N = 2, L = 1 the carry σ is √(3 − 1/3)·σ, 5.7 % below
    # the textbook √3·σ (3.6 % at N = 3); 4 standard errors at T = 100,000 are 0.9 %
    sigma, trials = 0.001, 100000
    d = _design(bits, lsb_bits, sigma)
    steps = _carry_dnl(d, sample_trials(d, 7, 0, trials))
    s = math.sqrt(np.mean(np.var(steps, axis=0, ddof=1)))
    se = s / math.sqrt(2 * (trials - 1))
    assert abs(s - sigma * _expected(bits, lsb_bits)) < 4 * se
    assert abs(s - sigma * math.sqrt(2 ** (lsb_bits + 1) - 1)) > 8 * se


@pytest.mark.parametrize("lsb_bits", [1, 2, 3, 4])
@pytest.mark.parametrize("bits", [5, 7])
def test_linearised_carry_sigma_is_exact(bits, lsb_bits):
    # our derivation (module docstring) against the solver's own sensitivities: each unit of each
    # part moved by ±h in turn (one trial each), σ_lin² = σ²·Σ_units (∂DNL/∂e)², to 1e-7
    d = _design(bits, lsb_bits, 0.001)
    parts = build(d).parts
    h = 1e-5
    rows = 2 * len(parts)
    ohms = {}
    for i, p in enumerate(parts):
        unit = p.ohms * p.units  # all parallel (or single) here
        col = np.full((rows, 1), p.ohms)
        col[2 * i] = unit / (p.units - 1 + 1 / (1 + h))
        col[2 * i + 1] = unit / (p.units - 1 + 1 / (1 - h))
        ohms[p.part_id] = col
    steps = _carry_dnl(d, ohms)
    slope = (steps[0::2] - steps[1::2]) / (2 * h)  # per part, per carry: ∂DNL/∂e of one unit
    units = np.array([p.units for p in parts], dtype=float)
    sigma_lin = np.sqrt(units @ slope**2)
    np.testing.assert_allclose(sigma_lin, _expected(bits, lsb_bits), rtol=1e-7)
