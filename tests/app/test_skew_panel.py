"""The values pane's "make it monotonic by design": search on a worker, cost shown, undoable apply."""

from __future__ import annotations

import pytest

from rungwise.app.window.design_pane import DesignPane
from rungwise.app.window.skew_panel import answer_text
from rungwise.core import Design, evaluate
from rungwise.core.skew import ratio_for_monotonic


@pytest.fixture
def pane(qtbot):
    p = DesignPane()
    qtbot.addWidget(p)
    yield p
    p.shutdown()


def test_search_shows_the_cost_and_apply_edits_the_design(pane, qtbot):
    design = Design(bits=8, mismatch={"tolerance": 0.01}, name="ladder")
    pane.set_design(design)
    edits = []
    pane.design_edited.connect(lambda d, text: edits.append((d, text)))
    pane.skew.find()
    qtbot.waitUntil(lambda: pane.skew.button_apply.isEnabled(), timeout=60000)
    answer = ratio_for_monotonic(design)
    assert pane.skew.label.text() == answer_text(design, answer)
    assert "Cost: max |INL|" in pane.skew.label.text()
    pane.skew.apply()
    assert len(edits) == 1
    new, text = edits[0]
    assert new.series_ratio == answer.ratio
    assert "Monotonic by design" in text
    assert evaluate(new).summary["guaranteed_monotonic"] is True


def test_an_answer_for_another_design_is_dropped(pane, qtbot):
    pane.set_design(Design(bits=8, name="a"))
    pane.skew.find()
    pane.set_design(Design(topology="string", bits=4, name="b"))
    qtbot.wait(50)
    qtbot.waitUntil(lambda: not pane.skew.runner.is_busy("skew"), timeout=60000)
    assert not pane.skew.button_apply.isEnabled()
    assert pane.skew.label.text() == ""


def test_words_for_no_ratio_and_already_monotonic():
    string = Design(topology="string", bits=4)
    assert "No series ratio found" in answer_text(string, ratio_for_monotonic(string))
    small = Design(topology="binary-weighted", bits=4)
    assert answer_text(small, ratio_for_monotonic(small)).startswith("Already monotonic")
