"""Segmented network whose binary section is a unit-element array (``lsb_section = "unit-array"``)."""

from __future__ import annotations

import numpy as np
import pytest

from rungwise.core import Design, DesignError, evaluate
from rungwise.core.designfile import DesignFile, dumps, loads
from rungwise.core.metrics.linearity import dnl
from rungwise.core.montecarlo import choose_engine, monte_carlo, sample_trials
from rungwise.core.part_ids import segmented_ids
from rungwise.core.solve import solve
from rungwise.core.topologies import build, part_ids, segmented

UNITS = {"lsb_section": "unit-array"}


def _design(**kw) -> Design:
    base = dict(topology="segmented", bits=6, thermometer_bits=2, vref=6.4, unit_r=2e3, build=UNITS)
    return Design(**{**base, **kw})


@pytest.mark.parametrize(("bits", "m"), [(6, 2), (5, 0), (4, 4), (7, 3)])
@pytest.mark.parametrize("output", ["unbuffered", "buffer"])
def test_ideal_transfer_every_code_exact(bits, m, output):
    # common practice (Johns & Martin, Analog Integrated Circuit Design, Nyquist-rate D/A
    # converters): 2^N equal units, k of them to the reference, give Vref·k/2^N at every code
    ev = evaluate(_design(bits=bits, thermometer_bits=m, output=output, gain=1.5))
    gain = 1.5 if output == "buffer" else 1.0
    np.testing.assert_allclose(ev.vout, gain * 6.4 * np.arange(2**bits) / 2**bits, rtol=1e-13,
                               atol=1e-14)
    assert ev.summary["n_resistors"] == 2**bits
    assert ev.summary["n_switches"] == 2**m - 1 + bits - m
    assert ev.summary["n_distinct_values"] == 1


def test_part_ids_units_and_sizing_rule():
    d = _design(bits=6, thermometer_bits=2, unit_r=1e3)
    parts = {p.part_id: p for p in build(d).parts}
    ids = ["seg0", "seg1", "seg2", "bit0", "bit1", "bit2", "bit3", "term"]
    assert list(parts) == ids == part_ids("segmented", d.output, 6, 2, d.build)
    assert segmented_ids(6, 2, "unit-array") == ids
    # sizing rule: unit R·2^(N−1); bit k = R·2^(N−1−k) as in the binary-weighted network
    for k in range(4):
        assert parts[f"bit{k}"].ohms == pytest.approx(1e3 * 2.0 ** (5 - k))
        assert (parts[f"bit{k}"].units, parts[f"bit{k}"].joined) == (2**k, "parallel")
    for i in range(3):
        assert parts[f"seg{i}"].ohms == pytest.approx(1e3 * 2.0)  # R·2^(M−1)
        assert (parts[f"seg{i}"].units, parts[f"seg{i}"].joined) == (16, "parallel")
    assert (parts["term"].ohms, parts["term"].units) == (pytest.approx(32e3), 1)
    assert "2^k units" in segmented.segmented_units.SIZING_RULE


def test_output_resistance_is_all_units_in_parallel():
    # common practice: with ideal switches every leg ends on a source, so the 2^N units of
    # R·2^(N−1) are in parallel: R/2 at every code
    ev = evaluate(_design(bits=7, thermometer_bits=3, unit_r=8e3))
    np.testing.assert_allclose(ev.rout, 4e3, rtol=1e-12)


def test_no_segments_is_the_terminated_binary_unit_array():
    base = dict(bits=5, vref=2.0, unit_r=1e4, ron_high=40.0, ron_low=25.0, load_r=1e5)
    a = evaluate(Design(topology="segmented", thermometer_bits=0, build=UNITS,
                        parts={"bit2": 20.3e3 * 4 / 4.1}, **base))
    b = evaluate(Design(topology="binary-weighted", output="terminated-divider",
                        build={"binary": "unit-array"}, parts={"bit2": 20.3e3 * 4 / 4.1}, **base))
    for name in ("vout", "rout", "iref"):
        np.testing.assert_allclose(getattr(a, name), getattr(b, name), rtol=1e-13)
    assert [(p["id"], p["ohms"]) for p in a.parts] == [(p["id"], p["ohms"]) for p in b.parts]


def test_default_section_is_unchanged_r2r():
    # (grouped vs plain segments, both sections: tests/core/test_segmented.py)
    plain = evaluate(Design(topology="segmented", bits=6, thermometer_bits=2, ron_high=30.0))
    named = evaluate(Design(topology="segmented", bits=6, thermometer_bits=2, ron_high=30.0,
                            build={"lsb_section": "r2r"}))
    np.testing.assert_array_equal(plain.vout, named.vout)
    assert [p["id"] for p in named.parts][3:] == ["leg0", "leg1", "leg2", "leg3", "series0",
                                                  "series1", "series2", "term"]


def test_part_ids_follow_the_section_and_files_round_trip():
    with pytest.raises(DesignError, match=r"parts\.leg0"):
        _design(parts={"leg0": 1e3})
    d = _design(ron_high=42.0, name="Unit array", parts={"bit1": 16.2e3, "seg2": 3.3e3, "term": 63e3})
    back = loads(dumps(DesignFile(candidates=[d]))).candidates[0]
    assert back.to_dict() == d.to_dict()
    np.testing.assert_array_equal(evaluate(back).vout, evaluate(d).vout)
    # switching the section changes the part ids: as-built values and tempcos are dropped
    d = d.replace(mismatch={"tempco_parts": {"bit1": 5e-5}})
    r2r = d.with_settings({"build.lsb_section": "r2r"})
    assert dict(r2r.parts) == {}
    assert "tempco_parts" not in r2r.mismatch
    assert dict(d.replace(unit_r=3e3).parts) == dict(d.parts)


def test_statistics_sample_every_unit():
    d = _design(bits=6, thermometer_bits=2, vref=1.0,
                mismatch={"distribution": "gaussian", "tolerance": 0.03, "coverage_sigma": 3.0})
    assert choose_engine(d, build(d)) == "general"
    ohms = sample_trials(d, seed=3, start=0, count=20000)
    # a part of n units in parallel spreads σ/√n (σ = 1 % per unit)
    for pid, n in (("seg1", 16), ("bit2", 4), ("bit0", 1), ("term", 1)):
        rel = ohms[pid][:, 0] / np.mean(ohms[pid][:, 0])
        assert np.std(rel) == pytest.approx(0.01 / np.sqrt(n), rel=0.03)
    # the statistics run solves exactly these boards
    r = monte_carlo(d, 200, seed=3)
    steps = dnl(solve(build(d), ohms={k: v[:200] for k, v in ohms.items()}).vout)
    np.testing.assert_allclose(r.max_abs_dnl, np.max(np.abs(steps), axis=1), rtol=1e-9)
