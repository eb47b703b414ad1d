"""Resistor-string network: transfer, output resistance, loading, tap switch solved exactly."""

from __future__ import annotations

import dataclasses

import numpy as np
import pytest

from rungwise.core import Design, DesignError, evaluate
from rungwise.core.element_arrays import plain_equivalent
from rungwise.core.network import GROUND, SwitchedLeg
from rungwise.core.selector import tap_table
from rungwise.core.solve import solve
from rungwise.core.topologies import build


@pytest.mark.parametrize("bits", [1, 3, 8])
def test_ideal_tap_k_gives_vref_k_over_2n(bits):
    # common practice (Johns & Martin, Analog Integrated Circuit Design, Nyquist-rate D/A
    # converters): tap k of a 2^N-resistor string gives Vref·k/2^N
    ev = evaluate(Design(topology="string", bits=bits, vref=2.5, unit_r=1e3))
    k = np.arange(2**bits)
    np.testing.assert_allclose(ev.vout, 2.5 * k / 2**bits, rtol=1e-13, atol=1e-15)
    assert ev.summary["monotonic"]
    assert ev.summary["n_resistors"] == 2**bits


@pytest.mark.parametrize(("bits", "ron"), [(4, 0.0), (6, 55.0)])
def test_output_resistance_k_times_rest_over_total(bits, ron):
    # common practice: a tap of the string sees k·R in parallel with (2^N − k)·R, plus the switch
    r = 4.7e3
    ev = evaluate(Design(topology="string", bits=bits, unit_r=r, ron_high=ron))
    k = np.arange(2**bits)
    np.testing.assert_allclose(ev.rout, k * (2**bits - k) * r / 2**bits + ron, rtol=1e-12)


def _loaded_string(bits=4):
    rng = np.random.default_rng(7)
    as_built = {f"string{i}": 1e4 * (1 + 0.02 * rng.standard_normal()) for i in range(2**bits)}
    return Design(topology="string", bits=bits, vref=3.3, unit_r=1e4, ron_high=120.0,
                  ref_r=35.0, load_r=50e3, parts=as_built)


def test_series_path_agrees_with_general_solver_and_sparse():
    net = build(_loaded_string())
    fast = solve(net)
    plain = solve(plain_equivalent(net), method="general")
    assert fast.method == "series-path"
    for name in ("vout", "rout", "iref"):
        np.testing.assert_allclose(getattr(fast, name), getattr(plain, name), rtol=1e-11)
    a, b = tap_table(net, {}, "series-path"), tap_table(net, {}, "sparse")
    assert b.method == "sparse"
    for name in ("v", "r", "h"):
        np.testing.assert_allclose(getattr(a, name), getattr(b, name), rtol=1e-10, atol=1e-12)


def test_load_bends_the_transfer_and_iref_follows():
    d = Design(topology="string", bits=5, vref=1.0, unit_r=1e3, load_r=20e3)
    ev = evaluate(d)
    n = 2**5
    k = np.arange(n)
    r_th = k * (n - k) * 1e3 / n
    v_oc = k / n
    v = v_oc * 20e3 / (20e3 + r_th)
    np.testing.assert_allclose(ev.vout, v, rtol=1e-12)
    # the reference feeds the string (1/(n·R)) plus its share k/n of the load current
    np.testing.assert_allclose(ev.iref, 1.0 / (n * 1e3) + (k / n) * v / 20e3, rtol=1e-12)
    assert ev.summary["max_abs_inl_endpoint"] > 0.1
    buffered = evaluate(d.replace(output="buffer"))
    np.testing.assert_allclose(buffered.vout, v_oc, rtol=1e-13, atol=1e-15)


def test_trials_match_one_at_a_time():
    d = _loaded_string(3)
    net = build(d.replace(parts={}))
    rng = np.random.default_rng(3)
    values = 1e4 * (1 + 0.01 * rng.standard_normal((5, 8)))
    batch = solve(net, ohms={f"string{i}": values[:, i:i + 1] for i in range(8)})
    assert batch.vout.shape == (5, 8)
    for t in range(5):
        one = solve(build(d.replace(parts={f"string{i}": values[t, i] for i in range(8)})))
        np.testing.assert_allclose(batch.vout[t], one.vout, rtol=1e-12)
        np.testing.assert_allclose(batch.iref[t], one.iref, rtol=1e-12)


def test_endpoint_inl_sigma_is_a_random_walk_bridge():
    # common practice (random-walk bridge): with independent resistors of relative σ, the endpoint
    # INL at tap k has σ·√(k(n − k)/n) LSB, n = 2^N − 1
    bits, sigma, trials = 5, 0.01, 20000
    net = build(Design(topology="string", bits=bits, vref=1.0))
    rng = np.random.default_rng(11)
    values = 1e4 * (1 + sigma * rng.standard_normal((trials, 2**bits)))
    sol = solve(net, ohms={f"string{i}": values[:, i:i + 1] for i in range(2**bits)})
    from rungwise.core.metrics.linearity import inl_endpoint

    inl = inl_endpoint(sol.vout)
    n = 2**bits - 1
    k = np.arange(1, n)
    expected = sigma * np.sqrt(k * (n - k) / n)
    np.testing.assert_allclose(inl[:, 1:n].std(axis=0), expected, rtol=0.04)


def test_tap_selector_must_be_alone_with_its_output():
    net = build(Design(topology="string", bits=2))
    bad = dataclasses.replace(net, legs=[SwitchedLeg("x", "leg", "t1", "ref", GROUND, 1.0, 0, 0)])
    with pytest.raises(Exception, match="tap selector"):
        solve(bad)


def test_string_part_ids_from_the_ground_end():
    with pytest.raises(DesignError, match="string8"):
        Design(topology="string", bits=3, parts={"string8": 1e3})
    ev = evaluate(Design(topology="string", bits=3, vref=8.0, parts={"string0": 2e4}))
    # string0 at the ground end doubled: the first tap above it sits at 2/9 of Vref
    assert ev.vout[1] == pytest.approx(8.0 * 2 / 9, rel=1e-13)


def test_monte_carlo_inl_spread_of_a_string_is_a_random_walk_bridge():
    # common practice (random-walk bridge), through the statistics engine: Gaussian parts of
    # ±1 % at 3σ; the 99th percentile of endpoint INL at tap k is 2.326·σ·√(k(n − k)/n) LSB
    from rungwise.core import monte_carlo
    from rungwise.core.grades import with_tolerance

    design = with_tolerance(Design(topology="string", bits=5, vref=1.0), 0.01)
    result = monte_carlo(design, 6000, seed=21)
    n = 2**5 - 1
    k = result.envelope_codes[1:n]
    expected = 2.326 * (0.01 / 3) * np.sqrt(k * (n - k) / n)
    np.testing.assert_allclose(result.inl_envelope[2, 1:n], expected, rtol=0.08)
    assert result.yield_monotonic.value == 1.0  # a string is monotonic on every board
