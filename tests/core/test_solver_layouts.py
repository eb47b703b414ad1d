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
        flat = solve(net, codes=np.arange(net.n_codes), **kw)  # explicit codes: per-code layout
        assert tensor.vout.shape == flat.vout.shape == ((3, net.n_codes) if kw else (net.n_codes,))
        for name in ("vout", "rout", "iref"):
            np.testing.assert_allclose(getattr(tensor, name), getattr(flat, name), rtol=1e-12,
                                       atol=1e-18)


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
