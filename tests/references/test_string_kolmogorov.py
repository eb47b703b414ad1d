"""Endpoint-INL yield of a resistor string against the Kolmogorov distribution (scipy).

A string's endpoint INL at tap k is a discrete Gaussian bridge over n = 2^N − 1 elements, so
P(max |INL| ≤ ½ LSB) follows the distribution of a Brownian bridge's largest excursion
(Kolmogorov 1933; scipy.stats.kstwobign) with Siegmund's discrete-walk correction
ρ = −ζ(½)/√(2π) = 0.5825972 (D. Siegmund, Adv. Appl. Prob. 11, 1979) — both from memory.
"""

from __future__ import annotations

import math

import pytest
from scipy.stats import kstwobign

from rungwise.core import Design, monte_carlo

SIEGMUND_RHO = 0.5825971579390106
"""−ζ(½)/√(2π): the overshoot correction of a discrete Gaussian walk (from memory)."""


def kolmogorov_yield(bits: int, sigma: float, limit: float = 0.5) -> float:
    """P(max |endpoint INL| ≤ limit) of a string of 2^N elements with relative σ per element."""
    n = 2**bits - 1
    return float(kstwobign.cdf((limit + SIEGMUND_RHO * sigma) / (sigma * math.sqrt(n))))


@pytest.mark.parametrize(("sigma", "expected"), [(0.02, 0.9882), (0.03, 0.806)])
def test_string_endpoint_inl_yield_follows_kolmogorov(sigma, expected):
    # REFERENCE-VALUES.md [MEM/COMP]: N = 8 → 0.9882 at σ = 2 %, 0.806 at σ = 3 %
    assert kolmogorov_yield(8, sigma) == pytest.approx(expected, abs=6e-4)
    d = Design(topology="string", bits=8, mismatch={"tolerance": 3 * sigma, "coverage_sigma": 3})
    r = monte_carlo(d, 20000, seed=8)
    y = r.yield_inl
    assert abs(y.value - kolmogorov_yield(8, sigma)) < 0.01
    assert abs(y.value - kolmogorov_yield(8, sigma)) < 4 * y.stderr + 2e-3

