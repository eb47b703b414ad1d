"""The values pane greys out build keys a design ignores: check ``unused_build_keys`` against the
engine (an unused key, changed, leaves every figure and part unchanged; a used one changes some)."""

from __future__ import annotations

import pytest

from rungwise.core import OUTPUTS_BY_TOPOLOGY, Design, evaluate
from rungwise.core.build_style import BUILD_OPTIONS, unused_build_keys

VARIANTS = [(t, o, s) for t, outs in OUTPUTS_BY_TOPOLOGY.items() for o in outs
            for s in (("r2r", "unit-array") if t == "segmented" else ("r2r",))]


def _look(design: Design) -> tuple:
    ev = evaluate(design)
    parts = [(p["id"], p["ohms"]) for p in ev.parts]
    return ev.vout.tolist(), ev.summary["n_resistors"], ev.summary["n_distinct_values"], parts


@pytest.mark.parametrize(("topology", "output", "section"), VARIANTS)
def test_unused_build_keys_change_nothing_and_used_ones_do(topology, output, section):
    base = Design(topology=topology, output=output, bits=4, thermometer_bits=2, unit_r=10e3,
                  ron_high=40.0, ron_low=25.0, series="E24", build={"lsb_section": section})
    unused = unused_build_keys(base)
    reference = _look(base)
    for key, values in BUILD_OPTIONS.items():
        if key == "lsb_section":
            continue  # the section is the variant itself
        changed = _look(base.replace(build={**base.build, key: values[1]}))
        if key in unused:
            assert changed == reference, f"build.{key} is greyed out but changes {topology}"
        else:
            assert changed != reference, f"build.{key} is offered but does nothing in {topology}"
    other = "unit-array" if section == "r2r" else "r2r"
    moved = _look(base.replace(build={**base.build, "lsb_section": other}))
    assert (moved == reference) == ("lsb_section" in unused)
    assert all(len(text.split()) > 4 for text in unused.values())
