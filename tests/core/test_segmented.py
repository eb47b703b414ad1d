"""Segmented network: thermometer segments joined to an R-2R section."""

from __future__ import annotations

import numpy as np
import pytest

from rungwise.core import Design, DesignError, evaluate
from rungwise.core.part_ids import segmented_ids
from rungwise.core.solve import solve
from rungwise.core.topologies import build, segmented


def test_ideal_2_plus_4_every_code_exact():
    # common practice (Johns & Martin, Analog Integrated Circuit Design, Nyquist-rate D/A
    # converters): 2 thermometer + 4 binary bits give Vref·k/2^6 at every code
    ev = evaluate(Design(topology="segmented", bits=6, thermometer_bits=2, vref=6.4, unit_r=2e3))
    np.testing.assert_allclose(ev.vout, 6.4 * np.arange(64) / 64, rtol=1e-13, atol=1e-14)
    assert ev.summary["n_resistors"] == 3 + 4 + 3 + 1


@pytest.mark.parametrize("m", [0, 1, 3, 5])
def test_output_resistance_is_r_over_2m(m):
    # common practice: R-2R section (R) in parallel with 2^M − 1 segments of R
    ev = evaluate(Design(topology="segmented", bits=5, thermometer_bits=m, unit_r=8e3))
    np.testing.assert_allclose(ev.rout, 8e3 / 2**m, rtol=1e-12)


def _as_built(m, bits=6, section="r2r"):
    rng = np.random.default_rng(5)
    d = Design(topology="segmented", bits=bits, thermometer_bits=m, vref=3.3, unit_r=1e4,
               ron_high=42.0, ron_low=23.0, ref_r=12.0, load_r=80e3,
               build={"lsb_section": section})
    from rungwise.core.topologies import part_ids

    ids = part_ids("segmented", d.output, bits, m, d.build)
    nominal = {p.part_id: p.ohms for p in build(d).parts}
    return d.replace(parts={i: nominal[i] * (1 + 0.01 * rng.standard_normal()) for i in ids})


@pytest.mark.parametrize("section", ["r2r", "unit-array"])
@pytest.mark.parametrize("m", [1, 2, 4, 6])
def test_grouped_segments_equal_plain_legs(m, section):
    d = _as_built(m, section=section)
    grouped = solve(build(d))
    plain = solve(segmented.build(d, grouped=False), method="general")
    for name in ("vout", "rout", "iref"):
        np.testing.assert_allclose(getattr(grouped, name), getattr(plain, name), rtol=1e-11)


@pytest.mark.parametrize(("section", "other"), [("r2r", "leg1"), ("unit-array", "bit1")])
def test_grouped_segments_equal_plain_legs_over_trials(section, other):
    d = _as_built(3, section=section).replace(parts={})
    nominal = {p.part_id: p.ohms for p in build(d).parts}
    rng = np.random.default_rng(9)
    ohms = {i: nominal[i] * (1 + 0.01 * rng.standard_normal((4, 1)))
            for i in [f"seg{k}" for k in range(7)] + [other]}
    grouped = solve(build(d), ohms=ohms)
    plain = solve(segmented.build(d, grouped=False), ohms=ohms, method="general")
    assert grouped.vout.shape == (4, 64)
    np.testing.assert_allclose(grouped.vout, plain.vout, rtol=1e-11)
    np.testing.assert_allclose(grouped.iref, plain.iref, rtol=1e-11)


def test_no_segments_is_the_r2r_ladder():
    base = dict(bits=5, vref=2.0, unit_r=1e4, ron_high=40.0, ron_low=25.0, load_r=1e5,
                parts={"leg2": 20.3e3, "series1": 9.9e3})
    a = evaluate(Design(topology="segmented", thermometer_bits=0, **base))
    b = evaluate(Design(topology="r2r-voltage", **base))
    np.testing.assert_allclose(a.vout, b.vout, rtol=1e-13)


def test_fully_thermometer_16_bits_solves_without_codes_times_legs():
    d = Design(topology="segmented", bits=16, thermometer_bits=16, vref=1.0, unit_r=1e3,
               parts={"seg40000": 1.01e3})
    ev = evaluate(d)
    assert ev.summary["n_resistors"] == 2**16
    # one 1 % high segment: the step it adds is 1/(1 + 0.01) of the others (to first order)
    assert ev.dnl[40000] == pytest.approx(-0.0099, abs=2e-4)
    assert abs(ev.dnl[12345]) < 1e-4


def test_thermometer_bits_range_is_named():
    with pytest.raises(DesignError, match=r"thermometer_bits.*from 0 to 4"):
        Design(topology="segmented", bits=4, thermometer_bits=5)
    assert Design(topology="r2r-voltage", bits=2, thermometer_bits=3).bits == 2


def test_part_ids_and_sizing_rule():
    ids = segmented_ids(5, 2)
    assert ids == ["seg0", "seg1", "seg2", "leg0", "leg1", "leg2", "series0", "series1", "term"]
    assert segmented_ids(3, 3) == [f"seg{i}" for i in range(7)] + ["term"]
    assert "Thevenin" in segmented.SIZING_RULE


def test_step_dnl_sigma_of_a_unit_element_thermometer_array():
    # common practice: in a unit-element segmented array the carry into segment t has
    # DNL σ = σ·√(2^(L+1) − 1) for L binary bits; with L = 0 (fully thermometer, 63 equal
    # segments and the ground leg) every step is one unit: σ·√(1 − 1/n) to first order, n = 63
    # (the mean error cancels in the endpoint LSB)
    sigma, trials = 0.002, 4000
    net = build(Design(topology="segmented", bits=6, thermometer_bits=6, vref=1.0, unit_r=1e4))
    rng = np.random.default_rng(13)
    ohms = {f"seg{i}": 1e4 * (1 + sigma * rng.standard_normal((trials, 1))) for i in range(63)}
    ohms["term"] = 1e4 * (1 + sigma * rng.standard_normal((trials, 1)))
    from rungwise.core.metrics.linearity import dnl

    steps = dnl(solve(net, ohms=ohms).vout)
    n = 63
    np.testing.assert_allclose(steps.std(axis=0).mean(), sigma * np.sqrt(1 - 1 / n), rtol=0.02)
    np.testing.assert_allclose(steps.std(axis=0), sigma * np.sqrt(1 - 1 / n), rtol=0.1)
