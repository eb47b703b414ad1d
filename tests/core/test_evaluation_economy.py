"""One evaluation builds the network once, compiles it once and solves it once at the nominal
temperature, at every size; drift solves only when some part drifts. Counted, not timed."""

from __future__ import annotations

import sys
from collections import Counter

import numpy as np
import pytest

import rungwise.core.solve as solver
from rungwise.core import OUTPUTS_BY_TOPOLOGY, Design, evaluate, topologies
from rungwise.core.metrics.power import worst_case


@pytest.fixture
def counted(monkeypatch):
    """Counts of builds, nominal compiles and solves (nominal: no part overrides), with the
    module that asked for each solve; nested solves (the solver calling itself) count once."""
    seen: Counter = Counter()
    real_build, real_solve, real_init = topologies.build, solver.solve, solver._Stamps.__init__
    depth = [0]

    def build(*args, **kwargs):
        seen["build"] += 1
        return real_build(*args, **kwargs)

    def solve_from(module: str):
        def solve(net, ohms=None, *args, **kwargs):
            if depth[0] == 0:
                seen[("solve", "trials" if ohms else "nominal", module)] += 1
            depth[0] += 1
            try:
                return real_solve(net, ohms, *args, **kwargs)
            finally:
                depth[0] -= 1
        return solve

    def init(self, net, ohms):
        if not ohms:
            seen["nominal compile"] += 1
        real_init(self, net, ohms)

    for name, module in list(sys.modules.items()):
        if not name.startswith("rungwise.core"):
            continue
        if getattr(module, "build", None) is real_build:
            monkeypatch.setattr(module, "build", build)
        if getattr(module, "solve", None) is real_solve:
            monkeypatch.setattr(module, "solve", solve_from(name.rsplit(".", 1)[-1]))
    monkeypatch.setattr(solver._Stamps, "__init__", init)
    return seen


def _nominal_solves(seen: Counter) -> int:
    return sum(n for key, n in seen.items() if key[:2] == ("solve", "nominal"))


@pytest.mark.parametrize(("topology", "output"),
                         [(t, o) for t, outs in OUTPUTS_BY_TOPOLOGY.items() for o in outs])
def test_every_topology_is_built_compiled_and_solved_once(counted, topology, output):
    design = Design(topology=topology, output=output, bits=8, ron_high=12.0, ron_low=8.0,
                    ref_r=1.0, load_r=5e4)
    evaluate(design)
    assert counted["build"] == 1
    assert _nominal_solves(counted) == 1
    assert counted["nominal compile"] <= 1  # strings are solved by the tap table, not stamps
    assert counted[("solve", "trials", "drift")] == 0  # no part drifts


@pytest.mark.parametrize("bits", [16, 17])
def test_above_the_kept_size_the_power_figures_come_from_the_same_solve(counted, bits):
    design = Design(topology="r2r-voltage", bits=bits, ron_high=12.0, ron_low=8.0, load_r=1e5)
    ev = evaluate(design)
    assert counted["build"] == 1
    assert _nominal_solves(counted) == 1
    assert counted["nominal compile"] == 1
    # the streamed power figures equal the separate power pass's (chunked above 2^16 codes)
    counted.clear()
    elements, totals = worst_case(ev.network)
    assert _nominal_solves(counted) >= 1
    assert ev.summary["power_total_max"] == pytest.approx(totals["power_total_max"], rel=1e-12)
    assert ev.summary["power_total_max_code"] == totals["power_total_max_code"]
    mine = {row["id"]: row["power_max"] for row in ev.parts}
    for e in elements:
        if e.kind == "part":
            assert mine[e.name] == pytest.approx(e.power_max, rel=1e-12)


def test_drift_solves_only_when_a_part_drifts(counted):
    still = Design(topology="r2r-voltage", bits=8, ron_high=12.0, ron_low=8.0)
    evaluate(still)
    assert counted[("solve", "trials", "drift")] == 0
    counted.clear()
    drifting = still.replace(mismatch={"tempco": 25e-6})
    ev = evaluate(drifting)
    assert counted[("solve", "trials", "drift")] == 1
    assert _nominal_solves(counted) == 1
    assert np.isfinite(ev.summary["drift_gain_error_high"])
