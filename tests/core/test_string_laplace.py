"""The Laplace-domain solution of long resistor strings with node capacitance
(``core/metrics/string_laplace.py``), checked against the dense modal solver (the general exact
solver of ``transient.py``) and against closed forms."""

from __future__ import annotations

import threading

import numpy as np
import pytest

from rungwise.core.design import Design
from rungwise.core.evaluate import evaluate
from rungwise.core.metrics import string_laplace
from rungwise.core.metrics.glitch import solve_transitions, waveforms
from rungwise.core.timing import timing_of
from rungwise.core.topologies import build


def test_fixed_talbot_inverts_decaying_exponentials():
    """L⁻¹[1/(s + λ)] = e^(−λt) (Laplace transform table, common practice), by the fixed Talbot
    contour (Abate & Valkó, Int. J. Numer. Meth. Eng. 60, 2004) over 16 decades of λ·t."""
    t = np.geomspace(1e-3, 1e3, 61)
    s, w, fac = string_laplace.talbot(t)
    worst = 0.0
    for lam in np.geomspace(1e-5, 1e5, 41):
        f = fac * np.real(np.sum(w * np.exp(s * t[:, None]) / (s + lam), axis=1))
        worst = max(worst, float(np.max(np.abs(f - np.exp(-lam * t)))))
    assert worst < 5e-12


DESIGNS = [
    Design(topology="string", bits=5, unit_r=1e3, ron_high=200, load_c=2e-12,
           timing={"node_c": 1e-12, "rise": 2e-9, "fall": 2e-9, "skew": [0, 1e-9]}),
    Design(topology="string", bits=5, unit_r=1e3, ron_high=200, load_c=2e-12, load_r=2e4,
           ref_r=30, timing={"node_c": 5e-13, "rise": 4e-9, "fall": 4e-9}),
    Design(topology="string", output="buffer", gain=2, bits=5, unit_r=1e3, ron_high=200,
           timing={"node_c": 1e-12, "rise": 6e-9, "fall": 1e-9}),
    Design(topology="string", bits=5, unit_r=1e3, ron_high=200, load_c=2e-12,
           timing={"node_c": 1e-12, "rise": 6e-9, "fall": 1e-9}),
    Design(topology="string", bits=4, unit_r=1e3, ron_high=0, load_c=1e-12, load_r=1e4,
           timing={"node_c": 1e-12}),
    Design(topology="string", bits=5, unit_r=1e3, ron_high=200, load_c=2e-12,
           timing={"node_c": 1e-12, "rise": 1e-9, "fall": 5e-9, "skew": [0, 1e-9]}),
    Design(topology="string", bits=5, unit_r=1e3, ron_high=200, load_c=2e-12, load_r=2e4,
           ref_r=30, timing={"node_c": 5e-13, "rise": 1e-9, "fall": 4e-9}),
    Design(topology="string", bits=5, unit_r=1e3, ron_high=200, load_c=2e-12, load_r=2e4,
           timing={"node_c": 5e-13, "rise": 6e-9, "fall": 1e-9}),
    Design(topology="string", output="buffer", gain=2, bits=4, unit_r=1e3, ron_high=0,
           timing={"node_c": 1e-12, "rise": 1e-9, "fall": 6e-9}),
]
IDS = ["skewed", "loaded-ref_r", "buffered-break-first", "break-first", "ideal-switch-no-edges",
       "make-first", "loaded-make-first", "loaded-break-first", "buffered-ideal-make-first"]


@pytest.mark.parametrize("design", DESIGNS, ids=IDS)
def test_matches_the_dense_solver(design):
    """Every transition, the full-scale step and steps across several taps, both ways."""
    net, tm = build(design), timing_of(design)
    n = 2**design.bits
    codes = np.arange(1, n)
    fc = np.concatenate([codes - 1, [0, n - 1, 3, 9]])
    tc = np.concatenate([codes, [n - 1, 0, 9, 1]])
    fast = solve_transitions(net, tm, fc, tc, method="laplace")
    dense = solve_transitions(net, tm, fc, tc, method="dense")
    assert fast.reason is None
    assert fast.lsb == pytest.approx(dense.lsb, rel=1e-9)
    scale = np.max(np.abs(dense.impulse)) + 1e-30
    # the dense solver stands in 1 mΩ for an ideal tap switch and for tap 0's ground: 1e-7
    np.testing.assert_allclose(fast.impulse, dense.impulse, rtol=1e-6, atol=1e-9 * scale)
    np.testing.assert_allclose(fast.peak, dense.peak, rtol=1e-6, atol=1e-9 * np.max(dense.peak))
    np.testing.assert_allclose(fast.settling, dense.settling, rtol=1e-4)  # the stated tolerance
    t = np.linspace(0, 60e-9, 41)
    for a, b in ((7, 8), (0, n - 1), (9, 1)):
        got, got_sync = waveforms(net, tm, a, b, t, method="laplace")
        ref, ref_sync = waveforms(net, tm, a, b, t, method="dense")
        np.testing.assert_allclose(got, ref, rtol=1e-7, atol=1e-9 * abs(design.vref))
        np.testing.assert_allclose(got_sync, ref_sync, rtol=1e-7, atol=1e-9 * abs(design.vref))


def test_twelve_bit_string_solves_every_transition():
    """All 4,095 transitions of a 12-bit string with node capacitance and a load resistor; the
    net impulse obeys the first-moment identity (a step delayed by t_sw through a stable linear
    network moves the output's integral by −ΔV·t_sw; from memory, any signals-and-systems text)."""
    d = Design(topology="string", bits=12, unit_r=10, ron_high=200, load_c=2e-12, load_r=1e5,
               timing={"node_c": 1e-13, "rise": 2e-9, "fall": 2e-9, "skew": [0.5e-9] * 12})
    ev = evaluate(d)
    assert ev.dynamics.note is None
    assert ev.dynamics.sample == "every transition"
    v = ev.vout
    t_sw = 0.5e-9 + 1e-9
    np.testing.assert_allclose(ev.dynamics.glitch[1:], -np.diff(v) * t_sw, rtol=1e-9)
    settle = ev.dynamics.settling[1:]
    assert np.all(np.isfinite(settle))
    assert np.all(settle > t_sw)  # a 1-LSB step is outside the ½ LSB band until the switch
    assert ev.summary["settling_full_scale"] > np.max(settle)
    assert ev.summary["settling_worst"] == np.max(settle)


def test_past_the_horizon_nothing_leaves_the_band():
    """The energy bound: after ``horizon`` every transition's |ΔV| stays under ½ LSB."""
    d = Design(topology="string", bits=7, unit_r=100, ron_high=300, load_c=3e-12, load_r=2e4,
               timing={"node_c": 2e-13, "rise": 4e-9, "fall": 4e-9})
    net, tm = build(d), timing_of(d)
    st = string_laplace.StringTransitions(net, tm, np.array([0, 63, 127]), np.array([127, 64, 0]))
    half = abs(st.path.lsb()) / 2
    end = st.horizon(half)
    r = st.response(end * np.array([1.0, 1.5, 3.0, 10.0]))
    assert np.all(np.abs(r) < half)
    early = st.response(np.array([end / 1e4]))
    assert np.max(np.abs(early)) > half  # the bound is no trivial one here


def test_cancel_stops_the_work():
    d = Design(topology="string", bits=10, ron_high=200, load_c=1e-12, timing={"node_c": 1e-13})
    stop = threading.Event()
    stop.set()
    codes = np.arange(1, 1024)
    with pytest.raises(InterruptedError):
        solve_transitions(build(d), timing_of(d), codes - 1, codes, cancel=stop)


@pytest.mark.parametrize("timing", [{"node_c": 2e-13, "rise": 2e-9, "fall": 2e-9},
                                    {"node_c": 2e-13, "rise": 1e-9, "fall": 5e-9}],
                         ids=["together", "make-first"])
def test_alone_or_in_a_batch_the_same(timing):
    """A transition's figures do not depend on the batch it is solved in (the batch shares one
    time grid, so they agree to the stated tolerances, not to the last digit)."""
    d = Design(topology="string", bits=7, unit_r=100, ron_high=300, load_c=3e-12, load_r=2e4,
               timing=timing)
    net, tm = build(d), timing_of(d)
    codes = np.arange(1, 128)
    batch = solve_transitions(net, tm, codes - 1, codes)
    for c in (1, 64, 100, 127):
        one = solve_transitions(net, tm, np.array([c - 1]), np.array([c]))
        assert one.impulse[0] == pytest.approx(batch.impulse[c - 1], rel=1e-9)
        assert one.peak[0] == pytest.approx(batch.peak[c - 1], rel=1e-6)
        assert one.settling[0] == pytest.approx(batch.settling[c - 1], rel=1e-4)
