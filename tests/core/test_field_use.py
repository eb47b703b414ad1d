"""The values pane greys out the fields a design ignores: check each rule against the engine.

An unused field, changed, must leave every figure unchanged; a used one must change something
(otherwise the rule hides a field that matters, or shows one that does nothing).
"""

from __future__ import annotations

import math

import numpy as np
import pytest

from rungwise.core import OUTPUTS_BY_TOPOLOGY, Design, evaluate
from rungwise.core.field_use import unused_fields

OTHER_VALUE = {"thermometer_bits": 1, "gain": 2.0, "feedback_r": 3.3e3, "ron_low": 70.0,
               "series_ratio": 1.1}
"""A value different from the base design's for each field the rules can grey out."""

VARIANTS = [(t, o) for t, outs in OUTPUTS_BY_TOPOLOGY.items() for o in outs]


def _base(topology: str, output: str) -> Design:
    return Design(topology=topology, output=output, bits=4, vref=2.0, unit_r=10e3, ron_high=40.0,
                  ron_low=25.0, load_r=50e3, thermometer_bits=2, load_c=1e-12)


def _figures(design: Design) -> tuple:
    ev = evaluate(design)
    scalars = tuple(v for v in ev.summary.values() if isinstance(v, (int, float)))
    return ev.vout, ev.rout, ev.iref, scalars


def _same(a: tuple, b: tuple) -> bool:
    arrays_equal = all(np.array_equal(x, y, equal_nan=True) for x, y in zip(a[:3], b[:3], strict=True))
    scalars_equal = all((math.isnan(x) and math.isnan(y)) or x == y
                        for x, y in zip(a[3], b[3], strict=True))
    return arrays_equal and scalars_equal


@pytest.mark.parametrize(("topology", "output"), VARIANTS)
def test_unused_fields_change_nothing_and_used_ones_do(topology, output):
    base = _base(topology, output)
    unused = unused_fields(base)
    reference = _figures(base)
    for key, value in OTHER_VALUE.items():
        changed = _figures(base.replace(**{key: value}))
        if key in unused:
            assert _same(changed, reference), f"{key} is greyed out but changes {topology}/{output}"
        else:
            assert not _same(changed, reference), f"{key} is shown but does nothing in {topology}/{output}"


def test_reasons_are_words_for_the_tooltip():
    reasons = unused_fields(_base("string", "unbuffered"))
    assert set(reasons) == {"thermometer_bits", "gain", "feedback_r", "ron_low", "series_ratio"}
    assert all(len(text.split()) > 4 for text in reasons.values())
    assert unused_fields(_base("segmented", "buffer")) == {
        "feedback_r": reasons["feedback_r"]}
