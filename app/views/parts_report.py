"""The parts view's computation and words, without Qt: what a candidate becomes when built from
real parts (snapping, bill of materials, ratings, settling, noise, drift, amplifier)."""

from __future__ import annotations

import math
import threading
from dataclasses import dataclass
from typing import Any

from rungwise.core import Design, Evaluation, evaluate
from rungwise.core.formatting import format_percent, format_quantity, yes_no
from rungwise.core.metrics.settling import CONVENTION
from rungwise.core.parts.board import board_value
from rungwise.core.parts.bom import BomLine, bill_of_materials
from rungwise.core.parts.suggest import Limits, Suggestion, suggest


@dataclass
class PartsOutcome:
    """One candidate built from real parts, and the same candidate with exact values."""

    design: Design
    built: Evaluation
    exact: Evaluation
    bom: list[BomLine]

    @property
    def flagged(self) -> list[BomLine]:
        """BOM lines over a rating or limit."""
        return [ln for ln in self.bom if ln.flagged]


def parts_job(design: Design):
    """A ``workers`` job: evaluate ``design`` as built and exact, and its bill of materials."""

    def job(cancel: threading.Event) -> PartsOutcome | None:
        built = evaluate(design)
        if cancel.is_set():
            return None
        exact = evaluate(design.replace(series="exact")) if design.series != "exact" else built
        return PartsOutcome(design, built, exact, bill_of_materials(built))

    return job


def suggest_job(design: Design, limits: Limits, series: str | None, top: int = 12):
    """A ``workers`` job: the ranked unit values for ``design``."""

    def job(cancel: threading.Event) -> list[Suggestion]:
        return suggest(design, limits, series=series, top=top, cancel=cancel)

    return job


_v, _pct = format_quantity, format_percent  # short names for the many rows below


def summary_lines(out: PartsOutcome) -> list[tuple[str, str]]:
    """(label, text) rows for the view's figures, in display order."""
    s, e, d = out.built.summary, out.exact.summary, out.design
    rows = [
        ("Values", f"{d.series} preferred values" if d.series != "exact" else "exact (no snapping)"),
        ("Max |INL| built / exact", f"{_v(s['max_abs_inl_endpoint'])} / "
                                    f"{_v(e['max_abs_inl_endpoint'], 'LSB')}"),
        ("Max |DNL| built / exact", f"{_v(s['max_abs_dnl'])} / {_v(e['max_abs_dnl'], 'LSB')}"),
        ("Monotonic as built", yes_no(s["monotonic"])),
        ("Reference current, max", _v(s["iref_max"], "A")),
        ("Reference power, max", _v(s["ref_power_max"], "W")),
        ("Power in the network, max", f"{_v(s['power_total_max'], 'W')} at code "
                                      f"{s['power_total_max_code']}"),
        ("Switch current, max", f"{_v(s['switch_current_max'], 'A')} (sourced "
                                f"{_v(s['switch_source_max'], 'A')}, sunk {_v(s['switch_sink_max'], 'A')}; "
                                f"limit {_v(board_value(d, 'switch_limit'), 'A')})"),
    ]
    if math.isnan(s["settling_time"]):
        rows.append(("Settling to ½ LSB", "set by the amplifier (not modelled)"))
    else:
        rows.append(("Settling to ½ LSB", f"{_v(s['settling_time'], 's')} (τ = "
                     f"{_v(s['settling_tau'], 's')}; {CONVENTION})"))
    rows += [
        ("Thermal noise", f"{_v(s['noise_density'], 'V/√Hz')} worst code at {_v(d.temperature_c, '°C')}; "
                          f"{_v(s['noise_rms'], 'V')} rms over {_v(d.bandwidth, 'Hz')} = "
                          f"{_v(s['noise_rms_lsb'], 'LSB')}"),
    ]
    for end, key in (("cold", "temp_low_c"), ("hot", "temp_high_c")):
        tag = "low" if end == "cold" else "high"
        rows.append((f"Drift at {_v(board_value(d, key), '°C')}",
                     f"gain error {_pct(s[f'drift_gain_error_{tag}'])}, offset "
                     f"{_v(s[f'drift_offset_{tag}'], 'V')}, max |INL| {_v(s[f'drift_inl_{tag}'], 'LSB')}"))
    if "amp_offset_error" in s:
        rows.append(("Amplifier", f"offset {_v(s['amp_offset_error'], 'V')}, gain error "
                                  f"{_pct(s['amp_gain_error'])}, INL added "
                                  f"{_v(s['amp_inl_added'], 'LSB')}, {s['amp_codes_clipped']} codes beyond "
                                  "the rails"))
    return rows


def bom_cells(line: BomLine) -> list[str]:
    """Text of one BOM line for the table's columns (:data:`BOM_COLUMNS`)."""
    value = _v(line.ohms, "Ω")
    tol = "" if math.isnan(line.tolerance) else f"±{_pct(line.tolerance)}"
    tc = "" if math.isnan(line.tempco) else _v(line.tempco, "ppm/K")
    need = ("" if math.isnan(line.power_needed) else
            _v(line.power_needed, "A" if line.kind == "switch" else "W"))
    qty = str(line.quantity) + (f" (+{line.leftover} spare)" if line.leftover else "")
    return [line.designators, line.kind, value, line.series, tol, tc, need, qty,
            " ".join(line.part_ids), line.note]


BOM_COLUMNS = ("Designators", "Kind", "Value", "Series", "Tolerance", "Temp. coeff.",
               "Rating needed", "Quantity", "Parts", "Note")
"""Columns of the view's bill-of-materials table."""


def suggestion_cells(s: Suggestion) -> list[str]:
    """Text of one suggestion for the table's columns (:data:`SUGGEST_COLUMNS`)."""
    return [_v(s.unit_r, "Ω"), _v(s.iref_max, "A"), _v(s.rout_max, "Ω"),
            _v(s.settling_time, "s"), _v(s.noise_lsb), _v(s.max_abs_inl), s.reason]


SUGGEST_COLUMNS = ("Unit R", "Ref. current", "Output R", "Settling", "Noise (LSB)",
                   "Max |INL|", "Why this rank")
"""Columns of the view's suggestions table."""


def limits_from_text(texts: dict[str, str]) -> Limits:
    """Limits from typed fields (empty = no limit), each read in its unit and checked by its range."""
    from rungwise.core.parts.suggest import LIMIT_SPECS

    values: dict[str, Any] = {key: LIMIT_SPECS[key].check(key, text) for key, text in texts.items()}
    return Limits(**values)


DRIFT_ROLES = ("leg", "series", "termination", "bit", "feedback")
"""Part roles whose temperature coefficient the view sets as a batch (roles a design lacks are
ignored)."""


def with_drift_choices(design: Design, role_tempcos: dict[str, float],
                       temp_low_c: float | None, temp_high_c: float | None) -> Design:
    """``design`` with every part of each role given ``role_tempcos[role]`` (1/K, as
    ``mismatch.tempco_parts``) and the drift range's ends (``board.temp_low_c``/``temp_high_c``)."""
    from rungwise.core.topologies import build

    mismatch = design.to_dict()["mismatch"]
    per_part = dict(mismatch.get("tempco_parts", {}))
    for part in build(design).parts:
        if part.role in role_tempcos:
            per_part[part.part_id] = role_tempcos[part.role]
    if per_part:
        mismatch["tempco_parts"] = per_part
    board = dict(design.board)
    if temp_low_c is not None:
        board["temp_low_c"] = temp_low_c
    if temp_high_c is not None:
        board["temp_high_c"] = temp_high_c
    return design.replace(mismatch=mismatch, board=board)
