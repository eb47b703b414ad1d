"""The schematic layout: drawn from the network, designators and values as built, switch states."""

from __future__ import annotations

import re

import numpy as np
import pytest

from rungwise.core import OUTPUTS_BY_TOPOLOGY, Design, evaluate
from rungwise.core import schematic as sm
from rungwise.core.parts.designators import resistor_designators, switch_designators

VARIANTS = [(t, o) for t, outs in OUTPUTS_BY_TOPOLOGY.items() for o in outs]


def _design(topology: str, output: str, bits: int, **extra) -> Design:
    base = Design(topology=topology, output=output, bits=bits, unit_r=10e3, series="E24",
                  ref_r=15.0, load_r=47e3, load_c=2.2e-9,
                  thermometer_bits=2 if topology == "segmented" else None, **extra)
    rng = np.random.default_rng(bits)
    parts = {p["id"]: p["ohms"] * (1 + 0.003 * rng.standard_normal())
             for p in evaluate(base).parts}
    return base.replace(parts=parts)


@pytest.mark.parametrize(("topology", "output"), VARIANTS)
def test_small_design_draws_every_part_with_its_designator_and_value(topology, output):
    design = _design(topology, output, 3)
    ev = evaluate(design)
    sch = sm.schematic(design, code=5)
    drawn = {it.part_id: it for it in sch.items if isinstance(it, sm.Resistor) and it.part_id}
    des = resistor_designators(design, ev.network)
    for p in ev.parts:
        assert drawn[p["id"]].name == sm.names_text(des[p["id"]])
        assert drawn[p["id"]].value.startswith(sm.value_text(p["ohms"]))
    switches = [it for it in sch.items if isinstance(it, sm.Switch)]
    assert sorted(s.name for s in switches) == sorted(switch_designators(ev.network).values())
    kinds = {type(it) for it in sch.items}
    assert {sm.Source, sm.Terminal, sm.Ground, sm.Capacitor} <= kinds
    assert (sm.Amplifier in kinds) == (ev.network.counts["amplifiers"] == 1)


@pytest.mark.parametrize("code", [0, 5, 6, 7])
@pytest.mark.parametrize(("topology", "output"), VARIANTS)
def test_switches_are_drawn_in_the_state_of_the_code(topology, output, code):
    design = _design(topology, output, 3)
    sch = sm.schematic(design, code=code)
    switches = [it for it in sch.items if isinstance(it, sm.Switch)]
    if topology == "string":  # one tap closed: the code's
        closed = [s.name for s in switches if s.closed is not None]
        assert closed == [f"S{code + 1}"]
        return
    # a closed high throw (index 0) adds the leg's weight: the ideal output is their sum
    driven = sum(s.closed == 0 for s in switches)
    net = evaluate(design).network
    levels = np.asarray(net.decode(np.array([code])))[0]
    assert driven == int(np.sum(levels))


@pytest.mark.parametrize(("topology", "output"), VARIANTS)
def test_long_networks_are_shortened_and_say_what_is_left_out(topology, output):
    design = Design(topology=topology, output=output, bits=12,
                    thermometer_bits=4 if topology == "segmented" else None)
    sch = sm.schematic(design, code=1234)
    resistors = [it for it in sch.items if isinstance(it, sm.Resistor) and it.part_id]
    assert len(resistors) <= sm.MAX_COLUMNS + 6
    notes = " ".join(it.text for it in sch.items if isinstance(it, sm.Label))
    hidden = sum(int(n) for n in re.findall(r"(\d+) more", notes))
    total = len(evaluate(design).parts)
    shown_parts = {it.part_id for it in resistors}
    # every part is either drawn or counted in an ellipsis (stages hide a leg and a series part)
    assert hidden > 0
    assert len(shown_parts) + hidden * (2 if "stages" in notes else 1) >= total - 1


def test_code_outside_the_range_is_refused():
    with pytest.raises(ValueError, match="0 to 7"):
        sm.schematic(Design(bits=3), code=8)
