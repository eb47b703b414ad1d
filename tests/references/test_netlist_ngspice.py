"""The exported netlist (``core/netlist.py``) run in ngspice against the engine at every code.

Source of the expected values: ngspice, batch mode (``ngspice -b FILE.cir``), reading the
``v(out) = …`` line (one code) or the printed ``dc`` table (``all_codes``) exactly as a user would.
"""

from __future__ import annotations

import re
import subprocess

import numpy as np
import pytest

from rungwise.core import OUTPUTS_BY_TOPOLOGY, Design, evaluate
from rungwise.core.netlist import spice_netlist

from . import spice

pytestmark = pytest.mark.ngspice

VARIANTS = [(t, o) for t, outs in OUTPUTS_BY_TOPOLOGY.items() for o in outs]
BUILDS = {"r2r-voltage": {"two_r": "two-units"}, "segmented": {"lsb_section": "unit-array"},
          "binary-weighted": {"binary": "unit-array"}}
"""Build styles that make parts of several units (series and parallel), so every unit is named."""


def _as_built(topology: str, output: str, seed: int, **extra) -> Design:
    """A 6-bit design snapped to E96 with every part then scattered by about 1 % (as built),
    unequal switch resistances, a reference with output resistance, a load and its capacitance."""
    base = Design(topology=topology, output=output, bits=6, vref=2.5, unit_r=10e3, series="E96",
                  ron_high=35.0, ron_low=12.0, ref_r=20.0, load_r=47e3, load_c=1e-9, gain=2.0,
                  thermometer_bits=2 if topology == "segmented" else None, **extra)
    rng = np.random.default_rng(seed)
    parts = {p["id"]: p["ohms"] * (1.0 + 0.01 * rng.standard_normal())
             for p in evaluate(base).parts}
    return base.replace(parts=parts)


def _run(text: str, tmp_path) -> str:
    exe = spice.require_ngspice()
    path = tmp_path / "candidate.cir"
    path.write_text(text)
    proc = subprocess.run([exe, "-b", str(path)], capture_output=True, text=True, timeout=120,
                          check=False)
    assert proc.returncode == 0, proc.stdout + proc.stderr
    return proc.stdout


def _single(text: str, tmp_path) -> float:
    found = re.findall(r"^v\(out\) = (\S+)$", _run(text, tmp_path), flags=re.M)
    assert len(found) == 1
    return float(found[0])


def _table(text: str, tmp_path) -> np.ndarray:
    rows = re.findall(r"^(\d+)\s+(\S+)\s+(\S+)\s*$", _run(text, tmp_path), flags=re.M)
    return np.array([[float(a), float(b), float(c)] for a, b, c in rows])


def _rtol(design: Design) -> float:
    # a summing node is held by a gain of 1e9, not infinity: relative error about NG/1e9
    return 1e-7 if design.output in {"summing-amp", "transimpedance"} else 1e-9


@pytest.mark.parametrize(("topology", "output"), VARIANTS)
def test_netlist_of_each_code_agrees_with_the_engine(topology, output, tmp_path):
    # source: ngspice — the op netlist of every one of the 64 codes prints the engine's output
    design = _as_built(topology, output, seed=VARIANTS.index((topology, output)) + 1,
                       timing={"node_c": 2e-12})
    ev = evaluate(design)
    text = spice_netlist(design, code=5)
    # every unknown node carries the node capacitance (an op analysis leaves it out)
    assert len(re.findall(r"^CN\d+ \S+ 0 2e-12$", text, re.M)) == len(ev.network.unknown_nodes())
    got = np.array([_single(spice_netlist(design, code=k), tmp_path) for k in range(64)])
    np.testing.assert_allclose(got, ev.vout, rtol=_rtol(design), atol=1e-12)
    assert not np.allclose(ev.vout, ev.codes * ev.summary["ideal_lsb"], rtol=1e-4)


@pytest.mark.parametrize(("topology", "output"), VARIANTS)
def test_all_codes_sweep_agrees_with_the_engine(topology, output, tmp_path):
    # source: ngspice — one dc sweep of the code voltage over all 64 codes
    design = _as_built(topology, output, seed=40 + VARIANTS.index((topology, output)),
                       build=BUILDS.get(topology, {}))
    ev = evaluate(design)
    table = _table(spice_netlist(design, all_codes=True), tmp_path)
    np.testing.assert_array_equal(table[:, 1], np.arange(64))
    # behavioural switches are solved by Newton iteration: agreement to a few parts in 1e9
    np.testing.assert_allclose(table[:, 2], ev.vout, rtol=max(_rtol(design), 3e-8), atol=1e-12)


@pytest.mark.parametrize(("topology", "output"), VARIANTS)
def test_units_ideal_switches_and_arrays_agree(topology, output, tmp_path):
    # source: ngspice — parts of several units, matched arrays and ideal (0 Ω) switches
    design = _as_built(topology, output, seed=80, build=BUILDS.get(topology, {}),
                       board={"array_size": 4}).replace(ron_high=0.0, ron_low=0.0)
    ev = evaluate(design)
    for k in (0, 1, 22, 63):
        assert _single(spice_netlist(design, code=k), tmp_path) == pytest.approx(
            ev.vout[k], rel=_rtol(design), abs=1e-12)
