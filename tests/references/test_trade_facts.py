"""Ideal networks against facts of the trade (common practice: no single published source)."""

from __future__ import annotations

import numpy as np
import pytest

from rungwise.core import Design, evaluate
from rungwise.core.solve import solve


def test_r2r_voltage_4bit_5v_figures():
    # common practice: 4-bit, 5 V voltage-mode R-2R: LSB 0.3125 V, 1011 → 3.4375 V, 1111 → 4.6875 V
    ev = evaluate(Design(topology="r2r-voltage", bits=4, vref=5.0, unit_r=10e3))
    assert ev.summary["ideal_lsb"] == pytest.approx(0.3125, rel=1e-15)
    assert ev.summary["lsb"] == pytest.approx(0.3125, rel=1e-12)
    assert ev.vout[1] - ev.vout[0] == pytest.approx(0.3125, rel=1e-12)
    assert ev.vout[0b1011] == pytest.approx(3.4375, rel=1e-12)
    assert ev.vout[0b1111] == pytest.approx(4.6875, rel=1e-12)


@pytest.mark.parametrize("bits", [1, 2, 3, 4, 6, 8, 11, 14])
def test_r2r_output_resistance_is_r_at_every_code(bits):
    # common practice: the voltage-mode R-2R ladder's Thevenin resistance is R for every code and N
    ev = evaluate(Design(topology="r2r-voltage", bits=bits, vref=1.0, unit_r=3300.0))
    assert ev.rout.shape == (2**bits,)
    np.testing.assert_allclose(ev.rout, 3300.0, rtol=1e-12)


@pytest.mark.parametrize("bits", [1, 2, 3, 5, 8, 12])
def test_current_mode_r2r_reference_sees_r_at_every_code(bits):
    # common practice: the inverted (current-mode) ladder loads the reference with R at every code,
    # since every leg ends at 0 V (summing node or ground): iref = Vref/R with ideal switches
    vref, r = 2.048, 6800.0
    ev = evaluate(Design(topology="r2r-current", bits=bits, vref=vref, unit_r=r))
    np.testing.assert_allclose(ev.iref, vref / r, rtol=1e-12)


def test_current_mode_r2r_leg_currents_halve_from_the_msb():
    # common practice: leg currents Vref/(2R), Vref/(4R) … Vref/(2^N R) from the MSB end; the
    # terminator carries the last Vref/(2^N R)
    bits, vref, r = 5, 5.0, 10e3
    ev = evaluate(Design(topology="r2r-current", bits=bits, vref=vref, unit_r=r))
    sol = solve(ev.network, keep_nodes=True)
    for k in range(bits):
        v_node = sol.node_voltages[f"n{k}"]
        np.testing.assert_allclose(v_node / (2 * r), vref / (2 ** (bits - k) * r), rtol=1e-12)
    np.testing.assert_allclose(sol.node_voltages["n0"] / (2 * r), vref / (2**bits * r), rtol=1e-12)


VOLTAGE_OUT = [
    ("r2r-voltage", "unbuffered", 1.0),
    ("r2r-voltage", "buffer", 1.0),
    ("binary-weighted", "terminated-divider", 1.0),
    ("binary-weighted", "summing-amp", -1.0),
    ("r2r-current", "transimpedance", -1.0),
]


@pytest.mark.parametrize(("topology", "output", "sign"), VOLTAGE_OUT)
@pytest.mark.parametrize("bits", [1, 4, 7])
def test_bit_k_alone_contributes_vref_over_2_to_the_n_minus_k(topology, output, sign, bits):
    # common practice: bit k alone gives Vref/2^(N−k) (MSB: Vref/2); inverting outputs negate it
    vref = 3.0
    ev = evaluate(Design(topology=topology, output=output, bits=bits, vref=vref, unit_r=10e3))
    for k in range(bits):
        assert ev.vout[1 << k] == pytest.approx(sign * vref / 2 ** (bits - k), rel=1e-12)
    # and the contributions add (superposition of a linear network)
    np.testing.assert_allclose(ev.vout, sign * vref * ev.codes / 2**bits, rtol=1e-12, atol=1e-15)


def test_binary_weighted_summing_amp_reference_current():
    # common practice: MSB resistor R, feedback R/2 → reference current Vref·c/(2^(N−1)·R);
    # N = 4, R = 10 kΩ, 5 V, code 1011 → 687.5 µA
    ev = evaluate(Design(topology="binary-weighted", output="summing-amp", bits=4, vref=5.0,
                         unit_r=10e3))
    assert ev.iref[0b1011] == pytest.approx(687.5e-6, rel=1e-12)
    np.testing.assert_allclose(ev.iref, 5.0 * ev.codes / (8 * 10e3), rtol=1e-12, atol=1e-18)


def test_load_on_r2r_is_a_pure_gain_error():
    # common practice: a resistive load on an R-2R output gives Vth·RL/(RL + R) — endpoint INL 0;
    # N = 4, R = 10 kΩ, 5 V, code 1011: RL = 10 kΩ → 1.71875 V, RL = 100 kΩ → 3.125 V
    base = Design(topology="r2r-voltage", bits=4, vref=5.0, unit_r=10e3)
    for load, expected in ((10e3, 1.71875), (100e3, 3.125)):
        ev = evaluate(base.replace(load_r=load))
        assert ev.vout[0b1011] == pytest.approx(expected, rel=1e-12)
        np.testing.assert_allclose(ev.inl_endpoint, 0.0, atol=1e-12)
