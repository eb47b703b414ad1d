"""Monte Carlo statistics against outside sources (each named beside its check).

Monte Carlo estimates are compared with ≈ 4 standard errors; seeds are fixed.
"""

from __future__ import annotations

import math

import numpy as np
import pytest
from scipy.stats import multivariate_normal

from rungwise.core import Design, monte_carlo
from rungwise.core.metrics import linearity
from rungwise.core.mismatch import area_law_sigma, nominal_ohms, sample_ohms
from rungwise.core.montecarlo import sample_trials
from rungwise.core.solve import solve
from rungwise.core.topologies import build

from . import spice


def _midscale_dnl(design: Design, trials: int, seed: int) -> np.ndarray:
    """DNL at the midscale step of every trial, endpoint LSB; shape (trials,)."""
    n = design.bits
    net = build(design)
    ohms = sample_trials(design, seed, 0, trials)
    v = solve(net, ohms=ohms, codes=np.array([0, 2 ** (n - 1) - 1, 2 ** (n - 1), 2**n - 1])).vout
    if net.output.kind == "virtual-ground":
        v = v * ohms["feedback"] / net.output.feedback_ohms
    lsb = (v[:, 3] - v[:, 0]) / (2**n - 1)
    return (v[:, 2] - v[:, 1]) / lsb - 1.0


def _sd_band(x: np.ndarray) -> tuple[float, float]:
    """Sample standard deviation and its standard error √(1/(2(n − 1)))·s (normal data)."""
    s = float(np.std(x, ddof=1))
    return s, s / math.sqrt(2 * (x.size - 1))


def test_unit_element_array_midscale_dnl_sigma():
    # common practice for unit-element arrays (van de Plassche, CMOS Integrated A/D and D/A
    # Converters): σ(DNL_mid) = σ·√(2^N − 1); N = 8, σ = 1 % → 0.15969 LSB
    d = Design(topology="binary-weighted", output="divider", bits=8, build={"binary": "unit-array"},
               mismatch={"distribution": "gaussian", "tolerance": 0.03, "coverage_sigma": 3})
    s, se = _sd_band(_midscale_dnl(d, 20000, seed=21))
    expected = 0.01 * math.sqrt(2**8 - 1)
    assert expected == pytest.approx(0.15969, abs=1e-5)
    assert abs(s - expected) < 4 * se


def test_one_resistor_per_bit_midscale_dnl_sigma():
    # REFERENCE-VALUES.md [COMP]: weight 2^k(1 + e_k) → σ(DNL_mid) = σ·√(4^(N−1) + (4^(N−1) − 1)/3)
    # = 147.80·σ for N = 8. (Our DNL is in endpoint LSB, whose own error shifts the first-order
    # value to 147.51·σ — our derivation — well inside the 4-standard-error band used here.)
    sigma = 0.001
    d = Design(topology="binary-weighted", output="summing-amp", bits=8,
               mismatch={"tolerance": 3 * sigma, "coverage_sigma": 3})
    s, se = _sd_band(_midscale_dnl(d, 20000, seed=22))
    expected = sigma * math.sqrt(4**7 + (4**7 - 1) / 3)
    assert expected / sigma == pytest.approx(147.80, abs=0.01)
    assert abs(s - expected) < 4 * se


def test_area_law_pair_single_and_four_times_the_area():
    # Pelgrom, Duinmaijer, Welbers, "Matching properties of MOS transistors", IEEE JSSC 24(5), 1989:
    # σ(ΔR/R) = A_R/√(WL) for a pair, A_R/√(2WL) for one device; A_R = 1 %·µm, W = 2 µm, L = 20 µm
    a_r, w, length = 1e-8, 2e-6, 20e-6
    assert area_law_sigma(a_r, w, length, pair=True) == pytest.approx(0.1581e-2, rel=2e-4)
    assert area_law_sigma(a_r, w, length) == pytest.approx(0.1118e-2, rel=2e-4)
    assert area_law_sigma(a_r, 2 * w, 2 * length) == pytest.approx(area_law_sigma(a_r, w, length) / 2)
    # the same law through sampling: series resistors have value R (area W·L)
    small = Design(topology="r2r-voltage", bits=4, mismatch={"model": "on-chip"})
    big = Design(topology="r2r-voltage", bits=4, mismatch={"model": "on-chip", "unit_width": 4e-6,
                                                          "unit_length": 40e-6})
    n = 20000
    for design, single in ((small, 0.1118e-2), (big, 0.1118e-2 / 2)):
        net = build(design)
        ohms = sample_ohms(design, net, np.random.default_rng(31), n)
        nominal = nominal_ohms(design, net)
        e1 = ohms["series0"][:, 0] / nominal["series0"] - 1
        e2 = ohms["series1"][:, 0] / nominal["series1"] - 1
        s, se = _sd_band(e1)
        assert abs(s - single) < 4 * se
        s_pair, se_pair = _sd_band(e1 - e2)
        assert abs(s_pair - single * math.sqrt(2)) < 4 * se_pair


def test_unit_element_monotonic_probability_is_a_multivariate_normal_cdf():
    # REFERENCE-VALUES.md [COMP]: the carries' steps are jointly Gaussian with mean 1 LSB, variance
    # σ²(2^(k+1) − 1) and covariance −σ² between carries; P(monotonic) = P(all steps ≥ 0), evaluated
    # with scipy.stats.multivariate_normal (never a product of per-step probabilities)
    n_bits, sigma = 8, 0.04
    k = np.arange(n_bits)
    cov = np.full((n_bits, n_bits), -sigma**2)
    np.fill_diagonal(cov, sigma**2 * (2.0 ** (k + 1) - 1))
    expected = multivariate_normal(mean=-np.ones(n_bits), cov=cov).cdf(np.zeros(n_bits))
    d = Design(topology="binary-weighted", output="divider", bits=n_bits,
               build={"binary": "unit-array"}, mismatch={"tolerance": 3 * sigma})
    r = monte_carlo(d, 20000, seed=3)
    assert r.engine == "exact"
    y = r.yield_monotonic
    assert 0.85 < expected < 0.97
    assert abs(y.value - expected) < 4 * y.stderr


@pytest.mark.ngspice
@pytest.mark.parametrize("design", [
    Design(topology="binary-weighted", output="summing-amp", bits=4, ron_high=30.0, ron_low=12.0,
           build={"binary": "unit-array"}, mismatch={"tolerance": 0.02}),
    Design(topology="r2r-voltage", bits=4, ron_high=40.0, ron_low=25.0, load_r=20e3,
           build={"two_r": "two-units"}, mismatch={"distribution": "uniform", "tolerance": 0.05}),
    Design(topology="r2r-current", bits=4, mismatch={"model": "array", "shared_tolerance": 0.01}),
    Design(topology="string", bits=4, load_r=50e3, mismatch={"tolerance": 0.03}),
    Design(topology="segmented", bits=5, ron_high=20.0, ron_low=10.0, build={"two_r": "two-units"},
           mismatch={"tolerance": 0.02}),
], ids=["binary-units", "r2r-two-units", "r2r-current-array", "string", "segmented"])
def test_sampled_trials_resolved_by_ngspice_agree(design):
    # source: ngspice — the same sampled boards re-solved as netlists; every per-trial figure of
    # the Monte Carlo result must agree to 1e-9 relative
    trials, seed = 3, 77
    r = monte_carlo(design, trials, seed=seed)
    ohms = sample_trials(design, seed, 0, trials)
    net = build(design)
    for t in range(trials):
        ref = spice.simulate(net, ohms={pid: float(v[t, 0]) for pid, v in ohms.items()})
        v = ref.vout
        spice.assert_agree(r.offset[t:t + 1], v[:1], what="offset")
        figures = {
            "max_abs_inl_endpoint": np.max(np.abs(linearity.inl_endpoint(v))),
            "max_abs_inl_bestfit": np.max(np.abs(linearity.inl_bestfit(v))),
            "max_abs_dnl": np.max(np.abs(linearity.dnl(v))),
            "gain_error": linearity.endpoint_lsb(v) / net.ideal_lsb - 1.0,
        }
        for key, expected in figures.items():
            assert getattr(r, key)[t] == pytest.approx(expected, rel=1e-9, abs=1e-12), key
        assert bool(r.monotonic[t]) == bool(linearity.monotonic(v))
