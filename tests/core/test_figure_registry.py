"""One registry of figures: every figure the engine reports is registered once, with a unit the
formatter knows, and every table of labels is read from it."""

from __future__ import annotations

import pytest

from rungwise.core import SUMMARY_KEYS, Design, evaluate
from rungwise.core.figure_registry import FIGURES, SUMMARY, YIELDS, figure
from rungwise.core.formatting import PERCENT_UNITS, PPM_UNITS, SI_UNITS
from rungwise.core.skew import add_skew_figures
from rungwise.core.stats_result import YIELDS as STAT_YIELDS
from rungwise.core.sweep import STAT_KEYS, SWEEP_KEYS
from rungwise.core.types import OUTPUTS_BY_TOPOLOGY

PLAIN_UNITS = {"", "LSB", "×", "R", "°C", "bits", "dB"}


def test_keys_are_unique_and_units_known():
    keys = [f.key for f in (*SUMMARY, *YIELDS)]
    assert len(keys) == len(set(keys)) == len(FIGURES)
    for f in FIGURES.values():
        assert f.label.strip(), f.key
        assert f.unit in SI_UNITS | PERCENT_UNITS | PPM_UNITS | PLAIN_UNITS, f.key


@pytest.mark.parametrize("topology", list(OUTPUTS_BY_TOPOLOGY))
def test_every_reported_figure_is_registered(topology):
    ev = evaluate(Design(topology=topology, bits=4, thermometer_bits=2, load_c=1e-9))
    add_skew_figures(ev)
    assert [k for k in ev.summary if k not in FIGURES] == []


def test_every_label_table_reads_the_registry():
    assert {k: (f.label, f.unit) for k, f in FIGURES.items() if f in SUMMARY} == SUMMARY_KEYS
    assert list(SUMMARY_KEYS) == [f.key for f in SUMMARY]
    assert {f.key: f.label for f in YIELDS} == STAT_YIELDS
    assert {f.key: (f.label, f.unit) for f in YIELDS} == STAT_KEYS
    assert list(SWEEP_KEYS) == [*SUMMARY_KEYS, *STAT_KEYS]
    assert figure("yield_all").label == "Yield, all targets"  # one name for one yield
    assert figure("not_registered").label == "not_registered"
