"""The yield decision rule: bounds, verdicts, the sequential test and early stopping."""

from __future__ import annotations

import math

import numpy as np
import pytest
from scipy import stats

from rungwise.core.yield_decision import (
    METHODS,
    SequentialYield,
    clopper_pearson_bounds,
    decide_yield,
    look_schedule,
    sprt_limits,
    wald_sprt,
    wilson_bounds,
)

CASES = [(0, 10), (3, 10), (10, 10), (990, 1000), (1000, 1000), (47, 50), (1, 1), (0, 1)]


@pytest.mark.parametrize(("k", "n"), CASES)
@pytest.mark.parametrize("alpha", [0.05, 0.025, 0.005])
@pytest.mark.parametrize(("ours", "scipy_method"), [
    # Clopper and Pearson 1934: exact binomial bounds = scipy's "exact" proportion_ci.
    (clopper_pearson_bounds, "exact"),
    # Wilson 1927: score bounds = scipy's "wilson" proportion_ci.
    (wilson_bounds, "wilson"),
])
def test_bounds_match_scipy_intervals(k: int, n: int, alpha: float, ours, scipy_method: str) -> None:
    # scipy.stats.binomtest(...).proportion_ci two-sided at 1 − 2α = one-sided α on each side.
    ref = stats.binomtest(k, n).proportion_ci(1 - 2 * alpha, method=scipy_method)
    lower, upper = ours(k, n, alpha)
    assert lower == pytest.approx(ref.low, abs=1e-12)
    assert upper == pytest.approx(ref.high, abs=1e-12)


def test_worked_values_zero_failures() -> None:
    # from memory: 10 good of 10 gives an exact 95 % two-sided interval 0.6915 … 1
    # (0.025^(1/10)); the Wilson 95 % upper bound for 0 of 10 is z²/(n + z²) = 0.2775.
    assert clopper_pearson_bounds(10, 10, 0.025)[0] == pytest.approx(0.6915029, abs=1e-7)
    assert wilson_bounds(0, 10, 0.025)[1] == pytest.approx(0.2775328, abs=1e-7)
    # Hanley and Lippman-Hand 1983 ("rule of three"): no failures in n → 95 % one-sided bound on
    # the failure rate ≈ 3/n.
    lower, _ = clopper_pearson_bounds(3000, 3000, 0.05)
    assert (1 - lower) * 3000 == pytest.approx(3.0, rel=0.01)


def test_no_failures_shows_the_one_sided_lower_bound() -> None:
    d = decide_yield(3000, 3000, 0.99)
    assert d.no_failures
    assert d.verdict == "meets"
    assert d.lower == pytest.approx(0.05 ** (1 / 3000))  # one-sided exact bound, Clopper–Pearson
    assert d.yield_text() == "≥ 99.9 %"  # 0.05^(1/3000) = 0.99900
    assert "±" not in d.text()
    assert "Clopper–Pearson" in d.method
    assert "95 %" in d.method


@pytest.mark.parametrize("method", ["clopper-pearson", "wilson"])
def test_verdicts(method: str) -> None:
    assert decide_yield(1000, 1000, 0.99, method=method).verdict == "meets"
    assert decide_yield(950, 1000, 0.99, method=method).verdict == "fails"
    d = decide_yield(99, 100, 0.99, method=method)
    assert d.verdict == "undecided"
    assert not d.meets
    assert d.lower < 0.99 <= d.upper
    # 100 of 100 is not enough for 99 % at 95 % confidence (0.05^(1/100) = 0.9705).
    assert decide_yield(100, 100, 0.99, method=method).verdict == "undecided"


def test_looks_split_the_error() -> None:
    one = decide_yield(2990, 3000, 0.99)
    six = decide_yield(2990, 3000, 0.99, looks=6)
    assert six.lower < one.lower
    assert six.upper > one.upper
    assert "6 looks" in six.method


def test_bad_input_is_refused() -> None:
    with pytest.raises(ValueError, match="passed"):
        decide_yield(11, 10, 0.9)
    with pytest.raises(ValueError, match="target"):
        decide_yield(1, 10, 1.5)
    with pytest.raises(ValueError, match="method"):
        decide_yield(1, 10, 0.5, method="guess")  # type: ignore[arg-type]


def _wald_lines(target: float, margin: float, alpha: float) -> tuple[float, float, float]:
    """Wald 1945 (and Sequential Analysis, 1947, ch. 5): for fraction defective p0' (accept) against
    p1' (reject), continue while −h0 + s·n < d_n < h1 + s·n, d_n the defectives so far."""
    p0d, p1d = 1 - (target + margin), 1 - (target - margin)
    g1, g2 = math.log(p1d / p0d), math.log((1 - p0d) / (1 - p1d))
    h0 = math.log((1 - alpha) / alpha) / (g1 + g2)
    h1 = math.log((1 - alpha) / alpha) / (g1 + g2)
    return h0, h1, g2 / (g1 + g2)


@pytest.mark.parametrize(("target", "margin"), [(0.99, 0.005), (0.9, 0.03)])
def test_sprt_matches_wald_acceptance_lines(target: float, margin: float) -> None:
    h0, h1, s = _wald_lines(target, margin, 0.05)
    for n in (10, 100, 400, 1500, 5000):
        for fails in range(0, int(0.2 * n) + 1):
            accept, reject = -h0 + s * n, h1 + s * n
            if min(abs(fails - accept), abs(fails - reject)) < 1e-9:
                continue
            want = "meets" if fails <= accept else "fails" if fails >= reject else "undecided"
            assert wald_sprt(n - fails, n, target, 0.95, margin).verdict == want, (n, fails)


def test_sprt_error_rates_within_walds_bound() -> None:
    # Wald 1945: the realised error rates satisfy α' ≤ α/(1 − β) at the two hypotheses.
    rng = np.random.default_rng(7)
    target, margin, alpha = 0.95, 0.02, 0.05
    for p, wrong in ((target - margin, "meets"), (target + margin, "fails")):
        errors = 0
        for _ in range(600):
            seq = SequentialYield(target, 20000, 0.95, "wald-sprt", margin=margin)
            d = seq.update(rng.random(20000) < p)
            assert d is not None
            errors += d.verdict == wrong
        bound = alpha / (1 - alpha)
        assert errors / 600 <= bound + 3 * math.sqrt(bound * (1 - bound) / 600)
    assert "Wald" in d.method


def test_sprt_limits_are_walds() -> None:
    # Wald 1945: A = ln((1 − β)/α), B = ln(β/(1 − α)).
    _, _, low, high = sprt_limits(0.99, 0.95, 0.005)
    assert high == pytest.approx(math.log(0.95 / 0.05))
    assert low == pytest.approx(math.log(0.05 / 0.95))


def test_look_schedule() -> None:
    assert look_schedule(1000, 100) == (100, 200, 400, 800, 1000)
    assert look_schedule(50, 100) == (50,)
    assert look_schedule(800, 100) == (100, 200, 400, 800)


@pytest.mark.parametrize("method", METHODS)
def test_sequential_does_not_depend_on_batches(method: str) -> None:
    rng = np.random.default_rng(3)
    boards = rng.random(5000) < 0.993
    whole = SequentialYield(0.99, 5000, method=method).update(boards)
    seq = SequentialYield(0.99, 5000, method=method)
    got = None
    for end in range(37, 5000 + 37, 37):
        got = seq.update(boards[:end])
        if got is not None:
            break
    assert got == whole


@pytest.mark.parametrize("method", ["clopper-pearson", "wilson"])
def test_early_stopping_errs_no_more_than_the_confidence_allows(method: str) -> None:
    """Seeded study of points near the target: an early decision that disagrees with the truth (and
    with a full run, which also decides right here at these distances from the target) happens
    no more often than 1 − confidence. Bonferroni over the looks; sources: Clopper and Pearson
    1934, Wilson 1927 (the bounds), Wald 1945 (stopping at planned looks)."""
    rng = np.random.default_rng(11)
    target, budget, runs = 0.99, 16000, 300
    for p in (0.985, 0.988, 0.992, 0.995):
        wrong = disagree = early = 0
        right = "meets" if p >= target else "fails"
        for _ in range(runs):
            boards = rng.random(budget) < p
            d = SequentialYield(target, budget, method=method).update(boards)
            assert d is not None
            full = decide_yield(int(boards.sum()), budget, target, method=method)
            wrong += d.verdict not in (right, "undecided")
            disagree += d.verdict != "undecided" and full.verdict != "undecided" and \
                d.verdict != full.verdict
            early += d.trials < budget
        allowed = 0.05 + 3 * math.sqrt(0.05 * 0.95 / runs)
        assert wrong / runs <= allowed, p
        assert disagree / runs <= allowed, p
        assert early > 0  # it does stop early
