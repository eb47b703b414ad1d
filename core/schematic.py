"""The schematic of a candidate, laid out from its network description (no Qt).

:func:`schematic` builds the candidate's :class:`~rungwise.core.network.Network` and places
symbols on a grid: resistors (named by their bill-of-materials designators, with their values as
built), switches in the state of one code, the reference source, the amplifier and the load.
Coordinates are in grid units (x to the right, y downwards); a renderer scales them.

Two layouts cover every topology:

* **columns** — the network's non-rail nodes form a top line (series resistors between them),
  every switched leg and every resistor to ground hangs below its node as a column, and each
  switch throws to a horizontal rail (the reference, the summing node) or to ground. Binary
  weighted, both R-2R ladders and the segmented networks take this layout;
* **string** — the series string stands upright from ground to the reference with a tap switch
  at every node onto an output bus.

Long networks are shortened: a layout keeps the first and last columns (or string resistors)
and the ones around the chosen code's tap, and puts an ellipsis naming what is left out.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field

import numpy as np

from .design import Design
from .formatting import format_si
from .network import GROUND, Network, PartList
from .parts.designators import AMPLIFIER, resistor_designators, switch_designators

Point = tuple[float, float]

MAX_COLUMNS = 14
"""Most leg columns drawn; beyond it the middle ones are left out (said by an ellipsis)."""

MAX_STRING = 8
"""Most string resistors drawn whole; longer strings show the ends and the chosen tap."""


@dataclass(frozen=True)
class Wire:
    """A polyline of connected points."""

    points: tuple[Point, ...]


@dataclass(frozen=True)
class Dot:
    """A junction dot."""

    at: Point


@dataclass(frozen=True)
class Resistor:
    """A resistor between two terminals on one horizontal or vertical line."""

    a: Point
    b: Point
    name: str
    value: str
    part_id: str = ""


@dataclass(frozen=True)
class Capacitor:
    a: Point
    b: Point
    name: str
    value: str


@dataclass(frozen=True)
class Switch:
    """A change-over switch: the blade from ``pole`` to ``throws[closed]`` (``None``: open)."""

    pole: Point
    throws: tuple[Point, ...]
    closed: int | None
    name: str


@dataclass(frozen=True)
class Ground:
    at: Point


@dataclass(frozen=True)
class Source:
    """A voltage source: ``plus`` terminal above ``minus``."""

    plus: Point
    minus: Point
    name: str
    value: str


@dataclass(frozen=True)
class Amplifier:
    """A triangle pointing right: inputs at the left edge, ``out`` at the tip."""

    minus: Point
    plus: Point
    out: Point
    name: str
    note: str
    kind: str = "summing"  # "summing" (inputs − and +) or "buffer" (gain inside, + input only)


@dataclass(frozen=True)
class Terminal:
    at: Point
    name: str


@dataclass(frozen=True)
class Label:
    at: Point
    text: str
    kind: str = "note"  # "note", "node", "ellipsis"


@dataclass
class Schematic:
    """Every symbol of one drawing, its extent in grid units and a caption."""

    items: list = field(default_factory=list)
    caption: str = ""

    def bounds(self) -> tuple[float, float, float, float]:
        """(x0, y0, x1, y1) over every point of every item, grid units."""
        pts = [p for it in self.items for p in _points(it)]
        xs, ys = [p[0] for p in pts], [p[1] for p in pts]
        return min(xs), min(ys), max(xs), max(ys)

    def names(self) -> list[str]:
        """Every designator drawn (resistors, switches, the amplifier)."""
        return [it.name for it in self.items
                if isinstance(it, Resistor | Switch | Amplifier) and it.name]


def _points(it) -> list[Point]:
    if isinstance(it, Wire):
        return list(it.points)
    if isinstance(it, Dot | Ground | Terminal | Label):
        return [it.at]
    if isinstance(it, Resistor | Capacitor):
        return [it.a, it.b]
    if isinstance(it, Switch):
        return [it.pole, *it.throws]
    if isinstance(it, Source):
        return [it.plus, it.minus]
    if isinstance(it, Amplifier):
        return [it.minus, it.plus, it.out]
    return []


# ---------------------------------------------------------------------------------------------
# naming


def value_text(ohms: float) -> str:
    """A resistor value as built, four significant digits (``10.02 kΩ``)."""
    return format_si(ohms, "Ω", 4)


def names_text(names: tuple[str, ...]) -> str:
    """``R5`` or ``R5–R8`` for a part of several units (consecutive designators)."""
    if len(names) == 1:
        return names[0]
    return f"{names[0]}–{names[-1]}"


class _Names:
    def __init__(self, design: Design, net: Network) -> None:
        self.r = resistor_designators(design, net)
        self.s = switch_designators(net)
        parts = PartList.of(net.parts)
        self.parts = parts

    def resistor(self, pid: str, ohms: float) -> tuple[str, str]:
        names = self.r.get(pid, (pid,))
        value = value_text(ohms)
        i = self.parts.index_of(pid)
        if i is not None and len(names) > 1:
            p = self.parts[i]
            value += f" ({len(names)} in {p.joined})"
        return names_text(names), value


# ---------------------------------------------------------------------------------------------
# the column layout

PITCH = 1.6
"""Grid units between leg columns."""
Y_TOP, Y_R0, Y_R1, Y_POLE, Y_THROW, Y_RAIL, Y_GND = 0.0, 0.35, 1.55, 1.9, 2.55, 3.0, 3.8


@dataclass
class _Column:
    kind: str  # "leg", "ground", "ellipsis"
    node: str
    part_id: str = ""
    ohms: float = 0.0
    high: str | None = None
    low: str | None = None
    driven: bool = False
    note: str = ""


def _natural(name: str) -> tuple:
    head = name.rstrip("0123456789")
    tail = name[len(head):]
    return (head, int(tail) if tail else -1)


def _columns(net: Network, code: int) -> tuple[list[str], dict[str, list[_Column]], list[str]]:
    """Top nodes (output last), their columns, the rails (ground last)."""
    drive = np.asarray(net.decode(np.array([code])))[0]
    rails: list[str] = []
    for leg in [*net.legs, *net.groups]:
        for rail in (leg.high, leg.low):
            if rail is not None and rail not in rails and rail != GROUND:
                rails.append(rail)
    rails.append(GROUND)
    feed = {r.b for r in net.resistors if r.role == "reference"} | {net.source}
    cols: dict[str, list[_Column]] = {}

    def add(node: str, col: _Column) -> None:
        cols.setdefault(node, []).append(col)

    for r in net.resistors:
        if r.role == "reference":
            continue
        if GROUND in (r.a, r.b):
            node = r.a if r.b == GROUND else r.b
            add(node, _Column("ground", node, r.part_id, r.ohms))
    for j, leg in enumerate(net.legs):
        add(leg.node, _Column("leg", leg.node, leg.part_id, leg.ohms, leg.high, leg.low,
                              bool(drive[j])))
    for g, grp in enumerate(net.groups):
        level = int(drive[len(net.legs) + g])
        m = grp.size
        ohms = np.asarray(grp.ohms, float)
        shown = range(m) if m <= 4 else (0, 1, m - 1)  # long groups: their ends only

        def member(i: int, grp=grp, level=level, ohms=ohms) -> _Column:
            return _Column("leg", grp.node, f"{grp.prefix}{i}", float(ohms[i]), grp.high,
                           grp.low, i < level)

        members = [member(i) for i in shown]
        if m > 4:
            driven = min(max(level - 2, 0), m - 3)  # legs 2 … m−2 driven at this level
            members.insert(2, _Column("ellipsis", grp.node, note=(
                f"{m - 3} more {grp.role}s\n{grp.prefix}2–{grp.prefix}{m - 2}\n"
                f"{driven} driven")))
        for c in members:
            add(grp.node, c)
    for node, members in cols.items():
        if len(members) > MAX_COLUMNS // 2:
            legs = [c for c in members if c.kind == "leg"]
            hidden = legs[2:-2]
            cols[node] = [c for c in members if c.kind != "leg"] + [*legs[:2], _Column(
                "ellipsis", node, note=(f"{len(hidden)} more legs\n{hidden[0].part_id}–"
                                        f"{hidden[-1].part_id}\n{sum(c.driven for c in hidden)} "
                                        "driven")), *legs[-2:]]
    nodes = set(cols)
    for r in net.resistors:
        if r.role != "reference" and GROUND not in (r.a, r.b):
            nodes |= {r.a, r.b}
    nodes -= set(rails)
    nodes -= {n for n in feed if n not in cols}
    out = net.output.node
    order = sorted(nodes, key=lambda n: (n == out, _natural(n)))
    if feed & set(order):  # the reference drives a top node: it goes first, at the left
        order.reverse()
        cols = {node: members[::-1] for node, members in cols.items()}
    return order, cols, rails


def _shorten(order: list[str], cols: dict[str, list[_Column]]) -> list[str | None]:
    """Node order with the middle nodes left out (``None``) when there are too many columns."""
    total = sum(len(cols.get(n, [])) for n in order) + len(order) - 1  # columns and gaps
    if total <= MAX_COLUMNS or len(order) <= 5:
        return list(order)
    return [*order[:2], None, *order[-2:]]


def _column_layout(design: Design, net: Network, code: int, names: _Names) -> Schematic:
    sch = Schematic()
    items = sch.items
    order, cols, rails = _columns(net, code)
    shown = _shorten(order, cols)
    high_rails = rails[:-1]
    rail_y = {rail: Y_RAIL - 0.5 * i for i, rail in enumerate(high_rails)} | {GROUND: Y_GND}
    ref_r = next((r for r in net.resistors if r.role == "reference"), None)
    ref_node = ref_r.b if ref_r is not None else net.source

    x = 0.0
    spans: list[tuple[str | None, float, float]] = []  # node, first x, last x
    series = {frozenset((r.a, r.b)): r for r in net.resistors
              if r.role != "reference" and GROUND not in (r.a, r.b)}
    prev_end: float | None = None
    prev_node: str | None = None
    skipped: list[str] = []
    for node in shown:
        if node is None:
            hidden = order[len(skipped) + 2: len(order) - 2] if not skipped else []
            skipped = hidden
            x0, gap = x + PITCH * 0.5, PITCH * 1.8  # room for the words between the columns
            items.append(Wire(((prev_end, Y_TOP), (x0 + gap, Y_TOP))))
            items.append(Label((x0 + gap / 2, (Y_TOP + Y_RAIL) / 2),
                               f"⋯ {len(hidden)} more stages ({hidden[0]}–{hidden[-1]})",
                               "ellipsis"))
            spans.append((None, x0, x0 + gap))
            prev_end, prev_node = x0 + gap, None
            x = x0 + gap + PITCH * 0.5
            continue
        if prev_end is not None and prev_node is not None:
            r = series.get(frozenset((prev_node, node)))
            x += PITCH * 0.5
            if r is not None:
                nm, val = names.resistor(r.part_id, r.ohms)
                items.append(Resistor((prev_end, Y_TOP), (x, Y_TOP), nm, val, r.part_id))
            else:
                items.append(Wire(((prev_end, Y_TOP), (x, Y_TOP))))
        elif prev_end is not None:
            items.append(Wire(((prev_end, Y_TOP), (x, Y_TOP))))
        first = x
        for c in cols.get(node, []) or [_Column("none", node)]:
            wide = c.kind == "ellipsis"  # room for its note between the neighbours' labels
            x += PITCH * 0.7 if wide else 0.0
            _draw_column(items, c, x, rail_y, names)
            x += PITCH * 1.7 if wide else PITCH
        last = x - PITCH
        if last > first:
            items.append(Wire(((first, Y_TOP), (last, Y_TOP))))
        items.append(Label((first - 0.15, Y_TOP - 0.3), node, "node"))
        spans.append((node, first, last))
        prev_end, prev_node = last, node
    x_right = x - PITCH

    # rails from the source side to the last column
    x_left = -PITCH * (1.6 if ref_r is not None else 1.0)
    for rail in high_rails:
        y = rail_y[rail]
        start = x_left if rail == ref_node else -0.35
        items.append(Wire(((start, y), (x_right + (PITCH if rail == net.output.node else 0), y))))
        items.append(Label((0.0 - 0.5, y - 0.25), rail, "node"))
    items.append(Wire(((x_left - PITCH * 0.6, Y_GND), (x_right + PITCH * 1.2, Y_GND))))
    items.append(Ground((x_left - PITCH * 0.6, Y_GND)))

    # the reference source
    vref = format_si(net.fixed[net.source], "V")
    if ref_node in rail_y:
        xs = x_left - PITCH * 0.6
        y = rail_y[ref_node]
        items.append(Source((xs, y + 0.15), (xs, Y_GND - 0.1), "VREF", vref))
        items.append(Wire(((xs, y), (xs, y + 0.15))))
        items.append(Wire(((xs, Y_GND - 0.1), (xs, Y_GND))))
        if ref_r is not None:
            items.append(Resistor((xs, y), (x_left + PITCH * 0.6, y), "Rsrc",
                                  value_text(ref_r.ohms)))
            items.append(Wire(((x_left + PITCH * 0.6, y), (0.0, y))))
        else:
            items.append(Wire(((xs, y), (0.0, y))))
    else:  # the reference drives a top node (the current-mode ladder's MSB end), at the left
        xs = x_left - PITCH * 0.6
        first = spans[0][1]
        if ref_r is not None:
            items.append(Resistor((xs, Y_TOP), (x_left + PITCH * 0.6, Y_TOP), "Rsrc",
                                  value_text(ref_r.ohms)))
            items.append(Wire(((x_left + PITCH * 0.6, Y_TOP), (first, Y_TOP))))
        else:
            items.append(Wire(((xs, Y_TOP), (first, Y_TOP))))
        items.append(Source((xs, Y_TOP + 1.0), (xs, Y_GND - 0.1), "VREF", vref))
        items.append(Wire(((xs, Y_TOP), (xs, Y_TOP + 1.0))))
        items.append(Wire(((xs, Y_GND - 0.1), (xs, Y_GND))))

    # the output
    out = net.output
    if out.node in rail_y:
        at = (x_right, rail_y[out.node])
    else:
        at = (next(s for s in spans if s[0] == out.node)[2], Y_TOP)
    if out.kind == "virtual-ground":
        _summing_output(items, design, net, names, at, x_right)
    else:
        _node_output(items, design, net, at, x_right)
    return sch


def _draw_column(items: list, c: _Column, x: float, rail_y: dict[str, float], names: _Names
                 ) -> None:
    if c.kind == "none":
        return
    if c.kind == "ellipsis":
        items.append(Label((x, Y_R0 + 0.3), "⋯", "ellipsis"))
        for k, line in enumerate(c.note.split("\n")):
            items.append(Label((x, Y_R0 + 0.75 + 0.3 * k), line, "note"))
        return
    items.append(Dot((x, Y_TOP)))
    items.append(Wire(((x, Y_TOP), (x, Y_R0))))
    nm, val = names.resistor(c.part_id, c.ohms)
    items.append(Resistor((x, Y_R0), (x, Y_R1), nm, val, c.part_id))
    if c.kind == "ground":
        items.append(Wire(((x, Y_R1), (x, Y_GND))))
        items.append(Dot((x, Y_GND)))
        return
    items.append(Wire(((x, Y_R1), (x, Y_POLE))))
    throws, ends = [], []
    for dx, rail in ((-0.35, c.high), (0.35, c.low)):
        if rail is None:
            continue
        t = (x + dx, Y_THROW)
        throws.append(t)
        ends.append((t, rail))
    closed_rail = c.high if c.driven else c.low
    closed = next((i for i, (_, rail) in enumerate(ends) if rail == closed_rail), None)
    items.append(Switch((x, Y_POLE), tuple(throws), closed, names.s.get(c.part_id, "")))
    for t, rail in ends:
        y = rail_y[rail]
        items.append(Wire((t, (t[0], y))))
        items.append(Dot((t[0], y)))


def _load(items: list, design: Design, at: Point, x: float) -> None:
    """Terminal ``out`` right of ``at`` and the load resistance and capacitance to ground."""
    y = at[1]
    items.append(Wire((at, (x + PITCH * 2.8, y))))
    items.append(Terminal((x + PITCH * 2.8, y), "out"))
    for dx, show in ((0.8, math.isfinite(design.load_r)), (1.9, design.load_c > 0)):
        if not show:
            continue
        xl = x + PITCH * dx
        items.append(Dot((xl, y)))
        items.append(Wire(((xl, y), (xl, y + Y_R0))))
        if dx < 1:
            items.append(Resistor((xl, y + Y_R0), (xl, y + Y_R1), "load",
                                  value_text(design.load_r)))
        else:
            items.append(Capacitor((xl, y + Y_R0 + 0.3), (xl, y + Y_R1 - 0.3), "load",
                                   format_si(design.load_c, "F")))
            items.append(Wire(((xl, y + Y_R0), (xl, y + Y_R0 + 0.3))))
            items.append(Wire(((xl, y + Y_R1 - 0.3), (xl, y + Y_R1))))
        items.append(Ground((xl, y + Y_R1)))


def _buffer(at: Point, x: float, gain: float) -> Amplifier:
    """An ideal buffer whose + input is level with ``at``."""
    y = at[1]
    return Amplifier((x + 0.2, y), (x + 0.2, y), (x + 1.4, y), AMPLIFIER,
                     f"ideal buffer, gain {gain:g}", "buffer")


def _node_output(items: list, design: Design, net: Network, at: Point, x_right: float) -> None:
    out = net.output
    x = x_right + PITCH * 0.8
    if not out.buffered:
        items.append(Wire((at, (x, at[1]))))
        _load(items, design, (x, at[1]), x)
        return
    amp = _buffer(at, x, out.gain)
    items.append(Wire((at, amp.plus)))
    items.append(amp)
    _load(items, design, amp.out, amp.out[0])


def _summing_output(items: list, design: Design, net: Network, names: _Names, at: Point,
                    x_right: float) -> None:
    out = net.output
    x, y = x_right + PITCH * 1.0, at[1]
    amp = Amplifier((x + 0.2, y), (x + 0.2, y + 0.6), (x + 1.6, y + 0.3), AMPLIFIER,
                    "ideal amplifier")
    items.append(Wire((at, amp.minus)))
    items.append(Wire((amp.plus, (x, amp.plus[1]), (x, Y_GND))))
    items.append(Dot((x, Y_GND)))
    items.append(amp)
    yf = y - 0.9
    nm, val = names.resistor("feedback", out.feedback_ohms)
    items.append(Wire(((x - 0.1, y), (x - 0.1, yf))))
    items.append(Dot((x - 0.1, y)))
    items.append(Resistor((x - 0.1, yf), (amp.out[0] + 0.3, yf), nm, val, "feedback"))
    items.append(Wire(((amp.out[0] + 0.3, yf), (amp.out[0] + 0.3, amp.out[1]))))
    items.append(Dot((amp.out[0] + 0.3, amp.out[1])))
    _load(items, design, amp.out, amp.out[0])


# ---------------------------------------------------------------------------------------------
# the string layout

S_PITCH = 1.1
"""Grid units per string resistor."""


def _string_layout(design: Design, net: Network, code: int, names: _Names) -> Schematic:
    sch = Schematic()
    items = sch.items
    chain, sel = net.chains[0], net.selector
    m = chain.size
    chosen = int(np.asarray(sel.select(np.array([code])))[0])
    keep = sorted({i for i in (0, 1, chosen - 1, chosen, m - 2, m - 1) if 0 <= i < m}
                  if m > MAX_STRING else range(m))
    # rows from the top (reference end): resistor index, or None for an ellipsis
    rows: list[int | None] = []
    for i in reversed(keep):
        if rows and rows[-1] is not None and rows[-1] - i > 1:
            rows.append(None)
        rows.append(i)
    ohms = np.asarray(chain.ohms, float)
    x_chain, x_bus = 0.0, 3.2
    y = 0.0
    top_y = y
    tap_ys: list[float] = []
    node_y: dict[int, float] = {m: y}
    for k, row in enumerate(rows):
        if row is None:
            hidden = rows[k - 1] - rows[k + 1] - 1
            items.append(Wire(((x_chain, y), (x_chain, y + 0.25))))
            items.append(Label((x_chain + 1.6, y + 0.6),
                               f"⋯ {hidden} more resistors and taps", "ellipsis"))
            items.append(Wire(((x_chain, y + 0.85), (x_chain, y + 1.1))))
            y += 1.1
            continue
        node_y.setdefault(row + 1, y)
        nm, val = names.resistor(f"{chain.prefix}{row}", ohms[row])
        items.append(Resistor((x_chain, y), (x_chain, y + S_PITCH), nm, val,
                              f"{chain.prefix}{row}"))
        y += S_PITCH
        node_y[row] = y
    for i, yi in sorted(node_y.items()):
        if i >= net.n_codes:
            continue
        sname = names.s.get(f"{sel.part_id}{i}", "")
        items.append(Dot((x_chain, yi)))
        items.append(Wire(((x_chain, yi), (x_chain + 0.9, yi))))
        items.append(Switch((x_chain + 0.9, yi), ((x_bus - 0.6, yi),), 0 if i == chosen else None,
                            sname))
        items.append(Wire(((x_bus - 0.6, yi), (x_bus, yi))))
        items.append(Dot((x_bus, yi)))
        tap_ys.append(yi)
    bottom = y
    items.append(Wire(((x_bus, min(tap_ys)), (x_bus, max(tap_ys)))))
    y_gnd = bottom + 0.6
    items.append(Wire(((x_chain, bottom), (x_chain, y_gnd))))
    # reference at the top
    ref_r = next((r for r in net.resistors if r.role == "reference"), None)
    xs = x_chain - 2.2
    vref = format_si(net.fixed[net.source], "V")
    items.append(Wire(((x_chain, top_y), (x_chain, top_y - 0.5))))
    if ref_r is not None:
        items.append(Resistor((xs, top_y - 0.5), (x_chain, top_y - 0.5), "Rsrc",
                              value_text(ref_r.ohms)))
    else:
        items.append(Wire(((xs, top_y - 0.5), (x_chain, top_y - 0.5))))
    items.append(Source((xs, top_y + 0.5), (xs, y_gnd - 0.3), "VREF", vref))
    items.append(Wire(((xs, top_y - 0.5), (xs, top_y + 0.5))))
    items.append(Wire(((xs, y_gnd - 0.3), (xs, y_gnd))))
    items.append(Wire(((xs - 0.5, y_gnd), (x_chain, y_gnd))))
    items.append(Ground((xs - 0.5, y_gnd)))
    # output from the bus, level with the closed tap
    y_out = node_y.get(chosen, max(tap_ys))
    _string_output(items, design, net, (x_bus, y_out))
    return sch


def _string_output(items: list, design: Design, net: Network, at: Point) -> None:
    x = at[0] + 0.6
    if net.output.buffered:
        amp = _buffer(at, x, net.output.gain)
        items.append(Wire((at, amp.plus)))
        items.append(amp)
        at, x = amp.out, amp.out[0]
    _load(items, design, at, x)


# ---------------------------------------------------------------------------------------------


def schematic(design: Design, code: int = 0) -> Schematic:
    """The schematic of ``design`` with its switches in the state of ``code``.

    Raises
    ------
    ValueError
        ``code`` outside 0 … 2^N − 1.
    """
    from .topologies import build

    if not 0 <= int(code) < 2 ** design.bits:
        raise ValueError(f"code must be a whole number from 0 to {2 ** design.bits - 1}")
    net = build(design)
    names = _Names(design, net)
    layout = _string_layout if net.selector is not None else _column_layout
    sch = layout(design, net, int(code), names)
    sch.caption = (f"{design.label}: switches at code {code} (0b{int(code):0{design.bits}b}); "
                   "values as built")
    return sch
