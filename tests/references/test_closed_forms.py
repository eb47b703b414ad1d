"""Closed forms derived symbolically (sympy nodal analysis) and hand-computed INL/DNL examples.

Every expected value here is re-derived in the test by exact rational arithmetic; the figures in the
comments are the worked values they must reproduce.
"""

from __future__ import annotations

import numpy as np
import pytest
import sympy as sp

from rungwise.core import Design, evaluate
from rungwise.core.metrics import linearity

VREF, R = sp.symbols("V_ref R", positive=True)


# ------------------------------------------------------------------------------------------------
# nodal analysis in sympy


def _binary_divider(bits: int, code: int) -> tuple[sp.Expr, sp.Expr, sp.Expr]:
    """(vout, iref, rout) of the unterminated binary-weighted divider by nodal analysis."""
    v = sp.Symbol("v_out")
    g = [1 / (R * 2 ** (bits - 1 - k)) for k in range(bits)]
    on = [(code >> k) & 1 for k in range(bits)]
    kcl = sum(gk * ((VREF if b else 0) - v) for gk, b in zip(g, on, strict=True))
    vout = sp.solve(sp.Eq(kcl, 0), v)[0]
    iref = sum(gk * (VREF - vout) for gk, b in zip(g, on, strict=True) if b)
    rout = 1 / sum(g)
    return sp.simplify(vout), sp.simplify(iref), sp.simplify(rout)


def _r2r_voltage_iref(bits: int, code: int) -> sp.Expr:
    """Reference current of the voltage-mode R-2R ladder (ideal, unloaded) by nodal analysis."""
    v = sp.symbols(f"v0:{bits}")
    eqs = []
    for k in range(bits):
        drive = VREF if (code >> k) & 1 else 0
        i = (drive - v[k]) / (2 * R)  # leg
        i += (0 - v[k]) / (2 * R) if k == 0 else (v[k - 1] - v[k]) / R  # terminator or series below
        if k < bits - 1:
            i += (v[k + 1] - v[k]) / R  # series above
        eqs.append(sp.Eq(i, 0))
    sol = sp.solve(eqs, v, dict=True)[0]
    return sp.simplify(sum((VREF - sol[v[k]]) / (2 * R) for k in range(bits) if (code >> k) & 1))


# ------------------------------------------------------------------------------------------------
# binary-weighted passive divider


@pytest.mark.parametrize("bits", [1, 2, 3, 4])
def test_binary_divider_closed_forms_derived_symbolically(bits):
    # derived here (sympy nodal analysis): rout = 2^(N−1)R/(2^N − 1) at every code and
    # iref(c) = Vref·c·(2^N − 1 − c)/((2^N − 1)·2^(N−1)·R)
    n_full = 2**bits - 1
    for code in range(2**bits):
        vout, iref, rout = _binary_divider(bits, code)
        assert sp.simplify(vout - VREF * code / n_full) == 0
        assert sp.simplify(rout - 2 ** (bits - 1) * R / n_full) == 0
        assert sp.simplify(iref - VREF * code * (n_full - code) / (n_full * 2 ** (bits - 1) * R)) == 0


@pytest.mark.parametrize("bits", [1, 3, 4, 8, 12])
def test_engine_matches_binary_divider_closed_forms(bits):
    # closed forms derived above (sympy); the engine must reproduce them at every code
    vref, r = 5.0, 10e3
    ev = evaluate(Design(topology="binary-weighted", output="divider", bits=bits, vref=vref,
                         unit_r=r))
    c = ev.codes.astype(float)
    n_full = 2**bits - 1
    np.testing.assert_allclose(ev.vout, vref * c / n_full, rtol=1e-12, atol=1e-15)
    np.testing.assert_allclose(ev.rout, 2 ** (bits - 1) * r / n_full, rtol=1e-12)
    np.testing.assert_allclose(ev.iref, vref * c * (n_full - c) / (n_full * 2 ** (bits - 1) * r),
                               rtol=1e-10, atol=1e-18)


def test_binary_divider_worked_values():
    # N = 4, R = 10 kΩ, 5 V (closed form above): 1000 → 2.666667 V, 233.3333 µA; 1011 → 3.666667 V,
    # 183.3333 µA; 1111 → 5 V, 0 A; rout 8R/15
    ev = evaluate(Design(topology="binary-weighted", output="divider", bits=4, vref=5.0,
                         unit_r=10e3))
    assert ev.vout[0b1000] == pytest.approx(8 / 3, rel=1e-12)
    assert ev.vout[0b1011] == pytest.approx(11 / 3, rel=1e-12)
    assert ev.vout[0b1111] == pytest.approx(5.0, rel=1e-12)
    assert ev.iref[0b1000] == pytest.approx(7e-3 / 30, rel=1e-12)
    assert ev.iref[0b1011] == pytest.approx(5.5e-3 / 30, rel=1e-12)
    assert abs(ev.iref[0b1111]) < 1e-18
    np.testing.assert_allclose(ev.rout, 8e4 / 15, rtol=1e-12)


# ------------------------------------------------------------------------------------------------
# voltage-mode R-2R reference current

R2R_IREF = {  # units of Vref/R, re-derived below by sympy nodal analysis
    2: ["0", "5/16", "1/4", "5/16"],
    3: ["0", "21/64", "5/16", "29/64", "1/4", "29/64", "5/16", "21/64"],
}


@pytest.mark.parametrize("bits", [2, 3])
def test_r2r_voltage_reference_current_exact_fractions(bits):
    # derived here (sympy nodal analysis); the worked fractions must come out of the derivation
    derived = [sp.nsimplify(_r2r_voltage_iref(bits, c) * R / VREF) for c in range(2**bits)]
    assert derived == [sp.Rational(x) for x in R2R_IREF[bits]]
    vref, r = 3.3, 4700.0
    ev = evaluate(Design(topology="r2r-voltage", bits=bits, vref=vref, unit_r=r))
    np.testing.assert_allclose(ev.iref, [float(x) * vref / r for x in derived], rtol=1e-12,
                               atol=1e-18)


@pytest.mark.parametrize("bits", [2, 4])
def test_r2r_voltage_reference_current_symmetries(bits):
    # derived here (sympy): I(c) = I(2^N − c); MSB alone 1/4; all ones = LSB alone = (1 − 4^−N)/3
    derived = [sp.nsimplify(_r2r_voltage_iref(bits, c) * R / VREF) for c in range(2**bits)]
    for c in range(1, 2**bits):
        assert derived[c] == derived[2**bits - c]
    assert derived[2 ** (bits - 1)] == sp.Rational(1, 4)
    assert derived[-1] == derived[1] == (1 - sp.Rational(1, 4**bits)) / 3
    ev = evaluate(Design(topology="r2r-voltage", bits=bits, vref=1.0, unit_r=1.0))
    np.testing.assert_allclose(ev.iref, [float(x) for x in derived], rtol=1e-12, atol=1e-18)


# ------------------------------------------------------------------------------------------------
# INL / DNL (IEEE Std 1658-2011 DAC terminology; IEEE Std 1241-2010 terminal-based and
# independently based lines — from memory)

EXAMPLE = [sp.Rational(x) for x in ("0", "1.10", "1.90", "3.10", "4.30", "4.90", "6.00", "7.00")]
NON_MONOTONIC = [sp.Rational(x) for x in ("0", "1", "2", "3.2", "3.1", "5", "6", "7")]


def _exact_linearity(v: list[sp.Rational]) -> tuple[list, list, list]:
    """Endpoint INL, best-fit INL (fitted-slope units) and DNL with exact rationals."""
    n = len(v)
    lsb = (v[-1] - v[0]) / (n - 1)
    inl_e = [(v[c] - v[0] - lsb * c) / lsb for c in range(n)]
    dnl = [(v[c + 1] - v[c]) / lsb - 1 for c in range(n - 1)]
    a, b = sp.symbols("a b")
    err = sum((v[c] - a - b * c) ** 2 for c in range(n))
    fit = sp.solve([sp.diff(err, a), sp.diff(err, b)], [a, b])
    inl_b = [(v[c] - fit[a] - fit[b] * c) / fit[b] for c in range(n)]
    return inl_e, inl_b, dnl


def test_three_bit_example_exact():
    # hand-computed 3-bit example: endpoint LSB 1 V; INL = [0, .1, −.1, .1, .3, −.1, 0, 0];
    # DNL = [.1, −.2, .2, .2, −.4, .1, 0]; least squares: offset 0.05 V, slope 279/280, INL =
    # [−14/279, 5/93, −40/279, 17/279, 74/279, −37/279, −8/279, −7/279], max |INL| 74/279
    inl_e, inl_b, dnl = _exact_linearity(EXAMPLE)
    q = sp.Rational
    assert inl_e == [0, q(1, 10), q(-1, 10), q(1, 10), q(3, 10), q(-1, 10), 0, 0]
    assert dnl == [q(1, 10), q(-2, 10), q(2, 10), q(2, 10), q(-4, 10), q(1, 10), 0]
    assert inl_b == [q(-14, 279), q(5, 93), q(-40, 279), q(17, 279), q(74, 279), q(-37, 279),
                     q(-8, 279), q(-7, 279)]
    # identity: endpoint INL(c) = Σ_{i<c} DNL(i)
    assert inl_e == [sum(dnl[:c], sp.Integer(0)) for c in range(8)]


def test_linearity_module_reproduces_three_bit_example():
    # IEEE Std 1658 terms (from memory): the module against the exact values derived above
    inl_e, inl_b, dnl = _exact_linearity(EXAMPLE)
    v = np.array([float(x) for x in EXAMPLE])
    np.testing.assert_allclose(linearity.inl_endpoint(v), [float(x) for x in inl_e], atol=1e-12)
    np.testing.assert_allclose(linearity.inl_bestfit(v), [float(x) for x in inl_b], atol=1e-12)
    np.testing.assert_allclose(linearity.dnl(v), [float(x) for x in dnl], atol=1e-12)
    offset, slope = linearity.bestfit_line(v)
    assert offset == pytest.approx(0.05, abs=1e-13)
    assert slope == pytest.approx(279 / 280, rel=1e-13)
    assert np.max(np.abs(linearity.inl_bestfit(v))) == pytest.approx(74 / 279, rel=1e-12)
    assert bool(linearity.monotonic(v))


def test_linearity_module_reproduces_non_monotonic_example():
    # hand-computed: V = [0, 1, 2, 3.2, 3.1, 5, 6, 7] → DNL = [0, 0, .2, −1.1, .9, 0, 0]: a step
    # below −1 LSB, so not monotonic (IEEE Std 1658 terms, from memory)
    inl_e, inl_b, dnl = _exact_linearity(NON_MONOTONIC)
    q = sp.Rational
    assert dnl == [0, 0, q(2, 10), q(-11, 10), q(9, 10), 0, 0]
    v = np.array([float(x) for x in NON_MONOTONIC])
    np.testing.assert_allclose(linearity.dnl(v), [float(x) for x in dnl], atol=1e-12)
    np.testing.assert_allclose(linearity.inl_endpoint(v), [float(x) for x in inl_e], atol=1e-12)
    np.testing.assert_allclose(linearity.inl_bestfit(v), [float(x) for x in inl_b], atol=1e-12)
    assert not bool(linearity.monotonic(v))


def test_linearity_of_an_inverting_transfer_reads_like_the_positive_one():
    # convention: an inverting output is measured on −V, so INL/DNL match the positive transfer
    v = np.array([float(x) for x in EXAMPLE])
    np.testing.assert_allclose(linearity.inl_endpoint(-v), linearity.inl_endpoint(v), atol=1e-12)
    np.testing.assert_allclose(linearity.inl_bestfit(-v), linearity.inl_bestfit(v), atol=1e-12)
    np.testing.assert_allclose(linearity.dnl(-v), linearity.dnl(v), atol=1e-12)
