"""The Qt-free comparison state and the figures-table rules."""

from __future__ import annotations

import numpy as np
import pytest

from rungwise.app.plots.decimate import envelope, value_range
from rungwise.app.window.compare_table import best_columns, cell_text
from rungwise.app.window.comparison_state import (
    CANDIDATE_COLOURS,
    MAX_CANDIDATES,
    ComparisonState,
    with_colours,
)
from rungwise.core.demo import demo_candidates
from rungwise.core.display_names import network_name


def _state() -> tuple[ComparisonState, list[str]]:
    heard: list[str] = []
    state = ComparisonState(with_colours(demo_candidates()[:2]))  # two networks of the demo
    state.subscribe(heard.append)
    return state, heard


def test_every_edit_goes_through_apply_edit_and_is_announced():
    state, heard = _state()
    calls = []
    original = state.apply_edit
    state.apply_edit = lambda *a, **k: calls.append(a[1]) or original(*a, **k)
    state.set_design(0, state.designs[0].replace(bits=10), "bits")
    state.rename(1, "BW")
    state.set_colour(1, CANDIDATE_COLOURS[4])
    state.add()
    state.duplicate(0)
    state.remove(3)
    assert len(calls) == 6
    assert heard.count("candidates") == 6
    assert state.designs[0].bits == 10
    assert state.candidates[1].name == "BW"


def test_unchanged_edit_is_silent():
    state, heard = _state()
    assert not state.set_design(0, state.designs[0], "same")
    assert heard == []


def test_add_picks_an_uncompared_network_and_a_free_colour():
    state, _ = _state()
    state.add()
    new = state.candidates[-1]
    assert (new.design.topology, new.design.output) not in {
        (d.topology, d.output) for d in state.designs[:-1]}
    assert new.design.bits == state.designs[0].bits  # carries the edited one's values
    assert len({c.colour for c in state.candidates}) == 3
    assert state.selected == 2


def _network(state: ComparisonState, index: int, topology: str) -> None:
    """Change a candidate's network as the design pane does (the typed value applied)."""
    state.set_design(index, state.designs[index].with_settings({"topology": topology}), "network")


def test_a_name_the_program_gave_follows_the_network():
    state = ComparisonState(with_colours(demo_candidates(), named_by_program=True))
    _network(state, 0, "string")  # the demo's own name: the program's
    assert state.candidates[0].name == "Resistor string (unbuffered)"
    state.add()  # Add names the new candidate after its network …
    added = state.candidates[-1]
    assert added.given
    assert added.name == network_name(added.design.topology, added.design.output)
    _network(state, 3, "string")  # … and that name follows it, told apart from the first
    assert state.candidates[3].name == "Resistor string (unbuffered) 2"
    _network(state, 3, "r2r-current")
    assert state.candidates[3].name == "R-2R ladder, current out (into an amplifier)"
    assert [c.name for c in state.candidates[1:3]] == [d.name for d in demo_candidates()[1:]]


def test_a_name_the_person_typed_stays_with_the_network():
    state = ComparisonState(with_colours(demo_candidates(), named_by_program=True))
    state.rename(1, "Bias trim, rev C")
    _network(state, 1, "string")
    assert state.candidates[1].name == "Bias trim, rev C"
    assert not state.candidates[1].given
    state.rename(1, "")  # an emptied name is the program's again
    _network(state, 1, "segmented")
    assert state.candidates[1].name.startswith("Segmented ladder (unbuffered)")
    from_file = with_colours([demo_candidates()[0]])  # a name read from a file is the person's
    assert not from_file[0].given


def test_limits_and_selection_after_remove():
    state, _ = _state()
    while state.can_add():
        state.duplicate(0)
    assert len(state.candidates) == MAX_CANDIDATES
    assert not state.add()
    assert not state.duplicate(0)
    assert len({c.name for c in state.candidates}) == MAX_CANDIDATES
    state.select(3)
    state.remove(1)
    assert state.selected == 2
    while state.remove(0):
        pass
    assert len(state.candidates) == 1
    with pytest.raises(ValueError, match="between 1 and 4"):
        state.apply_edit([], "none")


@pytest.mark.parametrize(("key", "values", "best"), [
    ("max_abs_inl_endpoint", [0.2, 0.1, 0.3], {1}),
    ("offset_error", [-0.001, 0.002, 0.0005], {2}),
    ("monotonic", [True, False], {0}),
    ("n_resistors", [16, 9, 9], {1, 2}),
    ("n_resistors", [9, 9], set()),          # all equal: nothing to prefer
    ("lsb", [0.01, 0.02], set()),            # not judged
    ("max_abs_dnl", [0.1, None], set()),     # one value only
])
def test_best_value_per_row(key, values, best):
    assert best_columns(key, values) == best


def test_cell_text_units():
    assert cell_text("lsb", 0.01289) == "12.89 mV"
    assert cell_text("gain_error", -0.09104) == "-9.104 %"
    assert cell_text("monotonic", False) == "no"
    assert cell_text("rout_max_code", 255) == "255"


def test_envelope_keeps_single_code_spikes():
    y = np.zeros(65536)
    y[12345] = -1.5
    y[40000] = 0.7
    x, d = envelope(y, max_points=1000)
    assert len(x) <= 1000
    assert d.min() == -1.5
    assert d.max() == 0.7
    assert 12345 in x
    assert 40000 in x
    assert np.all(np.diff(x) >= 0)
    x2, d2 = envelope(y, 12000, 12400, max_points=1000)  # zoomed: every code drawn
    assert x2[0] == 11999
    assert x2[-1] == 12401
    assert len(x2) == 403
    assert value_range([d2, np.array([np.nan, 3.0])]) == (-1.5, 3.0)
