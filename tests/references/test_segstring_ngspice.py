"""Segmented and string networks against ngspice, with as-built values and unequal switches.

Source of the expected values: ngspice, batch mode, through ``references/spice.py`` (which lowers
leg groups, strings and the tap selector to plain parts).
"""

from __future__ import annotations

import numpy as np
import pytest

from rungwise.core import Design, evaluate
from rungwise.core.topologies import part_ids

from . import spice

pytestmark = pytest.mark.ngspice


def _scattered(design: Design, seed: int) -> Design:
    rng = np.random.default_rng(seed)
    nominal = {p["id"]: p["ohms"] for p in evaluate(design).parts}
    assert set(nominal) == set(part_ids(design.topology, design.output, design.bits,
                                        design.thermometer_bits, design.build))
    return design.replace(parts={k: v * (1 + 0.01 * rng.standard_normal()) for k, v in nominal.items()})


@pytest.mark.parametrize("output", ["unbuffered", "buffer"])
def test_loaded_4bit_string(output):
    # source: ngspice — every code of an as-built 4-bit string with a 150 Ω tap switch, a 25 Ω
    # reference and a 33 kΩ load (vout, iref, rout to 1e-9 relative)
    d = _scattered(Design(topology="string", output=output, bits=4, vref=3.3, unit_r=4.7e3,
                          ron_high=150.0, ref_r=25.0, load_r=33e3, gain=1.5), seed=3)
    ev = evaluate(d)
    ref = spice.simulate(ev.network)
    for name in ("vout", "iref", "rout"):
        spice.assert_agree(getattr(ev, name), getattr(ref, name), rtol=1e-9, what=name)
    if output == "unbuffered":
        assert ev.summary["max_abs_inl_endpoint"] > 0.05  # the load really bends it


@pytest.mark.parametrize("m", [2, 6])
def test_as_built_6bit_segmented(m):
    # source: ngspice — every code of an as-built 6-bit segmented design, on-resistances 38 Ω
    # (driven) and 17 Ω (resting), 15 Ω reference, 56 kΩ load (vout, iref, rout to 1e-9 relative)
    d = _scattered(Design(topology="segmented", bits=6, thermometer_bits=m, vref=2.5, unit_r=10e3,
                          ron_high=38.0, ron_low=17.0, ref_r=15.0, load_r=56e3), seed=4 + m)
    ev = evaluate(d)
    ref = spice.simulate(ev.network)
    for name in ("vout", "iref", "rout"):
        spice.assert_agree(getattr(ev, name), getattr(ref, name), rtol=1e-9, what=name)


@pytest.mark.parametrize("m", [2, 4])
@pytest.mark.parametrize("output", ["unbuffered", "buffer"])
def test_as_built_6bit_unit_array_segmented(m, output):
    # source: ngspice — every code of an as-built 6-bit segmented design whose binary bits are a
    # unit-element array (lsb_section = "unit-array"), on-resistances 38 Ω (driven) and 17 Ω
    # (resting), 15 Ω reference, 56 kΩ load (vout, iref, rout to 1e-9 relative)
    d = _scattered(Design(topology="segmented", output=output, bits=6, thermometer_bits=m,
                          vref=2.5, unit_r=10e3, ron_high=38.0, ron_low=17.0, ref_r=15.0,
                          load_r=56e3, gain=2.0, build={"lsb_section": "unit-array"}), seed=9 + m)
    ev = evaluate(d)
    assert {"bit0", "term", "seg0"} <= set(d.parts)
    ref = spice.simulate(ev.network)
    for name in ("vout", "iref", "rout"):
        spice.assert_agree(getattr(ev, name), getattr(ref, name), rtol=1e-9, what=name)
