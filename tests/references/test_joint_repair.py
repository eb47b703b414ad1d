"""Several parts off at once, and the repair plan, on invented boards of every topology.

Each board is a design with one, two or three parts set off (every other part exact), measured
with seeded meter noise. Checks:

- the true set of parts and deviations is among the explanations reported;
- the repair plan applied to the *true* board meets the target, the repaired board being solved
  by ngspice (``references/spice.py``), an outside solver;
- identifiability: the rank of the bit-weight sensitivity matrix (common practice, linear
  algebra) is at most N − 1 with a free gain, and an R-2R ladder's MSB leg and last series resistor
  are named as confounded (they only change the MSB's weight against the rest: from memory).
"""

from __future__ import annotations

import numpy as np
import pytest

from rungwise.core import Design
from rungwise.core.diagnose import diagnose
from rungwise.core.diagnose.diagnosis import RepairRequest
from rungwise.core.diagnose.repair import figures
from rungwise.core.diagnose.synthetic import random_as_built, synthesize
from rungwise.core.topologies import build

from . import spice

pytestmark = pytest.mark.ngspice

BOARDS = {
    "r2r-voltage": (dict(topology="r2r-voltage", bits=6, ron_high=40.0, ron_low=25.0,
                         load_r=100e3),
                    [{"leg4": 0.03}, {"leg3": 0.025, "series4": -0.03},
                     {"leg1": -0.04, "leg4": 0.025, "series3": 0.03}]),
    "r2r-current": (dict(topology="r2r-current", bits=6),
                    [{"leg5": -0.02}, {"leg4": 0.03, "series2": -0.04},
                     {"leg2": 0.04, "leg5": -0.02, "series3": 0.03}]),
    "binary-weighted": (dict(topology="binary-weighted", output="terminated-divider", bits=6),
                        [{"bit5": 0.02}, {"bit4": -0.03, "bit5": 0.015},
                         {"bit3": 0.04, "bit4": -0.03, "bit5": 0.015}]),
    "binary-summing": (dict(topology="binary-weighted", output="summing-amp", bits=5),
                       [{"bit4": -0.02}, {"bit3": 0.03, "bit4": -0.02},
                        {"bit2": 0.05, "bit3": 0.03, "bit4": -0.02}]),
    "segmented": (dict(topology="segmented", bits=6, thermometer_bits=2),
                  [{"seg1": 0.03}, {"seg0": -0.03, "leg3": 0.03},
                   {"seg0": -0.03, "seg2": 0.025, "leg3": 0.04}]),
    "string": (dict(topology="string", bits=4),
               [{"string5": 0.2}, {"string3": 0.25, "string11": -0.2},
                {"string2": 0.25, "string7": -0.2, "string12": 0.3}]),
}

CASES = [(name, k) for name in BOARDS for k in range(3)]

TARGET = 0.1
"""Target max |INL| and |DNL| of the repair, LSB."""


def _truth_listed(explanations, truth: dict[str, float]) -> bool:
    for e in explanations:
        if set(e["parts"]) == set(truth) and all(
                abs(e["parts"][p] - d) <= 0.1 * abs(d) for p, d in truth.items()):
            return True
    return False


@pytest.mark.parametrize(("name", "k"), CASES, ids=[f"{n}-{k + 1}" for n, k in CASES])
def test_true_parts_are_explained_and_the_repair_works_on_the_true_board(name, k):
    spice.require_ngspice()
    kw, offs = BOARDS[name]
    design = Design(**kw, vref=2.5)
    truth = offs[k]
    built = random_as_built(design, 0.0, seed=1, off=truth)
    lsb = abs(build(design).ideal_lsb)
    m = synthesize(built, noise=0.003 * lsb, seed=7, repeats={0: 4, 2**design.bits - 1: 4})
    before, before_dnl = figures(m.codes, m.volts[None])
    assert max(before[0], before_dnl[0]) > TARGET  # the board needs a repair
    d = diagnose(m, design, repair=RepairRequest("E96", TARGET))
    out = d.to_dict()
    assert _truth_listed(out["explanations"], truth), out["explanations"]
    plan = d.repair
    assert plan.meets_target
    assert 1 <= len(plan.actions) <= 3
    repaired = plan.repaired(built)
    net = build(repaired)
    v = spice.simulate(net).vout  # the repaired true board, solved by ngspice
    inl, dnl = figures(np.arange(2**design.bits), v[None])
    assert inl[0] <= TARGET * 1.05
    assert dnl[0] <= TARGET * 1.05


def test_rank_names_what_the_curve_cannot_tell_apart():
    design = Design(bits=6, vref=2.5)
    built = random_as_built(design, 0.0, seed=1, off={"leg5": 0.02})
    m = synthesize(built, noise=1e-5, seed=2, repeats={0: 4, 63: 4})
    out = diagnose(m, design).to_dict()
    ident = out["identifiability"]
    assert ident["method"] == "rank of the bit-weight sensitivity matrix"
    assert ident["rank"] == design.bits - 1  # N weights, the gain taken out (linear algebra)
    assert ident["n_parts"] == 2 * design.bits
    assert ["leg5", "series4"] in ident["confounded"]
    assert out["ambiguous"] is True  # leg5 high and series4 low explain the curve alike
    listed = [set(e["parts"]) for e in out["explanations"] if e["fits"]]
    assert {"leg5"} in listed
    assert {"series4"} in listed
