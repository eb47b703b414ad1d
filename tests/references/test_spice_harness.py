"""The ngspice harness itself, on hand-built networks solved by hand (exact fractions)."""

from __future__ import annotations

import math
from fractions import Fraction as F

import numpy as np
import pytest

from rungwise.core import Design, evaluate
from rungwise.core.network import GROUND, Network, Output, Resistor, SwitchedLeg, binary_decoder

from . import spice

pytestmark = pytest.mark.ngspice


def _loaded_divider(load: float) -> Network:
    """2 V source; 3 Ω to node a; 7 Ω a→ground; one leg of 5 Ω from a, switched to the source
    (1 Ω switch) or to ground (2 Ω switch); output at a."""
    return Network(
        fixed={GROUND: 0.0, "s": 2.0}, source="s",
        resistors=[Resistor("r1", "r", "s", "a", 3.0), Resistor("r2", "r", "a", GROUND, 7.0)],
        legs=[SwitchedLeg("leg0", "leg", "a", "s", GROUND, 5.0, 1.0, 2.0)],
        n_codes=2, decode=binary_decoder([0]), output=Output("node", "a", load_ohms=load))


def _by_hand_divider(code: int, load: F) -> tuple[F, F, F]:
    """(vout, iref, rout) by nodal analysis of :func:`_loaded_divider`."""
    g_leg = F(1, 6) if code else F(1, 7)
    g = F(1, 3) + F(1, 7) + g_leg
    v_oc = (F(2, 3) + (2 * g_leg if code else 0)) / g
    rout = 1 / g
    v = v_oc * load / (load + rout)
    iref = (2 - v) / 3 + ((2 - v) * g_leg if code else 0)
    return v, iref, rout


def test_loaded_divider_matches_hand_analysis():
    # by hand: nodal analysis with exact fractions (independent of the engine)
    res = spice.simulate(_loaded_divider(11.0))
    for code in (0, 1):
        v, i, r = _by_hand_divider(code, F(11))
        assert res.vout[code] == pytest.approx(float(v), rel=1e-13)
        assert res.iref[code] == pytest.approx(float(i), rel=1e-13)
        assert res.rout[code] == pytest.approx(float(r), rel=1e-13)


def test_virtual_ground_matches_hand_analysis():
    # by hand: 2 V → 4 Ω → x; x → 8 Ω → ground; leg 8 Ω from x steered to the summing node
    # (code 1) or ground (code 0); x = 1 V either way; feedback 5 Ω
    net = Network(
        fixed={GROUND: 0.0, "s": 2.0, "sum": 0.0}, source="s",
        resistors=[Resistor("r1", "r", "s", "x", 4.0), Resistor("r2", "r", "x", GROUND, 8.0)],
        legs=[SwitchedLeg("leg0", "leg", "x", "sum", GROUND, 8.0, 0.0, 0.0)],
        n_codes=2, decode=binary_decoder([0]),
        output=Output("virtual-ground", "sum", feedback_ohms=5.0))
    res = spice.simulate(net)
    np.testing.assert_allclose(res.vout, [0.0, -5 / 8], rtol=1e-13, atol=1e-15)
    np.testing.assert_allclose(res.iref, [0.25, 0.25], rtol=1e-13)
    assert math.isinf(res.rout[0])  # nothing reaches the summing node at code 0
    assert res.rout[1] == pytest.approx(32 / 3, rel=1e-13)  # 8 + 4 ‖ 8


def test_buffered_output_applies_gain_and_ignores_load():
    net = _loaded_divider(11.0)
    net.output = Output("node", "a", buffered=True, gain=-3.0, load_ohms=11.0)
    res = spice.simulate(net)
    for code in (0, 1):
        v, i, r = _by_hand_divider(code, F(10**30))  # unloaded
        assert res.vout[code] == pytest.approx(-3 * float(v), rel=1e-13)
        assert res.iref[code] == pytest.approx(float(i), rel=1e-13)
        assert res.rout[code] == pytest.approx(float(r), rel=1e-13)


def test_overrides_replace_part_values():
    net = _loaded_divider(math.inf)
    plain = spice.simulate(net, ohms={"r2": 1e30})  # r2 practically removed
    # by hand: code 0 → a = 2·7/(3 + 7) with only r1 and the grounded leg (5 + 2 Ω)
    assert plain.vout[0] == pytest.approx(1.4, rel=1e-12)
    with pytest.raises(KeyError, match="no part 'bogus'"):
        spice.simulate(net, ohms={"bogus": 1.0})


def test_sweep_agrees_with_copies():
    # the two ngspice set-ups must give the same numbers (the sweep models switches as behavioural
    # conductances; the copies use plain resistors)
    design = Design(topology="r2r-voltage", bits=5, vref=1.8, unit_r=5e3, ron_high=30.0,
                    ron_low=15.0, ref_r=10.0, load_r=20e3)
    net = evaluate(design).network
    copies = spice.simulate(net)
    sweep = spice.simulate(net, method="sweep")
    for name in ("vout", "iref", "rout"):
        spice.assert_agree(getattr(sweep, name), getattr(copies, name), rtol=1e-11, what=name)


def test_helper_skips_or_fails_without_ngspice(monkeypatch):
    monkeypatch.setattr(spice, "ngspice_path", lambda: None)
    monkeypatch.setenv("CI", "true")
    with pytest.raises(pytest.fail.Exception, match="CI=true"):
        spice.require_ngspice()
    monkeypatch.setenv("CI", "")
    with pytest.raises(pytest.skip.Exception):
        spice.require_ngspice()


def test_sweep_sees_every_code_step_at_twelve_bits():
    # one LSB of a 12-bit output is below ngspice's default relative tolerance (1e-3): the sweep
    # must still move to the new switch states at every point (tight tolerances in the netlist)
    design = Design(topology="binary-weighted", output="divider", bits=12, vref=2.5, unit_r=10e3,
                    ron_high=40.0, ron_low=25.0, ref_r=2.0, load_r=100e3)
    net = evaluate(design).network
    codes = np.arange(2000, 2100)  # across the carry into the MSB at 2048
    copies = spice.simulate(net, codes=codes)
    sweep = spice.simulate(net, codes=codes, method="sweep")
    for name in ("vout", "iref", "rout"):
        spice.assert_agree(getattr(sweep, name), getattr(copies, name), rtol=1e-9, what=name)
