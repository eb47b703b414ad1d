"""Bill of materials of one candidate, with each part's load against its rating.

Every physical resistor gets a designator (``R1`` …, in the design's part order; a part made of
several units gets one per unit). Lines group equal units (same value, tolerance and temperature
coefficient). With ``board.array_size`` = n > 0, the units of each value go into matched arrays of
n elements instead (designators ``RN1`` …), and the line says how many elements are left over.

Ratings: a unit carries its part's worst-case power divided by the number of units (equal units
in series or parallel share it evenly); it is flagged when that exceeds ``power_rating ×
derating``. A switch is flagged when its worst-case current exceeds ``switch_limit``.
"""

from __future__ import annotations

import csv
import io
import math
from dataclasses import dataclass, field
from typing import Any

from ..evaluate import Evaluation
from ..formatting import format_si
from ..metrics.power import worst_case
from ..metrics.power_arrays import part_power_arrays, switch_maxima
from ..mismatch import NUMERIC_SETTINGS
from .board import board_value
from .eseries import TOLERANCE

CAUTION = ("Figures are computed from nominal values. Check every rating against the part's "
           "datasheet, and follow local codes and licensed practice for anything that carries "
           "hazardous voltage or power.")
"""Shown with every flagged overload."""


@dataclass
class BomLine:
    """One line of the bill of materials.

    Attributes
    ----------
    designators : str
        ``"R1–R8, R17"`` style ranges.
    kind : str
        ``"resistor"``, ``"array"``, ``"switch"`` or ``"amplifier"``.
    ohms : float
        Value of one unit, ohms (NaN for switches and amplifiers).
    series, tolerance, tempco : str, float, float
        Preferred-value series, ± fraction, 1/K.
    power_needed : float
        Largest worst-case power of one unit on the line divided by the derating, W (the rating to
        buy at least); for a switch, the largest current it must carry, A.
    quantity : int
        Parts to buy (array packages for ``"array"``).
    part_ids : list[str]
        Design part ids the line covers.
    leftover : int
        Unused array elements.
    flagged : bool
        Over the rating or the limit.
    note : str
    """

    designators: str
    kind: str
    ohms: float
    series: str
    tolerance: float
    tempco: float
    power_needed: float
    quantity: int
    part_ids: list[str] = field(default_factory=list)
    leftover: int = 0
    flagged: bool = False
    note: str = ""


def tolerance_of(design: Any) -> float:
    """The parts' ± tolerance: ``mismatch.tolerance`` when given, else the series' usual grade."""
    if "tolerance" in design.mismatch:
        return float(design.mismatch["tolerance"])
    return TOLERANCE.get(design.series, NUMERIC_SETTINGS["tolerance"].default)


def tempco_of(design: Any, part_id: str) -> float:
    """The part's temperature coefficient from the statistics' table, 1/K."""
    per_part = design.mismatch.get("tempco_parts", {})
    return float(per_part.get(part_id, design.mismatch.get("tempco", 0.0)))


def ranges(prefix: str, numbers: list[int]) -> str:
    """``ranges("R", [1, 2, 3, 5])`` → ``"R1–R3, R5"``."""
    out, start = [], None
    for i, n in enumerate(numbers):
        if start is None:
            start = n
        if i + 1 == len(numbers) or numbers[i + 1] != n + 1:
            out.append(f"{prefix}{start}" if start == n else f"{prefix}{start}–{prefix}{n}")
            start = None
    return ", ".join(out)


def bill_of_materials(ev: Evaluation) -> list[BomLine]:
    """The candidate's bill of materials (resistor lines, then switches and amplifiers)."""
    design, net = ev.design, ev.network
    elements, _ = worst_case(net)
    power_max, _ = part_power_arrays(elements, net.parts)
    allowed = board_value(design, "power_rating") * board_value(design, "derating")
    derating = board_value(design, "derating")
    tol = tolerance_of(design)
    groups: dict[tuple, dict[str, Any]] = {}
    number = 0
    for p, p_max in zip(net.parts, power_max.tolist(), strict=True):
        units = int(p.units)
        unit = p.ohms * units if p.joined == "parallel" else p.ohms / units
        # networks too large for the per-element power pass carry NaN (said in the line's note)
        p_unit = p_max / units
        key = (round(unit, 9), tempco_of(design, p.part_id))
        g = groups.setdefault(key, {"numbers": [], "ids": [], "power": 0.0})
        g["numbers"].extend(range(number + 1, number + 1 + units))
        number += units
        g["ids"].append(p.part_id)
        g["power"] = math.nan if math.isnan(p_unit) else max(g["power"], p_unit)
    size = int(board_value(design, "array_size"))
    lines = []
    array_no = 0
    for (unit, tc), g in sorted(groups.items(), key=lambda kv: kv[1]["numbers"][0]):
        over = g["power"] > allowed
        note = (f"over the rating: {format_si(g['power'], 'W')} per resistor, allowed "
                f"{format_si(allowed, 'W')}" if over else "")
        if math.isnan(g["power"]):
            note = "power not worked out per part for a network this large; check the datasheet"
        count = len(g["numbers"])
        if size:
            packs = math.ceil(count / size)
            lines.append(BomLine(ranges("RN", list(range(array_no + 1, array_no + packs + 1))),
                                 "array", unit, design.series, tol, tc, g["power"] / derating, packs,
                                 g["ids"], packs * size - count, over,
                                 note or f"matched array of {size}, {count} elements used"))
            array_no += packs
        else:
            lines.append(BomLine(ranges("R", g["numbers"]), "resistor", unit, design.series, tol, tc,
                                 g["power"] / derating, count, g["ids"], 0, over, note))
    n_sw = int(net.counts.get("switches", 0))
    if n_sw:
        limit = board_value(design, "switch_limit")
        need = switch_maxima(elements)[0]
        over = need > limit
        lines.append(BomLine(ranges("S", list(range(1, n_sw + 1))), "switch", math.nan, "", math.nan,
                             math.nan, need, n_sw, [g.part_id for g in net.legs], 0, over,
                             f"over the limit {format_si(limit, 'A')}" if over else
                             "current needed, source or sink, A"))
    n_amp = int(net.counts.get("amplifiers", 0))
    if n_amp:
        lines.append(BomLine(ranges("U", list(range(1, n_amp + 1))), "amplifier", math.nan, "",
                             math.nan, math.nan, math.nan, n_amp, ["amplifier"]))
    return lines


CSV_COLUMNS = ("candidate", "designators", "kind", "value_ohms", "value", "series", "tolerance",
               "tempco_ppm_per_k", "power_needed", "quantity", "leftover", "part_ids", "flag")
"""Columns of the CSV bill of materials (``power_needed`` is W for parts, A for switches)."""


def to_csv(boms: list[tuple[str, list[BomLine]]]) -> str:
    """CSV text of one or more candidates' bills of materials (``(label, lines)`` pairs)."""
    buf = io.StringIO()
    w = csv.writer(buf, lineterminator="\n")
    w.writerow(CSV_COLUMNS)

    def num(x: float) -> str:
        return "" if math.isnan(x) else repr(float(x))

    for label, lines in boms:
        for ln in lines:
            w.writerow([label, ln.designators, ln.kind, num(ln.ohms),
                        "" if math.isnan(ln.ohms) else format_si(ln.ohms, "Ω"), ln.series,
                        num(ln.tolerance), num(ln.tempco * 1e6), num(ln.power_needed), ln.quantity,
                        ln.leftover, " ".join(ln.part_ids), ln.note if ln.flagged else ""])
    if any(ln.flagged for _, lines in boms for ln in lines):
        w.writerow([])
        w.writerow(["caution", CAUTION])
    return buf.getvalue()
