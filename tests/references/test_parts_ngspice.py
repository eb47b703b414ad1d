"""Real-part figures against ngspice: temperature drift (``tc1``, ``.temp``, ``.options tnom``) and
single-pole settling (a transient with the load capacitance).

Source of the expected values: ngspice, batch mode, through ``references/spice.py``.
"""

from __future__ import annotations

import numpy as np
import pytest

from rungwise.core import Design, evaluate
from rungwise.core.metrics.drift import drift
from rungwise.core.topologies import build

from . import spice

pytestmark = pytest.mark.ngspice


def _settled_at(t: np.ndarray, v: np.ndarray, final: float, band: float) -> float:
    """Last time |v − final| leaves ``band``, linearly interpolated between samples, seconds."""
    err = np.abs(v - final) - band
    i = int(np.flatnonzero(err > 0)[-1])
    return float(t[i] + (t[i + 1] - t[i]) * err[i] / (err[i] - err[i + 1]))


@pytest.mark.parametrize("design", [
    Design(bits=8, vref=5.0, unit_r=10e3, load_c=10e-12),
    Design(bits=6, vref=3.3, unit_r=33e3, series="E96", ron_high=50.0, ron_low=50.0, load_r=47e3,
           load_c=22e-12),
], ids=["ideal-switches", "snapped-loaded"])
def test_settling_time_matches_an_ngspice_transient(design):
    spice.require_ngspice()
    ev = evaluate(design)
    t_settle = ev.summary["settling_time"]
    net = build(design)
    t, v = spice.full_scale_step(net, design.load_c, 2.0 * t_settle, t_settle / 5000)
    final = float(ev.vout[-1])
    lsb = float(ev.summary["lsb"])
    got = _settled_at(t, v, final, lsb / 2)
    # ngspice transient vs τ·ln(2(2^N − 1)); within 1 % (the tolerance)
    assert got == pytest.approx(t_settle, rel=0.01)
    assert abs(v[-1] - final) < lsb / 4  # and stays settled


@pytest.mark.parametrize("design", [
    Design(bits=6, vref=2.5, unit_r=10e3, ron_high=40.0, ron_low=25.0, load_r=100e3,
           mismatch={"tempco": 100e-6, "reference_c": 25.0,
                     "tempco_parts": {f"series{k}": 25e-6 for k in range(5)}}),
    Design(topology="binary-weighted", output="terminated-divider", bits=5, vref=5.0, ref_r=10.0,
           mismatch={"tempco": 50e-6, "reference_c": 20.0,
                     "tempco_parts": {"bit4": -30e-6, "term": 200e-6}}),
], ids=["ladder-two-batches", "binary-mixed"])
@pytest.mark.parametrize("temp_c", [-40.0, 85.0])
def test_drifted_outputs_match_ngspice_tc1(design, temp_c):
    spice.require_ngspice()
    net = build(design)
    ours = drift(design, net, [temp_c]).vout[0]
    alpha = {p.part_id: design.mismatch["tempco_parts"].get(p.part_id, design.mismatch["tempco"])
             for p in net.parts}
    theirs = spice.simulate_at(net, np.arange(net.n_codes), alpha, temp_c,
                               design.mismatch["reference_c"])
    # ngspice: R(T) = R·(1 + tc1·(T − TNOM)) with .options tnom and .temp
    spice.assert_agree(ours, theirs, rtol=1e-9, what=f"vout at {temp_c} °C")
    assert not np.allclose(ours, evaluate(design).vout, rtol=1e-6)  # the drift is really there


@pytest.mark.parametrize("design", [
    Design(topology="r2r-current", bits=4, vref=5.0, unit_r=10e3, ron_high=30.0, ron_low=20.0),
    Design(topology="binary-weighted", output="summing-amp", bits=4, vref=2.5, unit_r=20e3,
           ron_low=50.0, ref_r=5.0),
], ids=["current-ladder", "summing-amp"])
def test_real_amplifier_matches_ngspice(design):
    # the summing node left free, the amplifier a controlled source with gain A and offset Vos
    spice.require_ngspice()
    from rungwise.core.metrics import amplifier

    ev = evaluate(design)
    net = ev.network
    eff = amplifier.apply(net, ev.vout, ev.rout, 2e-3, 2e4, -np.inf, np.inf)
    theirs = spice.simulate_real_amplifier(net, np.arange(net.n_codes), 2e-3, 2e4)
    spice.assert_agree(eff.vout, theirs, rtol=1e-9, what="vout with a real amplifier")
    if design.topology == "r2r-current":
        # the noise gain changes with the code, so the offset shows up as INL
        assert eff.inl_added > 1e-4
        assert eff.noise_gain[0] == 1.0
