"""Sets of parts fitted together; extra measurements; the span check (invented boards)."""

from __future__ import annotations

import numpy as np
import pytest

from rungwise.core import Design
from rungwise.core.diagnose import MeasurementError, diagnose
from rungwise.core.diagnose.joint import Extras, read_rout
from rungwise.core.diagnose.synthetic import random_as_built, synthesize
from rungwise.core.solve import solve
from rungwise.core.topologies import build

LADDER = Design(bits=8, vref=3.3, unit_r=10e3, ron_high=40.0, ron_low=25.0, load_r=100e3)


def test_two_parts_off_are_sized_right_together():
    # a leg +1.5 % and a series resistor −1.2 %; every other part 0.02 % σ: each part fitted alone
    # gets the sizes wrong, the pair fitted together gets them right
    built = random_as_built(LADDER, 0.0002, seed=1, off={"leg3": 0.015, "series5": -0.012})
    m = synthesize(built, noise=60e-6, seed=2, repeats={0: 5, 128: 5, 255: 5})
    out = diagnose(m, LADDER).to_dict()
    pair = next(e for e in out["explanations"] if set(e["parts"]) == {"leg3", "series5"})
    assert pair["fits"]
    assert pair["parts"]["leg3"] == pytest.approx(0.015, abs=0.001)
    assert pair["parts"]["series5"] == pytest.approx(-0.012, abs=0.001)
    assert out["explanations"][0]["parts"] == pair["parts"]  # fewest parts first


@pytest.mark.parametrize("extra", ["loaded", "rout"])
def test_an_extra_measurement_breaks_the_tie(extra):
    design = Design(bits=8, vref=2.5)
    built = random_as_built(design, 0.0, seed=1, off={"leg7": 0.02})
    m = synthesize(built, noise=2e-5, seed=2, repeats={0: 4, 255: 4})
    alone = diagnose(m, design).to_dict()
    assert alone["ambiguous"]
    assert ["leg7", "series6"] in alone["identifiability"]["confounded"]
    if extra == "loaded":
        loaded = synthesize(built.replace(load_r=10e3), noise=2e-5, seed=3, repeats={0: 4})
        extras = Extras(loaded=loaded, load_ohms=10e3)
    else:
        codes = np.array([0, 128, 255])
        extras = Extras(rout=dict(zip(codes.tolist(), solve(build(built), codes=codes).rout.tolist(),
                                      strict=True)))
    out = diagnose(m, design, extras=extras).to_dict()
    assert not out["ambiguous"]
    assert out["identifiability"]["rank"] == alone["identifiability"]["rank"] + 1
    assert ["leg7", "series6"] not in out["identifiability"]["confounded"]
    assert out["explanations"][0]["parts"] == pytest.approx({"leg7": 0.02}, abs=2e-4)
    assert out["identifiability"]["extra_measurements"]


def test_output_resistance_entries_are_read_and_refused_clearly():
    assert read_rout(["128=10.02k", "0x10=9k9"]) == {128: 10020.0, 16: 9900.0}
    with pytest.raises(MeasurementError, match="CODE=OHMS"):
        read_rout(["128"])
    with pytest.raises(MeasurementError, match="ohms > 0"):
        read_rout(["5=-3"])


def test_a_board_the_design_cannot_explain_is_refused():
    built = random_as_built(LADDER, 0.0, seed=1, off={"leg3": 0.02})
    m = synthesize(built, noise=1e-5, seed=2, meter_gain=2.5)  # ×3.5: no part does that
    with pytest.raises(MeasurementError, match="no part is blamed"):
        diagnose(m, LADDER)
