"""Properties that hold for every design (hypothesis; a modest number of examples)."""

from __future__ import annotations

import numpy as np
from hypothesis import example, given, settings
from hypothesis import strategies as st

from rungwise.core import OUTPUTS_BY_TOPOLOGY, Design, evaluate
from rungwise.core.element_arrays import plain_equivalent
from rungwise.core.metrics import linearity
from rungwise.core.solve import solve

VARIANTS = [(t, o) for t, outs in OUTPUTS_BY_TOPOLOGY.items() for o in outs]
variants = st.sampled_from(VARIANTS)
FAST = settings(max_examples=25, deadline=None, derandomize=True)


def _ideal_step(topology: str, output: str, bits: int, vref: float, gain: float) -> float:
    """The ideal transfer's step, volts (common practice for each network)."""
    if output == "divider":
        return vref / (2**bits - 1)
    step = vref / 2**bits
    if output == "buffer":
        return step * gain
    if output in ("summing-amp", "transimpedance"):
        return -step
    return step


@FAST
@given(variant=variants, bits=st.integers(1, 16), vref=st.floats(0.1, 50.0),
       unit_r=st.floats(100.0, 1e6), gain=st.floats(0.5, 4.0))
@example(variant=("r2r-voltage", "buffer"), bits=16, vref=5.0, unit_r=10e3, gain=2.0)
@example(variant=("binary-weighted", "divider"), bits=16, vref=3.3, unit_r=1e3, gain=1.0)
@example(variant=("r2r-current", "transimpedance"), bits=16, vref=1.0, unit_r=1e4, gain=1.0)
@example(variant=("binary-weighted", "summing-amp"), bits=1, vref=2.0, unit_r=1e4, gain=1.0)
def test_ideal_network_reproduces_the_ideal_transfer(variant, bits, vref, unit_r, gain):
    # common practice: an ideal network (no switch or reference resistance, open output) gives
    # vout = code × ideal step for every code, N = 1 … 16
    topology, output = variant
    ev = evaluate(Design(topology=topology, output=output, bits=bits, vref=vref, unit_r=unit_r,
                         gain=gain))
    step = _ideal_step(topology, output, bits, vref, gain)
    np.testing.assert_allclose(ev.vout, step * ev.codes, rtol=1e-10, atol=1e-12 * abs(step))
    np.testing.assert_allclose(ev.inl_endpoint, 0.0, atol=1e-8)
    np.testing.assert_allclose(ev.dnl, 0.0, atol=1e-8)
    assert abs(ev.summary["lsb"] / step - 1) < 1e-10


transfers = st.integers(2, 64).flatmap(
    lambda n: st.lists(st.floats(-0.45, 0.45), min_size=n, max_size=n)
).map(lambda err: np.arange(len(err), dtype=float) + np.array(err))


@FAST
@given(v=transfers, offset=st.floats(-1e3, 1e3), gain=st.floats(1e-3, 1e3))
def test_inl_dnl_unchanged_by_offset_and_positive_gain(v, offset, gain):
    # IEEE Std 1658 definitions (from memory): INL and DNL are in LSB, so V → a + b·V (b > 0)
    # leaves them unchanged; endpoint INL(c) = Σ_{i<c} DNL(i)
    w = offset + gain * v
    tol = 1e-9
    np.testing.assert_allclose(linearity.inl_endpoint(w), linearity.inl_endpoint(v), atol=tol)
    np.testing.assert_allclose(linearity.inl_bestfit(w), linearity.inl_bestfit(v), atol=tol)
    np.testing.assert_allclose(linearity.dnl(w), linearity.dnl(v), atol=tol)
    assert linearity.monotonic(w) == linearity.monotonic(v)
    steps = linearity.dnl(v)
    np.testing.assert_allclose(linearity.inl_endpoint(v)[1:], np.cumsum(steps), atol=1e-9)


@FAST
@given(variant=variants, bits=st.integers(1, 8),
       ron=st.one_of(st.just(0.0), st.floats(1e-3, 200.0)),
       load=st.sampled_from([np.inf, 2e3, 1e5]), seed=st.integers(0, 2**16),
       n_trials=st.sampled_from([None, 1, 3]))
def test_superposition_path_equals_general_path(variant, bits, ron, load, seed, n_trials):
    # two exact methods must agree: superposition (one factorisation) and general elimination,
    # on scattered as-built values, and on Monte Carlo-shaped ohms arrays (n_trials, 1)
    topology, output = variant
    rng = np.random.default_rng(seed)
    base = Design(topology=topology, output=output, bits=bits, vref=1.25, unit_r=10e3,
                  ron_high=ron, ron_low=ron, load_r=load)
    if topology == "string":  # a 0 Ω tap has no plain-part equivalent
        base = base.replace(ron_high=ron + 100.0)
    nominal = {p["id"]: p["ohms"] for p in evaluate(base).parts if p["id"] != "feedback"}
    design = base.replace(parts={k: v * (1 + 0.01 * rng.standard_normal())
                                 for k, v in nominal.items()})
    net = evaluate(design).network
    ohms = None
    if n_trials is not None:
        ohms = {k: v * (1 + 0.02 * rng.standard_normal((n_trials, 1))) for k, v in nominal.items()}
    if net.groups or net.chains or net.selector is not None:
        # array-held elements take their own exact path; check it against the plain-part circuit
        sup = solve(net, ohms=ohms)
        gen = solve(plain_equivalent(net), ohms=ohms, method="general")
    else:
        sup = solve(net, ohms=ohms, method="superposition")
        gen = solve(net, ohms=ohms, method="general")
        assert (sup.method, gen.method) == ("superposition", "general")
    shape = (2**bits,) if n_trials is None else (n_trials, 2**bits)
    for name in ("vout", "rout", "iref"):
        a, b = getattr(sup, name), getattr(gen, name)
        assert a.shape == b.shape == shape
        np.testing.assert_array_equal(np.isinf(a), np.isinf(b))
        fin = np.isfinite(b)
        scale = np.max(np.abs(b[fin]), initial=0.0)
        np.testing.assert_allclose(a[fin], b[fin], rtol=1e-10, atol=1e-13 * scale, err_msg=name)
