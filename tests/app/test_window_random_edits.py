"""Hundreds of random valid and invalid entries through the widgets end in a consistent design."""

from __future__ import annotations

import math
import os
import random

from PySide6.QtWidgets import QComboBox, QLineEdit, QSpinBox

from rungwise.app.binding import display_text
from rungwise.core.design import FIELDS, Design
from rungwise.core.errors import DesignError
from rungwise.core.units import parse_value

GOOD = {
    "vref": ["3.3", "2.5 V", "5V", "-1.2", "1.024", "10"],
    "unit_r": ["4k7", "10 kΩ", "1k", "22k", "100", "2M2", "47 kohm"],
    "ron_high": ["0", "40", "25 Ω", "1k", "0.5"],
    "ron_low": ["0", "25", "12.5", "100m"],
    "ref_r": ["0", "1", "50 Ω", "2k"],
    "load_r": ["open", "100k", "1M", "10 kΩ", "inf"],
    "gain": ["1", "2", "-1", "0.5"],
    "feedback_r": ["", "10k", "4k7", "default"],
}
ACTIONS = int(os.environ.get("RUNGWISE_SOAK_ACTIONS", "320"))
"""Random actions per run; set RUNGWISE_SOAK_ACTIONS=2000 (or more) for the long run on demand."""

BAD = ["", "abc", "-5k", "1e30", "nan", "0", "--1", "4k7k", "1 %%", "-inf"]


def _expect(design: Design, key: str, text: str) -> Design | None:
    try:
        return design.with_settings({key: text})
    except DesignError:
        return None


def test_random_entries_keep_a_consistent_design(window, qtbot):
    rng = random.Random(20261201)
    pane, model = window.pane, window.model
    inputs = pane.binder.inputs
    text_keys = [k for k, w in inputs.items() if isinstance(w, QLineEdit)]
    applied = refused = 0
    for _ in range(ACTIONS):
        state = model.state
        before = state.current.design
        roll = rng.random()
        if roll < 0.08:
            state.select(rng.randrange(len(state.candidates)))
            continue
        if roll < 0.16:
            combo: QComboBox = inputs[rng.choice(["topology", "output"])]
            combo.setCurrentIndex(rng.randrange(combo.count()))
            combo.activated.emit(combo.currentIndex())
            assert state.current.design.topology == inputs["topology"].currentData()
            continue
        if roll < 0.26:
            spin: QSpinBox = inputs["bits"]
            spin.setValue(rng.randint(1, 12))
            pane.commit_pending()
            assert state.current.design.bits == spin.value()
            continue
        key = rng.choice(text_keys)
        pool = GOOD.get(key, ["1", "2.5", "0"])
        text = rng.choice(pool) if rng.random() < 0.6 else rng.choice(BAD)
        expected = _expect(before, key, text)
        edit: QLineEdit = inputs[key]
        edit.setText(text)
        edit.editingFinished.emit()
        after = state.current.design
        if expected is None:
            refused += 1
            assert after.to_dict() == before.to_dict()
            assert pane.binder.is_refused(key)
            assert pane.binder.error_label(key).text()
        else:
            applied += 1
            assert after.to_dict() == expected.to_dict()
            assert not pane.binder.is_refused(key)
    assert applied > 100
    assert refused > 50
    # consistent end state: every candidate is a valid design, every unrefused widget shows it
    for cand in model.state.candidates:
        assert Design.from_dict(cand.design.to_dict()).to_dict() == cand.design.to_dict()
    design = model.state.current.design
    for key, w in inputs.items():
        if pane.binder.is_refused(key):
            continue
        if isinstance(w, QLineEdit):
            shown = w.text()
            assert shown == display_text(design, key)
            value = getattr(design, key)
            if value is None:
                assert shown == ""
            elif math.isinf(value):
                assert shown == "open"
            else:
                assert math.isclose(parse_value(shown), value, rel_tol=1e-5, abs_tol=1e-12)
        elif isinstance(w, QSpinBox):
            assert w.value() == getattr(design, key)
        elif isinstance(w, QComboBox):
            assert w.currentData() == display_text(design, key)
    assert set(FIELDS) <= set(inputs)
    # the curves and the table follow the final candidates
    qtbot.waitUntil(lambda: not window.live.is_busy() and not window.plots.is_drawing()
                    and window.live.latest is not None
                    and [r.design.to_dict() for r in window.live.latest.results]
                    == [d.to_dict() for d in model.state.designs], timeout=20000)
    assert window.table.columnCount() == len(model.state.candidates)
