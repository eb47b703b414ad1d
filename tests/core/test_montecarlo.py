"""Monte Carlo engine: the exact per-bit path against the general solver, seeds, chunks, cancel."""

from __future__ import annotations

import threading

import numpy as np
import pytest

from rungwise.core import Design, DesignError, evaluate, iter_monte_carlo, monte_carlo
from rungwise.core.montecarlo import MAX_GENERAL_CODES, plan_run
from rungwise.core.stats_result import PER_TRIAL
from rungwise.core.targets import Targets

EXACT_CASES = [
    Design(topology="r2r-voltage", bits=6),
    Design(topology="r2r-voltage", output="buffer", bits=5, gain=-2.0, load_r=5e3),
    Design(topology="r2r-voltage", bits=6, load_r=20e3, ron_high=30.0, ron_low=30.0),
    Design(topology="r2r-current", bits=6, mismatch={"distribution": "uniform", "tolerance": 0.05}),
    Design(topology="binary-weighted", output="divider", bits=5, build={"binary": "unit-array"}),
    Design(topology="binary-weighted", output="terminated-divider", bits=6, load_r=1e5),
    Design(topology="binary-weighted", output="summing-amp", bits=6, ron_high=50.0, ron_low=10.0),
    Design(topology="r2r-voltage", bits=7, build={"two_r": "two-units"},
           mismatch={"model": "array", "shared_tolerance": 0.02, "tolerance": 0.002}),
    Design(topology="r2r-voltage", bits=6, mismatch={"model": "on-chip"}),
]


@pytest.mark.parametrize("line", ["endpoint", "bestfit"])
@pytest.mark.parametrize("design", EXACT_CASES, ids=lambda d: f"{d.topology}-{d.output}")
def test_exact_path_equals_general_solver_on_the_same_samples(design, line):
    targets = Targets(inl_line=line)
    exact = monte_carlo(design, 400, seed=11, targets=targets, engine="exact")
    general = monte_carlo(design, 400, seed=11, targets=targets, engine="general")
    assert (exact.engine, general.engine) == ("exact", "general")
    for key in PER_TRIAL:
        if key == "monotonic":
            np.testing.assert_array_equal(exact.monotonic, general.monotonic)
        else:
            np.testing.assert_allclose(getattr(exact, key), getattr(general, key), rtol=1e-9,
                                       atol=1e-9, err_msg=key)
    np.testing.assert_allclose(exact.inl_envelope, general.inl_envelope, atol=1e-9)


def test_exact_path_sees_non_monotonic_boards_like_the_general_path():
    # a coarse binary divider at ±20 % is often non-monotonic: both engines must agree per board
    d = Design(topology="binary-weighted", bits=6, mismatch={"tolerance": 0.2})
    exact = monte_carlo(d, 500, seed=3, engine="exact")
    general = monte_carlo(d, 500, seed=3, engine="general")
    assert 0.05 < exact.yield_monotonic.value < 0.95
    np.testing.assert_array_equal(exact.monotonic, general.monotonic)


@pytest.mark.parametrize("design", [Design(topology="string", bits=5, load_r=1e5),
                                    Design(topology="segmented", bits=6)], ids=["string", "segmented"])
def test_tap_and_thermometer_networks_take_the_general_engine(design):
    ev = evaluate(design.replace(mismatch={"tolerance": 0.0}))
    r = monte_carlo(design.replace(mismatch={"tolerance": 0.0}), 3, seed=1)
    assert r.engine == "general"
    np.testing.assert_allclose(r.max_abs_inl_endpoint, ev.summary["max_abs_inl_endpoint"], atol=1e-12)
    with pytest.raises(DesignError, match="engine"):
        monte_carlo(design, 3, seed=1, engine="exact")


def test_unequal_switches_take_the_general_engine_and_exact_is_refused():
    d = Design(topology="r2r-voltage", bits=5, ron_high=40.0, ron_low=25.0)
    assert monte_carlo(d, 20, seed=1).engine == "general"
    with pytest.raises(DesignError, match="engine"):
        monte_carlo(d, 20, seed=1, engine="exact")


def test_zero_tolerance_reproduces_the_nominal_evaluation():
    d = Design(topology="r2r-voltage", bits=6, ron_high=40.0, ron_low=25.0, load_r=1e5,
               mismatch={"tolerance": 0.0})
    ev = evaluate(d)
    r = monte_carlo(d, 3, seed=0)
    np.testing.assert_allclose(r.max_abs_inl_endpoint, ev.summary["max_abs_inl_endpoint"], rtol=1e-12)
    np.testing.assert_allclose(r.max_abs_dnl, ev.summary["max_abs_dnl"], rtol=1e-12)
    np.testing.assert_allclose(r.gain_error, ev.summary["gain_error"], rtol=1e-9)
    np.testing.assert_allclose(r.offset, ev.summary["offset_error"], atol=1e-15)


def test_same_seed_same_result_whatever_the_chunking(monkeypatch):
    d = Design(topology="r2r-voltage", bits=6, ron_high=40.0, ron_low=25.0)
    whole = monte_carlo(d, 700, seed=42)
    monkeypatch.setattr("rungwise.core.montecarlo.GENERAL_BATCH_ELEMENTS", 64 * 37)
    chunked = list(iter_monte_carlo(d, 700, seed=42, reports=7))
    assert len(chunked) > 5
    assert chunked[-1].complete
    assert chunked[-1].seed == 42
    np.testing.assert_array_equal(whole.max_abs_dnl, chunked[-1].max_abs_dnl)
    other = monte_carlo(d, 700, seed=43)
    assert not np.array_equal(whole.max_abs_dnl, other.max_abs_dnl)


def test_partial_results_grow_and_stay_valid(monkeypatch):
    d = Design(topology="r2r-voltage", bits=5, ron_high=40.0, ron_low=25.0)
    monkeypatch.setattr("rungwise.core.montecarlo.GENERAL_BATCH_ELEMENTS", 32 * 100)
    assert plan_run(d, 2000).batch_trials == 100
    steps = list(iter_monte_carlo(d, 2000, seed=5, reports=10))
    done = [s.done for s in steps]
    assert done == sorted(done)
    assert done[-1] == 2000
    assert len(done) >= 10
    first = steps[0]
    assert first.max_abs_dnl.shape == (first.done,)
    assert not first.complete
    np.testing.assert_array_equal(first.max_abs_dnl, steps[-1].max_abs_dnl[:first.done])


def test_cancel_between_chunks_stops_with_a_partial_result(monkeypatch):
    d = Design(topology="r2r-voltage", bits=5, ron_high=40.0, ron_low=25.0)
    monkeypatch.setattr("rungwise.core.montecarlo.GENERAL_BATCH_ELEMENTS", 32 * 100)
    cancel = threading.Event()
    seen = []
    for r in iter_monte_carlo(d, 5000, seed=1, cancel=cancel, reports=50):
        seen.append(r)
        cancel.set()
    assert seen[-1].cancelled
    assert not seen[-1].complete
    assert seen[-1].done < 5000


def test_seed_is_drawn_and_kept_when_omitted():
    d = Design(bits=4)
    r = monte_carlo(d, 50)
    again = monte_carlo(d, 50, seed=r.seed)
    np.testing.assert_array_equal(r.max_abs_inl_bestfit, again.max_abs_inl_bestfit)
    assert r.to_dict()["seed"] == r.seed


@pytest.mark.parametrize(("trials", "seed", "field"), [(0, 1, "trials"), (10**8, 1, "trials"),
                                                        (2.5, 1, "trials"), (10, -1, "seed"),
                                                        (10, "x", "seed")])
def test_bad_run_settings_are_named(trials, seed, field):
    with pytest.raises(DesignError) as info:
        monte_carlo(Design(bits=4), trials, seed)
    assert info.value.field == field


def test_yields_use_the_limits_and_are_judged_per_board():
    d = Design(topology="binary-weighted", bits=6, mismatch={"tolerance": 0.05})
    r = monte_carlo(d, 3000, seed=9, targets=Targets(max_dnl_lsb=0.3, max_inl_lsb=0.4))
    assert r.yield_dnl.value == pytest.approx(np.mean(r.max_abs_dnl <= 0.3))
    assert r.yield_inl.value == pytest.approx(np.mean(r.max_abs_inl_endpoint <= 0.4))
    both = r.monotonic & (r.max_abs_dnl <= 0.3) & (r.max_abs_inl_endpoint <= 0.4)
    assert r.yield_all.value == pytest.approx(np.mean(both))
    p = r.yield_all.value
    assert r.yield_all.stderr == pytest.approx(np.sqrt(p * (1 - p) / 3000))
    loose = monte_carlo(d, 3000, seed=9, targets=Targets(max_dnl_lsb=5, max_inl_lsb=5, monotonic=False))
    assert loose.yield_all.value == 1.0
    assert loose.yield_monotonic.value == r.yield_monotonic.value < 1.0
    pct = r.percentiles["max_abs_dnl"]
    assert pct[1.0] <= pct[50.0] <= pct[99.0]
    assert pct[50.0] == pytest.approx(np.median(r.max_abs_dnl))


def test_inl_envelope_bands_are_ordered_and_pinned_at_the_ends():
    r = monte_carlo(Design(topology="r2r-voltage", bits=6), 2000, seed=2)
    env = r.inl_envelope
    assert env.shape == (3, 64)
    assert np.all(env[0] <= env[1])
    assert np.all(env[1] <= env[2])
    np.testing.assert_allclose(env[:, [0, -1]], 0.0, atol=1e-9)  # endpoint INL is 0 at both ends
    assert env[2, 32] > 0.05
    assert env[0, 32] < -0.05


def test_memory_stays_bounded_for_16_bits_and_1e5_trials():
    # planned before any work: batches bounded to GENERAL_BATCH_ELEMENTS (trial, code) pairs
    d = Design(bits=16, ron_high=40.0, ron_low=25.0)
    plan = plan_run(d, 100_000)
    assert plan.engine == "general"
    assert plan.batch_trials * plan.n_codes <= 1 << 20
    assert plan.envelope_trials * plan.envelope_codes.size <= 1 << 22
    assert plan.n_batches == -(-100_000 // plan.batch_trials)
    exact = plan_run(Design(bits=24), 100_000)
    assert exact.engine == "exact"
    assert exact.envelope_codes.size <= 4096
    too_big = Design(bits=MAX_GENERAL_CODES.bit_length(), ron_high=40.0, ron_low=25.0)
    with pytest.raises(DesignError, match="20 bits"):
        plan_run(too_big, 10)


def test_exact_engine_handles_24_bits():
    r = monte_carlo(Design(bits=24, mismatch={"tolerance": 0.001}), 200, seed=4)
    assert r.engine == "exact"
    assert r.envelope_codes[-1] == 2**24 - 1
    assert np.all(r.max_abs_dnl > 1.0)  # 0.1 % parts are far too loose for 24 bits


class _Countdown:
    """A cancel event that turns set at its ``n``-th check."""

    def __init__(self, n: int) -> None:
        self.calls, self.n = 0, n

    def is_set(self) -> bool:
        self.calls += 1
        return self.calls >= self.n


def test_a_trial_solved_in_pieces_gives_the_same_figures_and_cancels_inside_a_batch(monkeypatch):
    d = Design(topology="r2r-voltage", bits=8, ron_high=40.0, ron_low=25.0)
    whole = monte_carlo(d, 30, seed=3)
    monkeypatch.setattr("rungwise.core.montecarlo.GENERAL_PIECE_WORK", 64 * 16)
    plan = plan_run(d, 30)
    assert (plan.batch_trials, plan.piece_codes) == (1, 64)
    assert "64 codes at a time" in plan.describe()
    pieces = monte_carlo(d, 30, seed=3)
    for key in ("max_abs_inl_endpoint", "max_abs_inl_bestfit", "max_abs_dnl", "offset"):
        np.testing.assert_allclose(getattr(pieces, key), getattr(whole, key), rtol=1e-12)
    # checks per batch: one before it, one per piece (4), two between the linearity figures;
    # the 10th check is the second piece of the second batch
    cancel = _Countdown(10)
    runs = list(iter_monte_carlo(d, 30, seed=3, cancel=cancel))
    assert runs[-1].cancelled
    assert runs[-1].done == 1
    assert cancel.calls == 10
