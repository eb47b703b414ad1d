"""The engine against ngspice (an independent circuit solver) at every code.

Source of the expected values: ngspice, batch mode, through ``references/spice.py``.
"""

from __future__ import annotations

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from rungwise.core import OUTPUTS_BY_TOPOLOGY, Design, evaluate
from rungwise.core.element_arrays import plain_equivalent
from rungwise.core.solve import solve
from rungwise.core.topologies import part_ids

from . import spice

pytestmark = pytest.mark.ngspice

VARIANTS = [(t, o) for t, outs in OUTPUTS_BY_TOPOLOGY.items() for o in outs]
RTOL = 1e-9
EXACT_METHOD = {"segmented": "general", "string": "series-path"}
"""Solver path of topologies whose array-held elements take their own exact path."""


def _as_built(topology: str, output: str, bits: int, seed: int) -> Design:
    """A design with every part scattered by about 1 % (seeded), unequal switch resistances, a
    reference with output resistance and a finite load."""
    base = Design(topology=topology, output=output, bits=bits, vref=2.5, unit_r=10e3,
                  ron_high=35.0, ron_low=12.0, ref_r=20.0, load_r=47e3, gain=2.0)
    rng = np.random.default_rng(seed)
    nominal = {p["id"]: p["ohms"] for p in evaluate(base).parts}
    assert set(nominal) == set(part_ids(topology, output, bits, base.thermometer_bits))
    parts = {pid: ohms * (1.0 + 0.01 * rng.standard_normal()) for pid, ohms in nominal.items()}
    return base.replace(parts=parts)


def _check(ev_like, ref: spice.SpiceResult) -> None:
    for name in ("vout", "iref", "rout"):
        spice.assert_agree(getattr(ev_like, name), getattr(ref, name), rtol=RTOL, what=name)


@pytest.mark.parametrize(("topology", "output"), VARIANTS)
def test_as_built_design_agrees_with_ngspice(topology, output):
    # source: ngspice — all 64 codes of a 6-bit as-built design, vout, iref and rout to 1e-9
    design = _as_built(topology, output, 6, seed=VARIANTS.index((topology, output)) + 1)
    ev = evaluate(design)
    assert ev.solution.method == EXACT_METHOD.get(topology, "general")
    ref = spice.simulate(ev.network)
    assert ref.codes.size == 64
    _check(ev, ref)
    assert not np.allclose(ev.vout, ev.codes * ev.summary["ideal_lsb"], rtol=1e-4)  # really non-ideal


@pytest.mark.parametrize(("topology", "output"), VARIANTS)
def test_nominal_ideal_design_agrees_with_ngspice(topology, output):
    # source: ngspice — ideal switches and reference, open output: the superposition path
    ev = evaluate(Design(topology=topology, output=output, bits=6, vref=5.0, unit_r=4.7e3, gain=1.5,
                         ron_high=1.0 if topology == "string" else 0.0))
    assert ev.solution.method == EXACT_METHOD.get(topology, "superposition")
    _check(ev, spice.simulate(ev.network))


@pytest.mark.parametrize(("topology", "output"), VARIANTS)
def test_monte_carlo_trials_agree_with_ngspice(topology, output):
    # source: ngspice — per-part ohms arrays of shape (n_trials, 1) through the solver, each trial
    # against one ngspice run with the same values as overrides
    design = Design(topology=topology, output=output, bits=4, vref=3.3, unit_r=2.2e3,
                    ron_high=20.0, ron_low=9.0, ref_r=5.0, load_r=10e3, gain=1.0)
    net = evaluate(design).network
    flat = plain_equivalent(net)
    rng = np.random.default_rng(7)
    ids = ([r.part_id for r in flat.resistors if r.role != "reference"]
           + [x.part_id for x in flat.legs if x.role != "tap switch"])
    nominal = {r.part_id: r.ohms for r in flat.resistors} | {x.part_id: x.ohms for x in flat.legs}
    n_trials = 2
    ohms = {pid: nominal[pid] * (1 + 0.02 * rng.standard_normal((n_trials, 1))) for pid in ids}
    sol = solve(net, ohms=ohms)
    assert sol.vout.shape == (n_trials, 16)
    for t in range(n_trials):
        ref = spice.simulate(net, ohms={pid: float(v[t, 0]) for pid, v in ohms.items()})
        for name in ("vout", "iref", "rout"):
            spice.assert_agree(getattr(sol, name)[t], getattr(ref, name), rtol=RTOL,
                               what=f"trial {t} {name}")


@settings(max_examples=20, deadline=None, derandomize=True)
@given(variant=st.sampled_from(VARIANTS), bits=st.integers(1, 7),
       vref=st.sampled_from([-5.0, 0.3, 2.5, 12.0]), unit_r=st.floats(100.0, 1e6),
       ron_high=st.sampled_from([0.0, 1.0, 47.0, 900.0]), ron_low=st.sampled_from([0.0, 3.3, 250.0]),
       ref_r=st.sampled_from([0.0, 1.5, 120.0]), load_r=st.sampled_from([np.inf, 150.0, 3.3e4, 1e7]),
       gain=st.sampled_from([1.0, -2.0, 0.5]), feedback_r=st.sampled_from([None, 820.0, 2.2e5]),
       seed=st.integers(0, 2**16))
def test_random_designs_agree_with_ngspice(variant, bits, vref, unit_r, ron_high, ron_low, ref_r,
                                           load_r, gain, feedback_r, seed):
    # source: ngspice — random designs, parts scattered by 5 %. Switch and reference resistances
    # stay ≥ 1 Ω: far below that, both solvers lose digits to cancellation (ngspice in the switch's
    # own node, the engine in the reference current behind a sub-ohm source)
    topology, output = variant
    base = Design(topology=topology, output=output, bits=bits, vref=vref, unit_r=unit_r,
                  ron_high=ron_high, ron_low=ron_low, ref_r=ref_r, load_r=load_r, gain=gain,
                  feedback_r=feedback_r)
    rng = np.random.default_rng(seed)
    parts = {p["id"]: p["ohms"] * (1 + 0.05 * rng.standard_normal()) for p in evaluate(base).parts}
    ev = evaluate(base.replace(parts=parts))
    ref = spice.simulate(ev.network)
    smallest = min(x for x in [*parts.values(), ron_high, ron_low, ref_r] if x > 0)
    zero_current = 8 * np.finfo(float).eps * abs(vref) / smallest  # a few ulp of Vref / R_min
    spice.assert_agree(ev.vout, ref.vout, rtol=RTOL, what="vout")
    spice.assert_agree(ev.iref, ref.iref, rtol=RTOL, what="iref",
                       floor=max(zero_current, 1e-15 * np.max(np.abs(ref.iref))))
    spice.assert_agree(ev.rout, ref.rout, rtol=RTOL, what="rout")


@pytest.mark.parametrize("chunk", [1, 7, 64])
def test_chunked_solve_agrees_with_ngspice(chunk, monkeypatch):
    # source: ngspice — the solver works through codes (× trials) in chunks to bound memory; the
    # results across chunk boundaries must not depend on the chunk size
    import rungwise.core.solve as solve_module

    design = _as_built("r2r-current", "transimpedance", 5, seed=11)
    net = evaluate(design).network
    ref = spice.simulate(net)
    monkeypatch.setattr(solve_module, "CHUNK_ELEMENTS", chunk)
    monkeypatch.setattr(solve_module, "TENSOR_ELEMENTS", 0)  # no all-codes-at-once shortcut
    sol = solve(net)
    _check(sol, ref)
    some = np.array([31, 0, 17, 5, 16, 15])  # any order, across chunk boundaries
    part = solve(net, codes=some)
    for name in ("vout", "iref", "rout"):
        spice.assert_agree(getattr(part, name), getattr(ref, name)[some], rtol=RTOL, what=name)
    trials = {"leg2": np.array([[19.9e3], [20.3e3]])}
    both = solve(net, ohms=trials)
    assert both.vout.shape == (2, 32)
    for t in range(2):
        ref_t = spice.simulate(net, ohms={"leg2": float(trials["leg2"][t, 0])})
        for name in ("vout", "iref", "rout"):
            spice.assert_agree(getattr(both, name)[t], getattr(ref_t, name), rtol=RTOL, what=name)
