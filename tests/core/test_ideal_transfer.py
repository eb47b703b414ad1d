"""Ideal networks against facts of the trade."""

from __future__ import annotations

import numpy as np
import pytest

from rungwise.core import Design, evaluate


def test_r2r_voltage_4bit_5v():
    # common practice: 4-bit, 5 V voltage-mode R-2R: LSB 0.3125 V, 1011 → 3.4375 V, 1111 → 4.6875 V
    ev = evaluate(Design(topology="r2r-voltage", bits=4, vref=5.0, unit_r=10e3))
    assert ev.summary["ideal_lsb"] == pytest.approx(0.3125, rel=1e-15)
    assert ev.vout[0b1011] == pytest.approx(3.4375, rel=1e-12)
    assert ev.vout[0b1111] == pytest.approx(4.6875, rel=1e-12)


@pytest.mark.parametrize("bits", [1, 2, 5, 9])
def test_r2r_output_resistance_is_r(bits):
    # common practice: the R-2R ladder's Thevenin resistance is R at every code
    ev = evaluate(Design(topology="r2r-voltage", bits=bits, vref=1.0, unit_r=4700.0))
    np.testing.assert_allclose(ev.rout, 4700.0, rtol=1e-12)
