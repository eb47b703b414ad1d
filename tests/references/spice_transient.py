"""ngspice transient of one code change of a neutral ``Network`` (for the glitch checks).

The circuit is written from the network itself, element by element: fixed nodes are voltage
sources (a virtual-ground summing node a 0 V source whose current gives −Rf·i), resistors are
resistors, every node has ``node_c`` to ground and an unbuffered output ``load_c`` more. A leg
that does not switch is one resistor R + ron to its rail. A leg that switches is two behavioural
current sources, old and new position, weighted by a step at the edge's midpoint (1 fs edge),
each in series with the moving end's offset from its rail: a PWL ramp s(t) from 0 to 1 over the
edge, the pole being old rail + s·ΔV before the midpoint and new rail − (1 − s)·ΔV after it
(ΔV: the change of the rails' ideal voltage). ngspice integrates the circuit with its own time
step; nothing of our solver is used.
"""

from __future__ import annotations

import numpy as np

from references.spice import _num, run_netlist
from rungwise.core.element_arrays import plain_equivalent
from rungwise.core.network import GROUND, Network


def _node(name: str | None) -> str:
    return "0" if name in (None, GROUND) else f"n_{name}"


def transient(net: Network, from_code: int, to_code: int, leg_start: np.ndarray, rise: float,
              fall: float, node_c: float, load_c: float, t_stop: float, t_max: float
              ) -> tuple[np.ndarray, np.ndarray]:
    """Time (s) and output (V) of the change ``from_code`` → ``to_code`` from ngspice.

    ``leg_start`` (L,) s: each plain leg's edge start (the solver's ``leg_skews``). A leg whose
    edge is 0 is given a 1 ps one (ngspice needs a finite slope).
    """
    plain = plain_equivalent(net)
    d_f = np.asarray(plain.decode(np.array([from_code])), bool)[0]
    d_t = np.asarray(plain.decode(np.array([to_code])), bool)[0]
    out = plain.output
    lines = ["* rungwise reference: transient of one code change"]
    for name, volts in plain.fixed.items():
        if name != GROUND:
            lines.append(f"v_{name} {_node(name)} 0 DC {_num(volts)}")
    for k, r in enumerate(plain.resistors):
        lines.append(f"r{k} {_node(r.a)} {_node(r.b)} {_num(r.ohms)}")
    unknown = plain.unknown_nodes()
    for name in unknown:
        c = node_c + (load_c if out.kind == "node" and not out.buffered and name == out.node else 0)
        if c > 0:
            lines.append(f"c_{name} {_node(name)} 0 {_num(c)}")
    if out.kind == "node" and not out.buffered and np.isfinite(out.load_ohms):
        lines.append(f"rload {_node(out.node)} 0 {_num(out.load_ohms)}")
    ref_nodes = {r.b if r.a == plain.source else r.a for r in plain.resistors
                 if r.role == "reference" and plain.source in (r.a, r.b)}

    def ideal(node):
        if node is None:
            return np.nan
        if node in plain.fixed:
            return plain.fixed[node]
        return plain.fixed[plain.source] if node in ref_nodes else np.nan

    for k, leg in enumerate(plain.legs):
        rails = {True: (leg.high, leg.ohms + leg.ron_high), False: (leg.low, leg.ohms + leg.ron_low)}
        if d_f[k] == d_t[k]:
            rail, ohms = rails[bool(d_t[k])]
            if rail is not None:
                lines.append(f"rleg{k} {_node(leg.node)} {_node(rail)} {_num(ohms)}")
            continue
        edge = max(rise if d_t[k] else fall, 1e-12)
        t0 = float(leg_start[k])
        mid = t0 + edge / 2
        dv = ideal(rails[bool(d_t[k])][0]) - ideal(rails[bool(d_f[k])][0])
        dv = 0.0 if not np.isfinite(dv) else dv
        lines.append(f"vs{k} s{k} 0 PWL(0 0 {_num(t0)} 0 {_num(t0 + edge)} 1)")
        lines.append(f"vm{k} m{k} 0 PWL(0 0 {_num(mid)} 0 {_num(mid + 1e-15)} 1)")
        for state, weight, offset in ((bool(d_f[k]), f"(1-v(m{k}))", f"v(s{k})*{_num(dv)}"),
                                      (bool(d_t[k]), f"v(m{k})", f"-(1-v(s{k}))*{_num(dv)}")):
            rail, ohms = rails[state]
            if rail is None:
                continue
            a, b = _node(leg.node), _node(rail)
            lines.append(f"b{k}_{int(state)} {a} {b} I={weight}*(v({a})-v({b})-({offset}))"
                         f"/{_num(ohms)}")
    vec = run_netlist("\n".join(lines) + "\n.options reltol=1e-7 abstol=1e-15 vntol=1e-10",
                      f"tran {_num(t_max)} {_num(t_stop)} 0 {_num(t_max)}")
    if out.kind == "virtual-ground":
        y = -out.feedback_ohms * vec[f"i(v_{out.node})"]  # current into the summing node
    else:
        y = vec[f"v({_node(out.node)})"] * (out.gain if out.buffered else 1.0)
    return vec["time"], y
