"""The solver's array layouts and paths give the same numbers (an exact method checked against
the plain per-code layout of the general solver)."""

from __future__ import annotations

import numpy as np
import pytest

from rungwise.core import Design, NetworkError
from rungwise.core.network import GROUND, Network, Output, Resistor, binary_decoder
from rungwise.core.solve import solve
from rungwise.core.topologies import build

VARIANTS = [("r2r-voltage", "unbuffered"), ("r2r-voltage", "buffer"),
            ("r2r-current", "transimpedance"), ("binary-weighted", "divider"),
            ("binary-weighted", "terminated-divider"), ("binary-weighted", "summing-amp")]


@pytest.mark.parametrize(("topology", "output"), VARIANTS)
@pytest.mark.parametrize("bits", [1, 4, 9])
def test_bit_tensor_layout_equals_per_code_layout(topology, output, bits):
    d = Design(topology=topology, output=output, bits=bits, vref=5, unit_r=10e3, ron_high=40,
               ron_low=25, ref_r=5, load_r=1e5, gain=2.0)
    net = build(d)
    rng = np.random.default_rng(7)
    ohms = {p.part_id: p.ohms * (1 + 0.01 * rng.standard_normal((3, 1))) for p in net.parts}
    for kw in ({}, {"ohms": ohms}):
        tensor = solve(net, **kw)  # all codes: bit-tensor layout
        backwards = np.arange(net.n_codes)[::-1]  # not an aligned block: per-code layout
        flat = solve(net, codes=backwards, **kw)
        assert tensor.vout.shape == flat.vout.shape == ((3, net.n_codes) if kw else (net.n_codes,))
        for name in ("vout", "rout", "iref"):
            np.testing.assert_allclose(getattr(tensor, name), getattr(flat, name)[..., ::-1],
                                       rtol=1e-12, atol=1e-18)
        # an aligned block of codes (the high bits constant) takes the tensor layout too
        for size, first in ((8, 8), (16, 2**bits - 16), (4, 0)):
            if size > net.n_codes:
                continue
            block = solve(net, codes=np.arange(first, first + size), keep_nodes=True, **kw)
            for name in ("vout", "rout", "iref"):
                np.testing.assert_allclose(getattr(block, name),
                                           getattr(flat, name)[..., ::-1][..., first:first + size],
                                           rtol=1e-12, atol=1e-18)


@pytest.mark.parametrize(("topology", "output"), VARIANTS)
def test_superposition_equals_general(topology, output):
    d = Design(topology=topology, output=output, bits=7, vref=3.3, unit_r=4.7e3, ron_high=20,
               ron_low=20, load_r=47e3)
    net = build(d)
    a, b = solve(net, method="superposition", keep_nodes=True), solve(net, method="general",
                                                                       keep_nodes=True)
    assert (a.method, b.method) == ("superposition", "general")
    for name in ("vout", "rout", "iref"):
        np.testing.assert_allclose(getattr(a, name), getattr(b, name), rtol=1e-11, atol=1e-18)
    for node, v in b.node_voltages.items():
        np.testing.assert_allclose(a.node_voltages[node], v, rtol=1e-11, atol=1e-15)


def test_superposition_refused_where_not_exact():
    net = build(Design(bits=4, ron_high=40, ron_low=25))
    with pytest.raises(NetworkError, match="superposition is not exact"):
        solve(net, method="superposition")


def test_floating_node_is_named():
    net = Network(fixed={GROUND: 0.0, "ref": 1.0}, source="ref",
                  resistors=[Resistor("a", "x", "ref", "mid", 1e3),
                             Resistor("b", "x", "island", "island2", 1e3)],
                  legs=[], n_codes=2, decode=binary_decoder([]),
                  output=Output("node", "island"))
    with pytest.raises(NetworkError, match="island") as info:
        solve(net)
    assert info.value.node in {"island", "island2"}


@pytest.mark.parametrize(("bits", "m"), [(4, 0), (5, 2), (7, 3), (6, 6)])
@pytest.mark.parametrize("output", ["unbuffered", "buffer"])
def test_segment_levels_on_the_bit_tensor_equal_plain_legs(bits, m, output):
    # the thermometer level laid on the axes of the top bits (nominal tensor path) against one
    # plain leg per segment at explicit codes (per-code layout), with nodes kept
    from rungwise.core.topologies import segmented

    rng = np.random.default_rng(bits + m)
    d = Design(topology="segmented", output=output, bits=bits, thermometer_bits=m, vref=2.5,
               unit_r=1e4, ron_high=40, ron_low=25, ref_r=3, load_r=6e4)
    d = d.replace(parts={p.part_id: p.ohms * (1 + 0.02 * rng.standard_normal())
                         for p in build(d).parts})
    tensor = solve(build(d), keep_nodes=True)
    plain_net = segmented.build(d, grouped=False)
    plain = solve(plain_net, codes=np.arange(plain_net.n_codes), keep_nodes=True)
    for name in ("vout", "rout", "iref"):
        np.testing.assert_allclose(getattr(tensor, name), getattr(plain, name), rtol=1e-12,
                                   atol=1e-18)
    for node, v in plain.node_voltages.items():
        np.testing.assert_allclose(tensor.node_voltages[node], v, rtol=1e-12, atol=1e-15)


def test_an_aligned_block_of_codes_takes_the_bit_tensor_layout(monkeypatch):
    import rungwise.core.solve as solver

    calls = []
    real = solver._solve_bit_tensor
    monkeypatch.setattr(solver, "_solve_bit_tensor", lambda *a, **k: calls.append(k) or real(*a, **k))
    net = build(Design(bits=6, ron_high=40, ron_low=25))
    solve(net, codes=np.arange(16, 32))
    assert calls[-1]["layout"].first == 16
    solve(net, codes=np.arange(8, 24))  # 16 codes not starting at a multiple of 16
    solve(net, codes=np.array([0, 1, 3, 2]))
    assert len(calls) == 1
    # segment levels inside a block: constant (high block) or counting from the block's level
    d = Design(topology="segmented", bits=7, thermometer_bits=3, ron_high=40, ron_low=25, load_r=5e4)
    seg = build(d)
    flat = solve(seg, codes=np.arange(seg.n_codes)[::-1], keep_nodes=True)
    for first, size in ((64, 64), (96, 16), (32, 8)):
        block = solve(seg, codes=np.arange(first, first + size), keep_nodes=True)
        assert calls[-1]["layout"].first == first
        for name in ("vout", "rout", "iref"):
            np.testing.assert_allclose(getattr(block, name),
                                       getattr(flat, name)[::-1][first:first + size], rtol=1e-12)
