"""A candidate as a SPICE netlist, for re-checking it in a circuit simulator.

:func:`spice_netlist` writes the design *as built* (snapped and as-built part values, each
physical unit as its own resistor named by its bill-of-materials designator), the reference
source behind its output resistance, the load resistance and capacitance, every network node's
capacitance (``timing.node_c``), and every switch as a resistor (its on-resistance) in the
state of one code — or, with ``all_codes``, as behavioural conductances decoded from a swept
code voltage. The output node is ``out``; an amplifier output is an ideal amplifier made of a
voltage-controlled source (a buffer: ``out`` = gain × its input; a summing node: a very large
gain holding the node at 0 V with the feedback resistor to ``out``). A ``.control`` block runs
``op`` (or the ``dc`` sweep) and prints ``v(out)``.

Only the common subset of SPICE syntax is used (R, C, V, E elements, ``.end``), plus behavioural
``B`` sources and ``floor``/``u`` for the all-codes sweep, which ngspice reads.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from .design import Design
from .formatting import format_si
from .network import GROUND, BinaryDecoder, Network, PartArray, PartList
from .parts.designators import AMPLIFIER, resistor_designators, switch_designators

IDEAL_GAIN = 1e9
"""Gain of the voltage-controlled source that stands for an ideal amplifier on a summing node."""

IDEAL_SWITCH_OHMS = 1e-6
"""On-resistance written for an ideal (0 Ω) switch in the all-codes sweep, ohms (a behavioural
conductance cannot be infinite); single-code netlists use a 0 V source, an exact short."""

OUT = "out"
"""Name of the output node."""


def _num(x: float) -> str:
    return repr(float(x))


@dataclass
class _Writer:
    net: Network
    design: Design
    lines: list[str]
    rdes: dict[str, tuple[str, ...]]
    sdes: dict[str, str]
    rename: dict[str, str]

    def __post_init__(self) -> None:
        self.joined = _joined_lookup(self.net)

    def node(self, name: str | None) -> str:
        if name is None or name == GROUND:
            return "0"
        return self.rename.get(name, name)

    def part(self, pid: str, a: str, b: str, ohms: float, note: str) -> None:
        """One part as its physical units between nodes ``a`` and ``b``."""
        names = self.rdes.get(pid, (pid,))
        joined = self.joined(pid)
        u = len(names)
        if u == 1 or joined == "single":
            self.lines.append(f"{_el(names[0])} {a} {b} {_num(ohms)} ; {note}")
            return
        if joined == "parallel":
            for name in names:
                self.lines.append(f"{_el(name)} {a} {b} {_num(ohms * u)} ; {note}, 1 of {u} "
                                  "in parallel")
            return
        nodes = [a, *[f"{a}_{pid}_{j}" for j in range(1, u)], b]
        for j, name in enumerate(names):
            self.lines.append(f"{_el(name)} {nodes[j]} {nodes[j + 1]} {_num(ohms / u)} ; {note}, "
                              f"{j + 1} of {u} in series")


def _el(designator: str) -> str:
    """A SPICE element name from a designator (``RN2.3`` → ``RN2_3``)."""
    return designator.replace(".", "_")


def _joined_lookup(net: Network):
    """``pid`` → how its units are joined, read per part-list block (no Part object made)."""
    arrays, single = {}, {}
    for b in PartList.of(net.parts).blocks:
        if isinstance(b, PartArray):
            arrays[b.prefix] = b
        else:
            single[b.part_id] = b.joined

    def joined(pid: str) -> str:
        if pid in single:
            return single[pid]
        b = arrays.get(pid.rstrip("0123456789"))
        return b.joined if b is not None and b.index_of(pid) is not None else "single"

    return joined


def _switch(w: _Writer, sname: str, a: str, rails: list[tuple[str, str | None, float, str]]
            ) -> None:
    """Switch ``sname`` from node ``a`` to each rail (position letter, rail, on-resistance,
    state: ``"1"`` closed, ``"0"`` open, or an expression of the code voltage)."""
    for pos, rail, ron, state in rails:
        if rail is None or state == "0":
            continue
        b = w.node(rail)
        if state == "1":
            if ron > 0:
                w.lines.append(f"R{sname} {a} {b} {_num(ron)} ; switch {sname} closed")
            else:
                w.lines.append(f"V{sname} {a} {b} DC 0 ; switch {sname} closed, ideal")
            continue
        g = 1.0 / max(ron, IDEAL_SWITCH_OHMS)
        w.lines.append(f"B{sname}{pos} {a} {b} I=(v({a})-v({b}))*{_num(g)}*{state}")


def _bit_state(bit: int) -> str:
    return f"(floor((v(code)+0.5)/{2 ** bit})-2*floor((v(code)+0.5)/{2 ** (bit + 1)}))"


def _legs(w: _Writer, code: int | None) -> None:
    """Switched legs and thermometer segments: the leg resistor, then its switch."""
    net = w.net
    decoder = net.decode
    drive = None if code is None else np.asarray(decoder(np.array([code])))[0]
    n_legs = len(net.legs)
    if code is None and (net.legs or net.groups) and not isinstance(decoder, BinaryDecoder):
        raise ValueError("this network's decoder cannot be written as a sweep")
    members = [(leg, j, None) for j, leg in enumerate(net.legs)]
    for g, grp in enumerate(net.groups):
        members += [(leg, n_legs + g, i) for i, leg in enumerate(grp.legs())]
    for leg, col, level_index in members:
        sname = w.sdes[leg.part_id]
        mid = sname.lower()
        w.part(leg.part_id, w.node(leg.node), mid, leg.ohms, f"{leg.part_id} ({leg.role})")
        if code is not None:
            on = bool(drive[col] > level_index) if level_index is not None else bool(drive[col])
            high, low = ("1", "0") if on else ("0", "1")
        elif level_index is None:
            high = _bit_state(decoder.leg_bits[col])
            low = f"(1-{high})"
        else:
            shift = decoder.level_shifts[col - n_legs]
            high = f"u(floor((v(code)+0.5)/{2 ** shift})-{level_index}-0.5)"
            low = f"(1-{high})"
        _switch(w, sname, mid, [("H", leg.high, leg.ron_high, high),
                                ("L", leg.low, leg.ron_low, low)])


def _selector(w: _Writer, code: int | None) -> None:
    sel = w.net.selector
    if code is not None:  # one tap switch closed; the others are open and write nothing
        i = int(np.asarray(sel.select(np.array([code])))[0])
        _switch(w, w.sdes[f"{sel.part_id}{i}"], w.node(sel.nodes[i]),
                [("H", sel.out, sel.ron, "1")])
        w.lines.append(f"* the other {w.net.n_codes - 1} tap switches are open")
        return
    for i in range(w.net.n_codes):  # one tap switch per code
        state = f"(u(v(code)-{i}+0.5)-u(v(code)-{i}-0.5))"
        _switch(w, w.sdes[f"{sel.part_id}{i}"], w.node(sel.nodes[i]),
                [("H", sel.out, sel.ron, state)])


def code_text(code: int, bits: int) -> str:
    """``"37 (0b100101)"``: a code in decimal and binary, MSB first."""
    return f"{code} (0b{code:0{bits}b})"


def spice_netlist(design: Design, code: int | None = None, all_codes: bool = False,
                  version: str = "", source: str = "") -> str:
    """The netlist text of ``design`` at ``code`` (or swept over every code with ``all_codes``).

    ``version`` and ``source`` (the design file's name) only go into the comment header.

    Raises
    ------
    ValueError
        ``code`` is missing or outside 0 … 2^N − 1 (and ``all_codes`` is not set).
    """
    from .topologies import build

    n_codes = 2 ** design.bits
    if not all_codes and (code is None or not 0 <= int(code) < n_codes):
        raise ValueError(f"code must be a whole number from 0 to {n_codes - 1}")
    net = build(design)
    out = net.output
    amplified = out.kind == "virtual-ground" or out.buffered
    rename = {}
    if amplified:
        if out.node == OUT:
            rename[OUT] = "amp_in"
    else:
        rename[out.node] = OUT
    w = _Writer(net, design, [], resistor_designators(design, net), switch_designators(net),
                rename)
    lines = w.lines
    lines += _header(design, net, None if all_codes else int(code), version, source)
    lines.append("")
    lines.append("* reference")
    lines.append(f"VREF {w.node(net.source)} 0 DC {_num(net.fixed[net.source])}")
    for r in net.resistors:
        if r.role == "reference":
            lines.append(f"RSRC {w.node(r.a)} {w.node(r.b)} {_num(r.ohms)} ; reference output "
                         "resistance (not a board part)")
    lines.append("* network")
    for r in net.resistors:
        if r.role != "reference":
            w.part(r.part_id, w.node(r.a), w.node(r.b), r.ohms, f"{r.part_id} ({r.role})")
    for chain in net.chains:
        names = list(chain.nodes())
        for i, ohms in enumerate(np.asarray(chain.ohms, float)):
            w.part(f"{chain.prefix}{i}", w.node(names[i]), w.node(names[i + 1]), ohms,
                   f"{chain.prefix}{i} ({chain.role})")
    lines.append("* switches" + (" in the state of the code" if not all_codes else
                                 ", decoded from the swept code voltage"))
    if all_codes:
        lines.append("VCODE code 0 DC 0")
    _legs(w, None if all_codes else int(code))
    if net.selector is not None:
        _selector(w, None if all_codes else int(code))
    lines.append("* output")
    if out.kind == "virtual-ground":
        s = w.node(out.node)
        w.part("feedback", s, OUT, out.feedback_ohms, "feedback")
        lines.append(f"E{AMPLIFIER} {OUT} 0 0 {s} {_num(IDEAL_GAIN)} ; ideal amplifier, "
                     "summing node held at 0 V")
    elif out.buffered:
        lines.append(f"E{AMPLIFIER} {OUT} 0 {w.node(out.node)} 0 {_num(out.gain)} ; ideal buffer, "
                     f"gain {out.gain:g}")
    if math.isfinite(design.load_r):
        lines.append(f"RLOAD {OUT} 0 {_num(design.load_r)} ; load")
    if design.load_c > 0:
        lines.append(f"CLOAD {OUT} 0 {_num(design.load_c)} ; load capacitance (no effect on op)")
    node_c = float(design.timing.get("node_c", 0.0))
    if node_c > 0:  # the switching figures' capacitance from every network node to ground
        lines.append("* node capacitances (timing.node_c; no effect on op)")
        for k, name in enumerate(net.unknown_nodes()):
            lines.append(f"CN{k + 1} {w.node(name)} 0 {_num(node_c)}")
    if all_codes:
        lines.append(".options reltol=1e-12 vntol=1e-15 abstol=1e-18")
    analysis = f"dc VCODE 0 {n_codes - 1} 1" if all_codes else "op"
    lines += ["", ".control", "set numdgt=12", analysis, f"print v({OUT})", "quit 0", ".endc",
              ".end", ""]
    return "\n".join(lines)


def _header(design: Design, net: Network, code: int | None, version: str, source: str
            ) -> list[str]:
    from .display_names import network_name

    out = net.output
    what = {"virtual-ground": "summing node and ideal amplifier"}.get(
        out.kind, "ideal buffer" if out.buffered else "unbuffered node")
    head = [
        f"* Rungwise netlist of candidate '{design.label}'",
        f"* made by Rungwise {version}".rstrip() + (f" from {source}" if source else ""),
        f"* network: {network_name(design.topology, design.output)} [{design.topology}, "
        f"{design.output}]: {what}, {design.bits} bits",
        f"* reference {format_si(design.vref, 'V')} behind "
        f"{format_si(design.ref_r, 'Ω')}; unit R {format_si(design.unit_r, 'Ω')}; "
        f"series {design.series}",
        f"* switches: {format_si(design.ron_high, 'Ω')} when the bit is 1, "
        f"{format_si(design.ron_low, 'Ω')} when it is 0",
        f"* load {format_si(design.load_r, 'Ω') if math.isfinite(design.load_r) else 'open'}"
        f", {format_si(design.load_c, 'F')}",
        f"* as-built values given for {len(design.parts)} parts; resistors are named by their "
        "bill-of-materials designators",
    ]
    if code is None:
        head.append(f"* every code 0 … {net.n_codes - 1}: the voltage VCODE is the code")
    else:
        ideal = net.ideal_lsb * code
        head.append(f"* code {code_text(code, design.bits)}; ideal output "
                    f"{format_si(ideal, 'V')}")
    head.append(f"* run: ngspice -b FILE.cir  (prints v({OUT}))")
    ascii_units = {"Ω": "Ohm", "µ": "u", "…": "...", "−": "-"}
    return ["".join(ascii_units.get(ch, ch) for ch in line) for line in head]
