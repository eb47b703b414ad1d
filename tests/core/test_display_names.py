"""Every network and output has a human name, and no name shows an id."""

from __future__ import annotations

from rungwise.core import Design
from rungwise.core.display_names import OUTPUT_NAMES, TOPOLOGY_NAMES, network_name
from rungwise.core.types import OUTPUTS_BY_TOPOLOGY, TOPOLOGIES


def test_every_id_has_a_distinct_human_name():
    assert set(TOPOLOGY_NAMES) == set(TOPOLOGIES)
    assert set(OUTPUT_NAMES) == {o for outs in OUTPUTS_BY_TOPOLOGY.values() for o in outs}
    names = [network_name(t, o) for t in TOPOLOGIES for o in OUTPUTS_BY_TOPOLOGY[t]]
    assert len(set(names)) == len(names)
    ids = set(TOPOLOGIES) | set(OUTPUT_NAMES)
    for name in names:
        assert not any(i in name for i in ids if "-" in i), name


def test_unnamed_candidate_reads_as_its_network():
    assert Design(topology="r2r-voltage", output="buffer").label == (
        "R-2R ladder, voltage out (buffered)")
    assert Design(name="Mine").label == "Mine"
