"""Part ids have one source: every builder makes exactly the ids ``part_ids`` spells, in order."""

from __future__ import annotations

import pytest

from rungwise.core import Design
from rungwise.core.part_ids import part_ids
from rungwise.core.topologies import build
from rungwise.core.types import OUTPUTS_BY_TOPOLOGY

CASES = [(t, o, lsb) for t, outs in OUTPUTS_BY_TOPOLOGY.items() for o in outs
         for lsb in (("r2r", "unit-array") if t == "segmented" else ("r2r",))]


@pytest.mark.parametrize(("topology", "output", "lsb_section"), CASES)
def test_builders_make_the_ids_part_ids_spells(topology, output, lsb_section):
    build_table = {"lsb_section": lsb_section} if topology == "segmented" else {}
    for bits in (1, 3, 5):
        d = Design(topology=topology, output=output, bits=bits, thermometer_bits=min(2, bits),
                   build=build_table)
        made = [p.part_id for p in build(d).parts]
        assert made == part_ids(topology, output, bits, d.thermometer_bits, d.build)


def test_unknown_topology_is_refused():
    with pytest.raises(ValueError, match="unknown topology"):
        part_ids("ring", "unbuffered", 4)
