"""Power, thermal noise and settling figures, checked against physics and worked values."""

from __future__ import annotations

import math

import numpy as np
import pytest

from rungwise.core import Design, evaluate
from rungwise.core.metrics.noise import johnson_density, output_density
from rungwise.core.metrics.power import FROM_AMPLIFIER, element_powers, worst_case
from rungwise.core.metrics.settling import settling_time
from rungwise.core.solve import solve
from rungwise.core.topologies import build

CASES = [
    Design(bits=5, vref=5.0, unit_r=10e3),
    Design(bits=6, vref=3.3, unit_r=4.7e3, ron_high=40.0, ron_low=25.0, ref_r=2.0, load_r=47e3),
    Design(topology="r2r-voltage", output="buffer", bits=5, vref=-2.5, ron_high=10.0, ron_low=90.0),
    Design(topology="r2r-current", bits=5, vref=5.0, ron_high=30.0, ron_low=20.0, ref_r=1.0),
    Design(topology="binary-weighted", output="divider", bits=5, vref=5.0, ron_high=15.0),
    Design(topology="binary-weighted", output="terminated-divider", bits=5, ref_r=3.0, load_r=1e5),
    Design(topology="binary-weighted", output="summing-amp", bits=5, ron_low=12.0, ref_r=1.0),
]


@pytest.mark.parametrize("design", CASES, ids=lambda d: f"{d.topology}-{d.output}")
def test_power_is_conserved_at_every_code(design):
    # common practice (Tellegen / energy conservation): the reference delivers Vref·Iref, dissipated
    # in every resistor, switch on-resistance, ref_r and resistive load; the feedback resistor is
    # fed by the amplifier and is left out of the sum
    net = build(design)
    codes = np.arange(net.n_codes)
    sol = solve(net, keep_nodes=True)
    volts = {k: np.broadcast_to(v, codes.shape) for k, v in sol.node_voltages.items()}
    elems = element_powers(net, net.decode(codes).astype(bool), volts, sol.vout)
    fed = sum(p for name, (_, p, _) in elems.items() if name not in FROM_AMPLIFIER)
    np.testing.assert_allclose(fed, design.vref * sol.iref, rtol=1e-9, atol=1e-18)
    assert all(np.all(p >= 0) for _, p, _ in elems.values())
    assert sum(k.startswith("switch:") for k in elems) == len(net.legs)
    if design.ref_r:
        assert "ref_r" in elems


def test_voltage_ladder_power_worked_values():
    # COMP (shared reference values): N = 4, R = 10 kΩ, 5 V, code 1000 → 0.625 mW in all,
    # 312.5 µW of it in the MSB leg
    net = build(Design(bits=4, vref=5.0, unit_r=10e3))
    codes = np.array([8])
    sol = solve(net, codes=codes, keep_nodes=True)
    elems = element_powers(net, net.decode(codes).astype(bool), sol.node_voltages, sol.vout)
    assert sum(p[0] for _, p, _ in elems.values()) == pytest.approx(0.625e-3, rel=1e-12)
    assert elems["leg3"][1][0] == pytest.approx(312.5e-6, rel=1e-12)


def test_current_ladder_draws_vref_squared_over_r_at_every_code():
    # COMP (shared reference values): the reference sees R at every code → Vref²/R = 2.5 mW
    _, totals = worst_case(build(Design(topology="r2r-current", bits=6, vref=5.0, unit_r=10e3)))
    assert totals["ref_power_max"] == pytest.approx(2.5e-3, rel=1e-12)
    assert totals["balance_error_max"] < 1e-15


@pytest.mark.parametrize("design", CASES, ids=lambda d: f"{d.topology}-{d.output}")
def test_worst_case_matches_a_brute_force_over_codes(design):
    net = build(design)
    elements, totals = worst_case(net)
    codes = np.arange(net.n_codes)
    sol = solve(net, keep_nodes=True)
    drive = net.decode(codes).astype(bool)
    elems = element_powers(net, drive, sol.node_voltages, sol.vout)
    assert sorted(e.name for e in elements) == sorted(elems)
    legs = {f"switch:{leg.part_id}": col for col, leg in enumerate(net.legs)}
    for e in elements:
        kind, p, i = elems[e.name]
        assert e.kind == kind
        assert e.power_max == pytest.approx(p.max(), rel=1e-12, abs=1e-300)
        assert p[e.power_code] == pytest.approx(p.max(), rel=1e-12, abs=1e-300)
        assert e.current_max == pytest.approx(np.max(np.abs(i)), rel=1e-12)
        if kind == "switch":
            d = drive[:, legs[e.name]]
            assert e.source_max == pytest.approx(max(np.max(np.where(d, i, 0.0)), 0.0), rel=1e-12)
            assert e.sink_max == pytest.approx(max(np.max(np.where(d, 0.0, i)), 0.0), rel=1e-12)
    total = sum(p for _, p, _ in elems.values())
    assert totals["power_total_max"] == pytest.approx(total.max(), rel=1e-12)
    assert total[totals["power_total_max_code"]] == pytest.approx(total.max(), rel=1e-12)


def test_switch_source_and_sink_currents():
    # a lone leg driven high sources Vref/(R_leg + ron + rest); the MSB switch of a ladder at code
    # 2^(N−1) sources what flows into the MSB leg
    d = Design(bits=3, vref=4.0, unit_r=10e3, ron_high=50.0, ron_low=50.0)
    net = build(d)
    elements, _ = worst_case(net)
    sw = {e.name: e for e in elements if e.kind == "switch"}
    assert set(sw) == {"switch:leg0", "switch:leg1", "switch:leg2"}
    codes = np.arange(net.n_codes)
    sol = solve(net, keep_nodes=True)
    v = sol.node_voltages["n2"]
    i_msb = (4.0 - v) / (20e3 + 50.0)
    driven = (codes >> 2) & 1 == 1
    assert sw["switch:leg2"].source_max == pytest.approx(np.max(i_msb[driven]), rel=1e-12)
    assert sw["switch:leg2"].sink_max == pytest.approx(np.max(v[~driven] / 20050.0), rel=1e-12)


def test_parts_entries_carry_power_and_code():
    ev = evaluate(Design(bits=4, vref=5.0, unit_r=10e3))
    leg3 = next(p for p in ev.parts if p["id"] == "leg3")
    assert leg3["ohms"] == 20e3
    assert leg3["power_code"] in range(16)
    assert leg3["power_max"] >= 312.5e-6
    assert ev.summary["power_total_max"] == pytest.approx(ev.summary["ref_power_max"], rel=1e-12)


@pytest.mark.parametrize(("kelvin", "expected"), [(300.0, 4.0704e-9), (290.0, 4.0019e-9)])
def test_johnson_nyquist_density_of_one_kilohm(kelvin, expected):
    # J. B. Johnson, Phys. Rev. 32, 97 (1928); H. Nyquist, Phys. Rev. 32, 110 (1928):
    # e_n = √(4kTR), k = 1.380649e-23 J/K (SI 2019)
    assert float(johnson_density(1e3, kelvin - 273.15)) == pytest.approx(expected, rel=2e-5)


def test_ladder_output_noise_is_that_of_r_and_scales_with_bandwidth():
    # common practice: an R-2R ladder's output resistance is R at every code → √(4kT·R)
    d = Design(bits=8, unit_r=10e3, temperature_c=26.85, bandwidth=1e4)
    ev = evaluate(d)
    e_n = math.sqrt(4 * 1.380649e-23 * 300.0 * 10e3)
    assert ev.summary["noise_density"] == pytest.approx(e_n, rel=1e-12)
    assert ev.summary["noise_rms"] == pytest.approx(e_n * 100.0, rel=1e-12)
    assert ev.summary["noise_rms_lsb"] == pytest.approx(e_n * 100.0 / (3.3 / 256), rel=1e-12)


def test_loaded_and_virtual_ground_noise():
    # a load in parallel lowers the Thevenin resistance; behind a virtual ground the noise is
    # 4kT·Rf·(1 + Rf/rout) (network noise current and the feedback resistor, through Rf)
    loaded = build(Design(bits=4, unit_r=10e3, load_r=10e3))
    np.testing.assert_allclose(output_density(loaded, np.array([10e3]), 27.0),
                               johnson_density(5e3, 27.0))
    va = build(Design(topology="r2r-current", bits=4, unit_r=10e3))
    np.testing.assert_allclose(output_density(va, np.array([10e3]), 27.0),
                               johnson_density(20e3, 27.0))


def test_settling_convention():
    # common practice: ½ LSB after a full-scale step of (2^N − 1) LSB → τ·ln(2(2^N − 1));
    # N = 8 → 6.2344 τ
    assert settling_time(1.0, 256) == pytest.approx(6.2344, abs=1e-4)
    ev = evaluate(Design(bits=8, unit_r=10e3, load_c=10e-12))
    assert ev.summary["settling_tau"] == pytest.approx(100e-9, rel=1e-12)
    assert ev.summary["settling_time"] == pytest.approx(623.44e-9, rel=1e-5)
    loaded = evaluate(Design(bits=8, unit_r=10e3, load_c=10e-12, load_r=10e3))
    assert loaded.summary["settling_tau"] == pytest.approx(50e-9, rel=1e-12)
    buffered = evaluate(Design(bits=8, output="buffer", load_c=10e-12))
    assert math.isnan(buffered.summary["settling_time"])


def test_drift_at_the_range_ends():
    # common practice: equal coefficients on every part leave a ratio-metric ladder unchanged;
    # legs and series from different batches (100 vs 25 ppm/K) give a code-dependent error
    same = evaluate(Design(bits=8, mismatch={"tempco": 100e-6}, board={"temp_low_c": -40,
                                                                       "temp_high_c": 125}))
    assert abs(same.summary["drift_gain_error_high"]) < 1e-12
    assert same.summary["drift_inl_high"] < 1e-9
    mixed = evaluate(Design(bits=8, mismatch={"tempco": 100e-6, "tempco_parts": {
        f"series{k}": 25e-6 for k in range(7)}}, board={"temp_low_c": -40, "temp_high_c": 125}))
    assert mixed.summary["drift_inl_high"] > 0.05
    assert mixed.summary["drift_inl_low"] > 0.05
    # R(T) = R0·(1 + α(T − T0)): a lone 10 kΩ at 100 ppm/K from 25 to 85 °C is 10.060 kΩ [common
    # practice]; a terminated binary divider with only the terminator drifting changes gain only
    from rungwise.core.metrics.drift import part_ohms_at

    d = Design(topology="binary-weighted", output="terminated-divider", bits=4, unit_r=10e3,
               mismatch={"tempco_parts": {"bit3": 100e-6}, "reference_c": 25.0})
    assert part_ohms_at(d, build(d), np.array([85.0]))["bit3"][0, 0] == pytest.approx(10.06e3)


def test_buffer_amplifier_and_rails():
    # common practice: a non-inverting stage of gain G with open-loop gain A gives G/(1 + G/A), and
    # its input offset appears at the output times G — a gain and offset error, no INL
    from rungwise.core.metrics import amplifier

    ev = evaluate(Design(bits=6, output="buffer", gain=2.0, vref=2.0))
    eff = amplifier.apply(ev.network, ev.vout, ev.rout, 1e-3, 1e3, 0.0, 3.5)
    expected = (ev.vout + 2.0 * 1e-3) / (1.0 + 2.0 / 1e3)
    clipped = expected > 3.5
    np.testing.assert_allclose(eff.vout[~clipped], expected[~clipped], rtol=1e-12)
    assert eff.codes_clipped == int(np.count_nonzero(clipped)) > 0
    assert np.all(eff.vout <= 3.5)
    summary = evaluate(Design(bits=6, output="buffer", gain=2.0, vref=2.0, board={
        "amp_offset": 1e-3, "amp_open_loop": 1e3, "rail_low": 0, "rail_high": 3.5})).summary
    assert summary["amp_codes_clipped"] == eff.codes_clipped
    assert "amp_offset_error" not in evaluate(Design(bits=6)).summary


def test_noise_folds_in_the_output_pole():
    """A single RC pole passes √(kT/C) of white resistor noise over all frequencies (common
    practice: kT/C noise; noise bandwidth π·f_c/2), and the brick-wall figure at B ≪ f_c."""
    wide = evaluate(Design(bits=8, unit_r=10e3, temperature_c=26.85, bandwidth=1e12,
                           load_c=100e-12))
    kt_c = math.sqrt(1.380649e-23 * 300.0 / 100e-12)
    assert wide.summary["noise_rms"] == pytest.approx(kt_c, rel=1e-3)
    narrow = evaluate(Design(bits=8, unit_r=10e3, temperature_c=26.85, bandwidth=10.0,
                             load_c=100e-12))
    assert narrow.summary["noise_rms"] == pytest.approx(narrow.summary["noise_density"]
                                                        * math.sqrt(10.0), rel=1e-6)
