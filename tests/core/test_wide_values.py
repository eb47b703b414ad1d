"""Networks whose parts span the whole allowed range (1 mΩ … 1 TΩ) solve accurately.

The reference is exact rational nodal analysis (Python ``fractions``; Kirchhoff's current law at
every unknown node, common practice), so no round-off of its own can hide an error of the engine.
"""

from __future__ import annotations

from fractions import Fraction

import numpy as np
import pytest

from rungwise.core import Design, evaluate
from rungwise.core.element_arrays import plain_equivalent
from rungwise.core.solve import solve
from rungwise.core.topologies import build


def _exact_node_voltages(net, code: int) -> dict[str, Fraction]:
    """Every node's voltage at ``code`` by exact nodal analysis of a plain network whose output
    is a node (its load to ground)."""
    unknown = net.unknown_nodes()
    index = {name: i for i, name in enumerate(unknown)}
    n = len(unknown)
    a = [[Fraction(0)] * n for _ in range(n)]
    b = [Fraction(0)] * n
    fixed = {k: Fraction(v) for k, v in net.fixed.items()}
    elements = [(r.a, r.b, r.ohms) for r in net.resistors]
    drive = np.asarray(net.decode(np.array([code])))[0].astype(bool)
    for leg, on in zip(net.legs, drive, strict=True):
        if on:
            elements.append((leg.node, leg.high, leg.ohms + leg.ron_high))
        elif leg.low is not None:
            elements.append((leg.node, leg.low, leg.ohms + leg.ron_low))
    if np.isfinite(net.output.load_ohms) and not net.output.buffered:
        elements.append((net.output.node, "gnd", net.output.load_ohms))
    for na, nb, ohms in elements:
        g = 1 / Fraction(ohms)
        for x, y in ((na, nb), (nb, na)):
            if x in index:
                a[index[x]][index[x]] += g
                if y in index:
                    a[index[x]][index[y]] -= g
                else:
                    b[index[x]] += g * fixed[y]
    for col in range(n):  # Gauss–Jordan in exact arithmetic
        piv = next(r for r in range(col, n) if a[r][col] != 0)
        a[col], a[piv], b[col], b[piv] = a[piv], a[col], b[piv], b[col]
        for r in range(n):
            if r != col and a[r][col] != 0:
                f = a[r][col] / a[col][col]
                a[r] = [x - f * y for x, y in zip(a[r], a[col], strict=True)]
                b[r] -= f * b[col]
    return {name: b[i] / a[i][i] for i, name in enumerate(unknown)} | fixed


WIDE = [
    # an R-2R ladder with unequal switches (general path), parts at both ends of the range
    Design(topology="r2r-voltage", bits=4, unit_r=10e3, ron_high=1e-3, ron_low=1e9, load_r=1e-3,
           parts={"leg0": 1e-3, "leg3": 1e12, "series1": 1e12}),
    # a binary-weighted divider with a 1 mΩ leg beside 1 TΩ legs
    Design(topology="binary-weighted", output="terminated-divider", bits=3, unit_r=1e12,
           ron_high=1e9, ron_low=1e-3, parts={"bit1": 1e-3}),
    # a string with one 1 mΩ part among 1 TΩ parts and a 1 mΩ load (found by the property tests)
    Design(topology="string", bits=3, vref=-1e-6, unit_r=1e12, ron_high=1e-3, ref_r=1e9,
           load_r=1e-3, parts={"string4": 1e-3}),
    # segment legs summed in a group from 1 mΩ to 1 TΩ
    Design(topology="segmented", bits=4, thermometer_bits=2, unit_r=1e12, ron_high=1e-3,
           ron_low=1e6, load_r=1e4, parts={"seg1": 1e-3}),
]


@pytest.mark.parametrize("design", WIDE, ids=lambda d: d.topology)
def test_parts_spanning_the_whole_range_solve_like_exact_arithmetic(design):
    net = plain_equivalent(build(design))
    sol = solve(net, keep_nodes=True, method="general")
    for code in range(net.n_codes):
        exact = _exact_node_voltages(net, code)
        for name, v in sol.node_voltages.items():
            got = float(np.broadcast_to(v, (net.n_codes,))[code])
            want = float(exact[name])
            assert got == pytest.approx(want, rel=1e-9, abs=1e-12 * abs(design.vref)), (code, name)


@pytest.mark.parametrize("design", WIDE, ids=lambda d: d.topology)
def test_parts_spanning_the_whole_range_give_finite_figures(design):
    ev = evaluate(design)
    assert np.all(np.isfinite(ev.vout))
    assert np.isfinite(ev.summary["power_total_max"])
    assert ev.summary["power_total_max"] > 0


SUB_OHM_REFERENCE = [
    Design(topology="r2r-voltage", bits=6, unit_r=10e3, ref_r=1e-3, ron_high=5, ron_low=3),
    Design(topology="r2r-current", bits=6, unit_r=10e3, ref_r=2e-3),
    Design(topology="binary-weighted", bits=5, unit_r=1e3, ref_r=1e-3, ron_high=1, ron_low=2),
    Design(topology="string", bits=4, unit_r=1e3, ref_r=1e-3, ron_high=3),
    Design(topology="segmented", bits=6, thermometer_bits=2, unit_r=1e4, ref_r=1e-3, ron_high=2),
]


@pytest.mark.parametrize("design", SUB_OHM_REFERENCE, ids=lambda d: d.topology)
@pytest.mark.parametrize("method", ["general", "auto"])
def test_reference_current_through_a_sub_ohm_ref_r_keeps_its_digits(design, method):
    # exact: the current through ref_r from the exact node voltages (KCL, common practice);
    # the drop across 1 mΩ is 1e-7 of vref, so (vsrc − v)/ref_r in floats would keep 9 digits
    net = plain_equivalent(build(design))
    sol = solve(net, method=method)
    (ref,) = [r for r in net.resistors if r.role == "reference"]
    for code in range(net.n_codes):
        exact = _exact_node_voltages(net, code)
        want = float((exact[ref.a] - exact[ref.b]) / Fraction(ref.ohms))
        assert float(sol.iref[code]) == pytest.approx(want, rel=1e-13), code
