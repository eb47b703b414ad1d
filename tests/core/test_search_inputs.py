"""The search's inputs: the cost table, the question, design files, and the nominal reason."""

from __future__ import annotations

import pytest

from rungwise.core import Design, evaluate
from rungwise.core.cost import EXAMPLE_NOTE, CostTable
from rungwise.core.designfile import DesignFile, dumps, loads
from rungwise.core.errors import DesignError
from rungwise.core.nominal_reason import nominal_failure
from rungwise.core.search_question import (
    SearchQuestion,
    family_networks,
    parse_int_range,
    parse_unit_r,
)


def test_cost_table_defaults_say_they_are_invented() -> None:
    table = CostTable()
    assert table.source == EXAMPLE_NOTE
    assert table.to_dict() == {}
    mine = CostTable.from_dict({"switch": 0.2, "resistor": {"1%": 0.01, "0.1%": 0.1}})
    assert mine.switch == 0.2
    assert "invented example prices" in mine.source
    assert "resistor" not in mine.examples
    # a grade between listed ones is priced as the next tighter listed grade (never cheaper)
    assert mine.grade_price("resistor", 0.005, "E96") == 0.1
    assert mine.grade_price("resistor", 0.02, "E96") == 0.01
    with pytest.raises(DesignError, match="no price"):
        mine.grade_price("resistor", 0.0005, "E96")
    full = CostTable.from_dict({"switch": 1, "amplifier": 1, "area_per_part": 0, "resistor": {"1%": 1},
                                "array_package": {"1%": 1}, "series_factor": {"E96": 1}})
    assert full.source == "your prices"


@pytest.mark.parametrize(("data", "field"), [
    ({"switch": -1}, "cost.switch"),
    ({"resistor": {"cheap": 1}}, "cost.resistor.cheap"),
    ({"series_factor": {"E7": 1}}, "cost.series_factor.E7"),
    ({"pens": 1}, "cost.pens"),
])
def test_cost_table_refusals_name_the_key(data: dict, field: str) -> None:
    with pytest.raises(DesignError) as err:
        CostTable.from_dict(data)
    assert err.value.field == field


def test_question_parsing() -> None:
    assert parse_int_range("0-3", "m", 0, 16) == (0, 1, 2, 3)
    assert parse_int_range("1,4", "m", 0, 16) == (1, 4)
    # IEC 60063 E6: 1.0 1.5 2.2 3.3 4.7 6.8 per decade
    assert parse_unit_r("1k-10k", "E6") == (1e3, 1.5e3, 2.2e3, 3.3e3, 4.7e3, 6.8e3, 10e3)
    assert parse_unit_r("4k7,10k", "E6") == (4.7e3, 10e3)
    passive = family_networks("unbuffered")
    assert ("r2r-voltage", "unbuffered") in passive
    assert ("binary-weighted", "divider") in passive
    assert all(o not in ("buffer", "summing-amp", "transimpedance") for _, o in passive)
    assert ("r2r-current", "transimpedance") in family_networks("buffer")
    q = SearchQuestion.from_dict({"topologies": ["segmented"], "thermometer_bits": "2-3",
                                  "grades": ["1%", "0.1%"], "max_iref": "1m", "trials": 500})
    assert q.grades == (0.01, 0.001)
    assert q.max_iref == pytest.approx(1e-3)
    assert len(q.networks_of(Design(bits=8))) == 2 * 2  # M = 2, 3 × two series
    assert SearchQuestion.from_dict(q.to_dict()) == q


@pytest.mark.parametrize(("data", "field"), [
    ({"grades": "60%"}, "search.grades"),
    ({"criterion": "fast"}, "search.criterion"),
    ({"thermometer_bits": "5-2"}, "search.thermometer_bits"),
    ({"unit_r": "100k-1k"}, "search.unit_r"),
    ({"trials": 3}, "search.trials"),
    ({"topologies": ["string:buffered"]}, "search.topology"),
    ({"colour": 1}, "search.colour"),
])
def test_question_refusals_name_the_key(data: dict, field: str) -> None:
    with pytest.raises(DesignError) as err:
        SearchQuestion.from_dict(data)
    assert err.value.field == field


def test_design_file_keeps_search_and_cost() -> None:
    q = SearchQuestion.from_dict({"grades": ["0.5%", "0.1%"], "max_rout": "20k"})
    cost = CostTable.from_dict({"switch": 0.3})
    text = dumps(DesignFile([Design()], search=q, cost=cost))
    assert "[search]" in text
    assert "[cost]" in text
    back = loads(text)
    assert back.search == q
    assert back.cost is not None
    assert back.cost.switch == 0.3
    assert loads(dumps(DesignFile([Design()]))).search is None
    bad = text.replace("sealed = true\n", "").replace("switch = 0.3", "switch = \"x\"")
    with pytest.raises(DesignError, match=r"cost\.switch"):
        loads(bad)


@pytest.mark.parametrize(("topology", "output"), [("r2r-voltage", "unbuffered"),
                                                  ("binary-weighted", "terminated-divider"),
                                                  ("segmented", "unbuffered")])
def test_switches_named_as_the_real_reason(topology: str, output: str) -> None:
    """Three 12-bit networks with 40 Ω / 25 Ω switches are non-monotonic before any mismatch; the
    reason names the switches and a change that is checked to work (solving it again)."""
    d = Design(topology=topology, output=output, bits=12, ron_high=40, ron_low=25)
    failure = nominal_failure(d)
    assert failure is not None
    assert "non-monotonic" in failure.missed
    assert any("switch resistance" in c for c in failure.causes)
    text = failure.text()
    assert "nominal design already fails" in text
    change = next(c for c in failure.changes if c.startswith("raise R"))
    factor = float(change.split("(×")[1].split(")")[0])
    fixed = evaluate(d.replace(unit_r=d.unit_r * factor)).summary
    assert fixed["monotonic"]
    assert fixed["max_abs_inl_endpoint"] <= 0.5


def test_nominal_success_has_no_reason() -> None:
    assert nominal_failure(Design(bits=8)) is None
    snapped = Design(topology="binary-weighted", bits=10, series="E24")
    failure = nominal_failure(snapped)
    assert failure is not None
    assert any("snapping to E24" in c for c in failure.causes)
    assert any("exact" in c for c in failure.changes)


def test_loosest_grade_words_give_the_real_reason() -> None:
    from rungwise.core.nominal_reason import loosest_grade_words

    switched = Design(bits=12, ron_high=40, ron_low=25)
    words = loosest_grade_words(switched, None, 0.0001)
    assert words.startswith("none — The nominal design already fails")
    assert "switch resistance" in words
    assert loosest_grade_words(Design(bits=12), None, 0.0001) == "tighter than ±0.01 %"
    assert loosest_grade_words(Design(bits=12), 0.001, 0.0001) == "±0.1 %"


def test_nominal_reason_stops_on_cancel_and_answers_from_cache() -> None:
    import threading

    d = Design(bits=10, ron_high=40, ron_low=25, vref=1.25)
    stop = threading.Event()
    stop.set()
    assert nominal_failure(d, cancel=stop) is None  # stopped before its trial solves
    assert nominal_failure(d, cached_only=True) is None  # not asked before
    solved = nominal_failure(d)
    assert solved is not None
    assert nominal_failure(d, cached_only=True) is solved
