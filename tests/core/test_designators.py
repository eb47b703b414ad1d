"""Designators of the netlist and schematic match the bill of materials line by line."""

from __future__ import annotations

import pytest

from rungwise.core import OUTPUTS_BY_TOPOLOGY, Design, evaluate
from rungwise.core.parts.bom import bill_of_materials, ranges
from rungwise.core.parts.designators import resistor_designators, switch_designators

VARIANTS = [(t, o) for t, outs in OUTPUTS_BY_TOPOLOGY.items() for o in outs]
BUILDS = {"r2r-voltage": {"two_r": "two-units"}, "segmented": {"lsb_section": "unit-array"},
          "binary-weighted": {"binary": "unit-array"}}


def _numbers(names: list[str], prefix: str) -> list[int]:
    return sorted(int(n[len(prefix):].split(".")[0]) for n in names)


@pytest.mark.parametrize("array_size", [0, 3])
@pytest.mark.parametrize(("topology", "output"), VARIANTS)
def test_designators_match_bom_lines(topology, output, array_size):
    design = Design(topology=topology, output=output, bits=5, unit_r=10e3, series="E24",
                    thermometer_bits=2 if topology == "segmented" else None,
                    build=BUILDS.get(topology, {}), board={"array_size": array_size})
    ev = evaluate(design)
    des = resistor_designators(design, ev.network)
    lines = bill_of_materials(ev)
    prefix = "RN" if array_size else "R"
    seen: list[str] = []
    for ln in lines:
        if ln.kind not in {"resistor", "array"}:
            continue
        names = [n for pid in ln.part_ids for n in des[pid]]
        seen += names
        assert ranges(prefix, sorted(set(_numbers(names, prefix)))) == ln.designators
        if array_size:
            assert len(names) == ln.quantity * array_size - ln.leftover
    assert len(seen) == len(set(seen))  # every physical unit has its own name
    sw = switch_designators(ev.network)
    sw_line = next(ln for ln in lines if ln.kind == "switch")
    assert ranges("S", _numbers(list(sw.values()), "S")) == sw_line.designators
