"""Transitions of a long resistor string with no node capacitance, through a three-node template.

With ``timing.node_c = 0`` the string's taps carry no charge, so during a change from tap a to
tap b (a < b) the rest of the string is exactly three resistors: a to ground (the string below a),
a to b (between them) and b to the reference (above b, with ``ref_r``). The tap switches join a
and b to the output (which carries ``load_c``). One template network of unit resistors serves
every transition; each row scales its three conductances (``transient.respond(..., scale=)``),
so all transitions are solved as one batch whatever the string's length. Tap 0 is ground itself:
its "string below" is taken as 1 mΩ (the smallest part value; a 1e−7 relative change of a 10 kΩ
string's lowest tap).
"""

from __future__ import annotations

import numpy as np

from ..design import MIN_OHMS
from ..network import GROUND, Network, Output, Resistor, SwitchedLeg
from .switching import Branches, branches

TEMPLATE_RESISTORS = 3
"""Branches 0 … 2 of the template: a–ground, a–b, b–reference."""


def template(net: Network, load_c: float) -> Branches:
    """The three-node template of ``net`` (a string with a selector) as branches."""
    sel, src = net.selector, net.source
    vref = net.fixed[src]
    out = net.output
    legs = [SwitchedLeg("tap_a", "tap switch", "a", sel.out, None, max(sel.ron, MIN_OHMS), 0, 0),
            SwitchedLeg("tap_b", "tap switch", "b", sel.out, None, max(sel.ron, MIN_OHMS), 0, 0)]
    tnet = Network(
        fixed={GROUND: 0.0, "vsrc": vref}, source="vsrc",
        resistors=[Resistor("low", "string", "a", GROUND, 1.0),
                   Resistor("between", "string", "a", "b", 1.0),
                   Resistor("high", "string", "b", "vsrc", 1.0)],
        legs=legs, n_codes=2,
        decode=lambda c: np.stack([np.asarray(c) == 0, np.asarray(c) == 1], axis=1),
        output=Output("node", sel.out, buffered=out.buffered, gain=out.gain,
                      load_ohms=out.load_ohms))
    return branches(tnet, 0.0, load_c)


def pair_scale(net: Network, br: Branches, low_tap: np.ndarray, high_tap: np.ndarray
               ) -> np.ndarray:
    """Per-row conductance scales (B, K) of the template for taps ``low_tap`` < ``high_tap``."""
    ohms = np.asarray(net.chains[0].ohms, float)
    cum = np.concatenate([[0.0], np.cumsum(ohms)])
    ref_r = sum(r.ohms for r in net.resistors if r.role == "reference")
    below = np.maximum(cum[low_tap], MIN_OHMS)
    between = cum[high_tap] - cum[low_tap]
    above = cum[-1] - cum[high_tap] + ref_r
    scale = np.ones((low_tap.size, br.static_w.size))
    scale[:, :TEMPLATE_RESISTORS] = 1.0 / np.stack([below, between, above], axis=1)
    return scale


def applies(net: Network, node_c: float) -> bool:
    """Whether the template holds: a single string with a tap switch and no node capacitance."""
    return (net.selector is not None and len(net.chains) == 1 and node_c == 0 and not net.legs
            and not net.groups and all(r.role == "reference" for r in net.resistors))
