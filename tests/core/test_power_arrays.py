"""Worst-case power of strings and thermometer groups in vectorised form (``metrics/power_arrays``),
against the per-element computation on the plain equivalent and against hand formulas."""

from __future__ import annotations

import math

import numpy as np
import pytest

from rungwise.core import Design, evaluate
from rungwise.core.element_arrays import plain_equivalent
from rungwise.core.metrics.power import element_powers, worst_case
from rungwise.core.metrics.power_arrays import (
    ElementPowers,
    part_power_arrays,
    running_max,
    split_worst,
    switch_maxima,
)
from rungwise.core.solve import solve
from rungwise.core.topologies import build, segmented


@pytest.mark.parametrize("seed", range(4))
def test_running_maxima_and_first_index_match_a_loop(seed):
    rng = np.random.default_rng(seed)
    x = rng.integers(0, 5, 40).astype(float)  # many ties
    fv, fk = running_max(x)
    rv, rk = running_max(x, reverse=True)
    for e in range(40):
        assert fv[e] == x[:e + 1].max()
        assert fk[e] == int(np.argmax(x[:e + 1]))
        assert rv[e] == x[e:].max()
        assert rk[e] == e + int(np.argmax(x[e:]))
    ends = np.array([0, 1, 17, 39, 40])
    c1, c2 = np.array([1.0, 2.0, 0.5, 1.0, 3.0]), np.array([2.0, 1.0, 1.0, 0.0, 1.0])
    value, code = split_worst(x, x[::-1].copy(), ends, c1, c2)
    for j, e in enumerate(ends):
        per_code = np.where(np.arange(40) < e, c1[j] * x, c2[j] * x[::-1])
        assert value[j] == per_code.max()
        assert code[j] == int(np.argmax(per_code))


def _plain_figures(net, min_ron=0.0):
    """Per-code figures of every element of the plain equivalent (the general computation)."""
    flat = plain_equivalent(net, min_ron=min_ron)
    codes = np.arange(flat.n_codes)
    sol = solve(flat, keep_nodes=True, method="general")
    drive = flat.decode(codes).astype(bool)
    return flat, element_powers(flat, drive, sol.node_voltages, sol.vout), sol


def _assert_parts_agree(elements, net, elems):
    pmax, pcode = part_power_arrays(elements, net.parts)
    ids = [p.part_id for p in net.parts]
    assert np.all(np.isfinite(pmax))
    for j, pid in enumerate(ids):
        p = elems[pid][1]
        assert pmax[j] == pytest.approx(p.max(), rel=1e-9, abs=1e-30)
        assert p[pcode[j]] == pytest.approx(p.max(), rel=1e-9, abs=1e-30)  # the code is a worst one


def _assert_totals_agree(totals, elems, vref, iref):
    total = sum(p for _, p, _ in elems.values())
    assert totals["power_total_max"] == pytest.approx(total.max(), rel=1e-9)
    assert total[totals["power_total_max_code"]] == pytest.approx(total.max(), rel=1e-9)
    assert totals["ref_power_max"] == pytest.approx(np.max(np.abs(vref * iref)), rel=1e-12)
    assert totals["balance_error_max"] <= 1e-12 * totals["ref_power_max"]


STRINGS = [
    Design(topology="string", bits=4, vref=3.3, unit_r=1e4, ron_high=120.0, ref_r=35.0, load_r=50e3),
    Design(topology="string", bits=5, vref=-2.0, unit_r=2e3, ron_high=10.0, load_r=4e3),
    Design(topology="string", output="buffer", bits=3, vref=1.0, unit_r=1e3, ron_high=5.0, ref_r=2.0),
    Design(topology="string", bits=6, vref=5.0, unit_r=1e3, ron_high=1.0),
]


@pytest.mark.parametrize("design", STRINGS, ids=lambda d: f"{d.output}-{d.bits}-{d.vref}")
@pytest.mark.parametrize("as_built", [False, True])
def test_string_worst_case_equals_the_plain_equivalent(design, as_built):
    if as_built:
        rng = np.random.default_rng(design.bits)
        design = design.replace(parts={f"string{i}": design.unit_r * (1 + 0.03 * rng.standard_normal())
                                       for i in range(2**design.bits)})
    net = build(design)
    elements, totals = worst_case(net)
    assert isinstance(elements, ElementPowers)
    flat, elems, sol = _plain_figures(net)
    _assert_parts_agree(elements, net, elems)
    _assert_totals_agree(totals, elems, design.vref, sol.iref)
    # the tap switch: its current is the load current (signed as the plain equivalent's legs)
    taps = [k for k in elems if k.startswith("switch:tap")]
    i_sw = np.sum([elems[k][2] * flat.decode(np.arange(flat.n_codes))[:, j]
                   for j, k in zip(range(len(flat.legs)), taps, strict=True)], axis=0)
    cur, src, snk = switch_maxima(elements)
    tiny = 1e-12 * abs(design.vref) / design.unit_r  # round-off of a current that is 0 exactly
    assert cur == pytest.approx(np.max(np.abs(i_sw)), rel=1e-9, abs=tiny)
    assert src == pytest.approx(max(np.max(i_sw), 0.0), rel=1e-9, abs=tiny)
    assert snk == 0.0
    ron_power = sum(p for k, (_, p, _) in elems.items() if k.startswith("tap"))
    sw = next(e for e in elements if e.kind == "switch")
    assert sw.power_max == pytest.approx(np.max(ron_power), rel=1e-9, abs=tiny**2 * design.ron_high)


def test_loaded_two_bit_string_top_resistor_by_hand():
    # common practice (Thevenin and Kirchhoff): tap k of a 4-resistor string is Vref·k/4 behind
    # k(4 − k)R/4; the load current I = Vref·(k/4)/(k(4 − k)R/4 + ron + RL) returns k/4 of itself
    # through the reference, so iref = Vref/(4R) + (k/4)·I, and the top resistor (above every tap)
    # dissipates R·iref², largest at the code with the largest iref
    vref, r, ron, rl = 2.0, 1e3, 50.0, 3e3
    ev = evaluate(Design(topology="string", bits=2, vref=vref, unit_r=r, ron_high=ron, load_r=rl))
    k = np.arange(4)
    i_load = vref * k / 4 / (k * (4 - k) * r / 4 + ron + rl)
    iref = vref / (4 * r) + k / 4 * i_load
    top = ev.parts[3]
    assert top["id"] == "string3"
    assert top["power_max"] == pytest.approx(r * np.max(iref) ** 2, rel=1e-12)
    assert top["power_code"] == int(np.argmax(iref))
    bottom = r * (iref - i_load) ** 2  # string0 lies below every tap but code 0's
    bottom[0] = r * iref[0] ** 2
    assert ev.parts[0]["power_max"] == pytest.approx(bottom.max(), rel=1e-12)
    assert ev.summary["switch_current_max"] == pytest.approx(i_load.max(), rel=1e-12)


def _segmented(m, bits=6, as_built=True, **kw):
    settings = dict(vref=3.3, unit_r=1e4, ron_high=42.0, ron_low=23.0, ref_r=12.0, load_r=80e3)
    settings.update(kw)
    d = Design(topology="segmented", bits=bits, thermometer_bits=m, **settings)
    if not as_built:
        return d
    rng = np.random.default_rng(m)
    return d.replace(parts={p.part_id: p.ohms * (1 + 0.02 * rng.standard_normal())
                            for p in build(d).parts})


@pytest.mark.parametrize(("m", "kw"), [(1, {}), (3, {}), (6, {}), (4, {"output": "buffer"}),
                                       (2, {"ron_high": 0.0, "ron_low": 0.0, "ref_r": 0.0}),
                                       (3, {"vref": -1.5, "load_r": 5e3})])
def test_group_worst_case_equals_plain_segment_legs(m, kw):
    d = _segmented(m, **kw)
    net = build(d)
    elements, totals = worst_case(net)
    assert isinstance(elements, ElementPowers)
    plain = segmented.build(d, grouped=False)
    p_elements, _ = worst_case(plain)  # every segment a plain switched leg
    codes = np.arange(plain.n_codes)
    sol = solve(plain, keep_nodes=True)
    elems = element_powers(plain, plain.decode(codes).astype(bool), sol.node_voltages, sol.vout)
    _assert_parts_agree(elements, net, elems)
    _assert_totals_agree(totals, elems, d.vref, sol.iref)
    for got, want in zip(switch_maxima(elements), switch_maxima(p_elements), strict=True):
        assert got == pytest.approx(want, rel=1e-9, abs=1e-18)
    by_name = {e.name: e for e in elements}
    for e in p_elements:
        if e.name.startswith("switch:seg"):
            assert by_name[e.name].power_max == pytest.approx(e.power_max, rel=1e-9, abs=1e-30)
            assert by_name[e.name].current_max == pytest.approx(e.current_max, rel=1e-9)
    assert [e.name for e in elements] == [e.name for e in p_elements]  # same elements, same order


def test_fully_thermometer_segment_powers_by_hand():
    # common practice (Ohm's law): M = N = 2 with ideal switches is 4 equal R on one node at
    # Vref·t/4 (t segments driven); a driven segment carries (Vref − V)/R, a resting one V/R:
    # seg0 worst (3/4)²·Vref²/R at t = 1, seg1 and seg2 (1/2)²·Vref²/R at t = 2
    vref, r = 2.0, 1e3
    ev = evaluate(Design(topology="segmented", bits=2, thermometer_bits=2, vref=vref, unit_r=r))
    rows = {p["id"]: p for p in ev.parts}
    assert rows["seg0"]["power_max"] == pytest.approx(9 / 16 * vref**2 / r, rel=1e-12)
    assert rows["seg0"]["power_code"] == 1
    for pid in ("seg1", "seg2"):
        assert rows[pid]["power_max"] == pytest.approx(vref**2 / (4 * r), rel=1e-12)
        assert rows[pid]["power_code"] == 2
    # in all Vref·iref = Vref²·t(4 − t)/(4R), largest at t = 2
    assert ev.summary["power_total_max"] == pytest.approx(vref**2 / r, rel=1e-12)
    assert ev.summary["power_total_max_code"] == 2


@pytest.mark.parametrize("design", [
    Design(topology="string", bits=16, vref=2.5, unit_r=1e3, ron_high=150.0, load_r=1e6),
    Design(topology="segmented", bits=16, thermometer_bits=16, vref=2.5, unit_r=1e4, load_r=1e5),
    Design(topology="segmented", bits=16, thermometer_bits=6, vref=2.5, unit_r=1e4, ron_high=30.0,
           ron_low=20.0, ref_r=1.0),
], ids=["string", "thermometer", "segmented"])
def test_sixteen_bit_designs_have_every_power_figure(design):
    ev = evaluate(design)
    for key in ("power_total_max", "ref_power_max", "switch_current_max"):
        assert math.isfinite(ev.summary[key])
        assert ev.summary[key] > 0
    _, totals = worst_case(ev.network, ev.solution)
    assert totals["power_total_max"] == ev.summary["power_total_max"]
    assert totals["balance_error_max"] <= 1e-9 * totals["ref_power_max"]  # conservation holds
    pmax = np.array([p["power_max"] for p in ev.parts[:50]] + [ev.parts[-1]["power_max"]])
    assert np.all(np.isfinite(pmax))
    assert np.all(pmax > 0)
