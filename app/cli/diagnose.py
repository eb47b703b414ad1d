"""``rungwise diagnose``: analyse a measured transfer curve against a design; export a correction."""

from __future__ import annotations

import argparse
import json
import math
import sys
from pathlib import Path
from typing import Any

import numpy as np

from rungwise.core.diagnose import Diagnosis, diagnose, read_measurement, to_c_header, to_csv
from rungwise.core.diagnose.diagnosis import RepairRequest
from rungwise.core.diagnose.joint import Extras, read_rout
from rungwise.core.diagnose.repair import DEFAULT_SERIES, DEFAULT_TARGET_INL
from rungwise.core.diagnose.sanity import DesignMismatch
from rungwise.core.errors import DesignError, RungwiseError
from rungwise.core.formatting import format_percent, format_quantity, yes_no
from rungwise.core.parts.eseries import TOLERANCE

from .candidates import apply_choices, load_candidates, parse_settings, pick_candidate

NAME = "diagnose"
HELP = ("Analyse a measured curve of a built converter: INL/DNL, bit weights, the part that is "
        "off, a firmware correction table.")


def add_arguments(p: argparse.ArgumentParser) -> None:
    """Options of ``diagnose``."""
    p.add_argument("measured", help="measurement file: lines 'code, output' (CSV or spaces; "
                   "codes decimal, 0x hex, 0b binary; outputs in V, mV or µV)")
    p.add_argument("--design", help="design file; its first candidate is the design that was "
                   "built (default: the built-in demo's first candidate)")
    p.add_argument("--candidate", metavar="NAME|NUMBER", help="which candidate of the design "
                   "file was built: its name or its number from 1 (default: the first)")
    p.add_argument("--set", dest="settings", action="append", metavar="KEY=VALUE",
                   help="change a design value, e.g. bits=10 or unit_r=4k7 (repeatable)")
    p.add_argument("--topology", metavar="TOPOLOGY[:OUTPUT]",
                   help="the topology that was built, with the first candidate's values")
    p.add_argument("--format", choices=("json", "table"), default="table")
    p.add_argument("--absolute", action="store_true", help="trust the measured offset and gain "
                   "(calibrated meter and reference) when blaming parts")
    p.add_argument("--levels", type=int, metavar="N", help="wanted levels in the correction table "
                   "(default: one per code between the lowest and highest measured code)")
    p.add_argument("--correction-csv", metavar="FILE", help="write the correction table as CSV")
    p.add_argument("--correction-header", metavar="FILE.h",
                   help="write the correction table as a C array in a header file")
    p.add_argument("--save-as-built", metavar="FILE.toml", help="write a design file with the "
                   "design and its as-built version (the best suspect at its fitted value); with "
                   "--repair also the repaired board and the plan")
    p.add_argument("--rout", action="append", metavar="CODE=OHMS", default=[],
                   help="output resistance measured at a code with the reference shorted, e.g. "
                   "128=10.02k (repeatable; helps tell parts apart)")
    p.add_argument("--loaded", metavar="FILE", help="the same board's curve measured again with "
                   "a known load across the output (give it with --load-ohms)")
    p.add_argument("--load-ohms", metavar="OHMS", help="the known load of --loaded, e.g. 10k")
    p.add_argument("--repair", action="store_true", help="plan the fewest part changes (replace, "
                   "or add a trim in parallel or in series) that meet the target whichever "
                   "explanation is true")
    p.add_argument("--series", choices=tuple(TOLERANCE), default=DEFAULT_SERIES,
                   help=f"with --repair: preferred-value series of new parts (default "
                   f"{DEFAULT_SERIES})")
    p.add_argument("--target-inl", type=float, default=DEFAULT_TARGET_INL, metavar="LSB",
                   help=f"with --repair: target max |INL| and |DNL| in LSB (default "
                   f"{DEFAULT_TARGET_INL:g})")


def _design(args: argparse.Namespace):
    base = [pick_candidate(load_candidates(args.design), args.candidate)]
    chosen = apply_choices(base, parse_settings(args.settings),
                           [args.topology] if args.topology else None)
    return chosen[0]


def _write(path: str, text: str) -> None:
    try:
        Path(path).write_text(text, encoding="utf-8")
    except OSError as exc:
        raise RungwiseError(f"cannot write {path}: {exc.strerror}") from None


def _signed(x: float | None) -> str:
    """``+0.123``, or ``n/a`` for a figure that could not be found (``None`` in the JSON)."""
    return "n/a" if x is None else format_quantity(x, signed=True)


def render_table(d: Diagnosis) -> str:
    """Aligned text: findings, bit weights and the ranked suspects."""
    out = d.to_dict()
    s = out["summary"]
    meas = out["measurement"]

    def lsb(x: Any) -> str:
        return format_quantity(x, "LSB")

    lines = [
        f"Measurement  {meas['source']}: {meas['n_readings']} readings of "
        f"{meas['n_codes_measured']} codes ({meas['n_codes_missing']} missing, "
        f"{meas['n_codes_repeated']} repeated)",
        f"Design       {out['design']['name']}, {out['design']['bits']} bits",
        "",
        f"Endpoint LSB                {format_quantity(s['lsb'], 'V')}",
        f"Offset error                {format_quantity(s['offset_error'], 'V')}",
        f"Gain error                  {format_percent(s['gain_error'])} "
        f"({format_quantity(s['gain_error_lsb'], 'LSB')} at full scale)",
        f"Max |INL|, endpoint         {lsb(s['max_abs_inl_endpoint'])}   (design predicts "
        f"{lsb(s['predicted_max_abs_inl_endpoint'])})",
        f"Max |INL|, best fit         {lsb(s['max_abs_inl_bestfit'])}",
        f"Max |DNL|                   {lsb(s['max_abs_dnl'])}",
        f"Monotonic                   {yes_no(out['monotonic'])}",
        f"Meter noise (repeats)       {lsb(s['noise_rms_lsb'])} rms",
        f"Not linear in the bits      {lsb(out['superposition_residual_rms_lsb'])} rms "
        f"(design alone {lsb(out['design_superposition_residual_rms_lsb'])})",
        "",
        "Bit weights (error against the fitted gain, LSB; bit 0 = LSB)",
    ]
    for i, (w, e, ed) in enumerate(zip(out["bit_weights"], out["bit_weight_error_lsb"],
                                       out["bit_weight_error_vs_design_lsb"], strict=True)):
        if w is None:
            lines.append(f"  bit{i:<3} not identifiable from the measured codes")
        else:
            lines.append(f"  bit{i:<3} {format_quantity(w, 'V'):>12}  error {_signed(e)}  "
                         f"vs design {_signed(ed)}")
    lines += ["", "Suspects (each part alone fitted to the curve; best first)",
              f"  {'part':<10}{'deviation':>12}{'±':>10}{'left, rms':>14}{'explained':>11}"]
    for row in out["suspects"][:8]:
        if not row["identifiable"]:
            lines.append(f"  {row['id']:<10}  only changes the gain: cannot be told from a "
                         "reference error")
            continue
        lines.append(f"  {row['id']:<10}{format_percent(row['deviation'], signed=True):>12}"
                     f"{format_percent(row['deviation_stderr'] or 0):>10}"
                     f"{format_quantity(row['residual_rms_lsb'], 'LSB'):>14}"
                     f"{format_percent(row['explained']):>11}")
    corr = out["correction"]
    lines += explanation_lines(out)
    if out["suspects_note"]:
        lines.append(f"  {out['suspects_note']}")
    if out["equivalent_suspects"]:
        lines.append(f"  the curve cannot tell {out['suspects'][0]['id']} from "
                     + ", ".join(out["equivalent_suspects"]) + " (they fit equally well)")
    lines += [
        f"  (with no part changed: {lsb(out['nominal_residual_rms_lsb'])} rms; noise floor "
        f"{lsb(s['noise_floor_rms_lsb'])} rms)",
        "",
        f"Correction   {corr['n_levels']} levels; max |INL| {lsb(corr['max_abs_inl_before'])} "
        f"as built, {lsb(corr['max_abs_inl_after'])} after correction (bound "
        f"{lsb(corr['bound_lsb'])}); {len(corr['skip_codes'])} measured codes never used; "
        f"{corr['n_estimated_used']} entries use an estimated unmeasured code",
        f"             ({corr['bound_meaning']})",
    ]
    lines += [f"Check        {text}" for text in out["checks"]]
    lines += repair_lines(out.get("repair"))
    return "\n".join(lines)


def explanation_lines(out: dict) -> list[str]:
    """The sets of parts that explain the curve, and what cannot be told apart."""
    ident = out["identifiability"]
    if ident is None:
        return []
    rows = ["", "Explanations (up to three parts fitted together; fewest parts first)"]
    for e in out["explanations"][:8]:
        parts = ", ".join(f"{pid} {format_percent(dev, signed=True)}"
                          for pid, dev in e["parts"].items())
        mark = "" if e["fits"] else "   (closest; does not fit within the noise)"
        rows.append(f"  {parts:<52} left {format_quantity(e['residual_rms_lsb'], 'LSB')} rms"
                    f"{mark}")
    rows.append(f"  {'AMBIGUOUS: ' if out['ambiguous'] else ''}{ident['note']}")
    return rows


def repair_lines(plan: dict | None) -> list[str]:
    """The repair plan in words."""
    if plan is None:
        return []
    from rungwise.core.diagnose.repair import Action

    rows = ["", f"Repair plan (target max |INL| and |DNL| ≤ "
                f"{format_quantity(plan['target_inl'], 'LSB')}; new parts {plan['series']})"]
    rows += [f"  {Action(a['id'], a['action'], a['ohms']).describe()}" for a in plan["actions"]]
    if not plan["actions"]:
        rows.append("  no change")
    verdict = "meets" if plan["meets_target"] else "does NOT meet"
    rows.append(f"  predicted after: max |INL| {format_quantity(plan['predicted_max_abs_inl'], 'LSB')}"
                f", max |DNL| {format_quantity(plan['predicted_max_abs_dnl'], 'LSB')} under every "
                f"explanation ({verdict} the "
                "target)")
    rows += [f"  assumes: {text}" for text in plan["assumptions"]]
    return rows


def _finite(obj: Any) -> Any:
    if isinstance(obj, float) and not math.isfinite(obj):
        return None
    if isinstance(obj, dict):
        return {k: _finite(v) for k, v in obj.items()}
    if isinstance(obj, list):
        return [_finite(v) for v in obj]
    if isinstance(obj, np.generic):
        return _finite(obj.item())
    return obj


def _candidate_hint(args: argparse.Namespace, bits: int | None) -> str:
    """Which candidate of the design file has the resolution the measurement points to."""
    if bits is None:
        return ""
    chosen = pick_candidate(load_candidates(args.design), args.candidate)
    if chosen.bits == bits and args.settings:
        return f" (the candidate {chosen.label!r} itself has {bits} bits: drop --set bits=…)"
    named = [d.label for d in load_candidates(args.design) if d.bits == bits]
    return f" (the candidate {named[0]!r} has {bits} bits: --candidate {named[0]!r})" if named else ""


def _extras(args: argparse.Namespace) -> Extras:
    """The extra measurements given on the command line."""
    if (args.loaded is None) != (args.load_ohms is None):
        raise RungwiseError("--loaded and --load-ohms go together: the loaded curve's file and "
                            "its load")
    load = math.nan
    if args.load_ohms is not None:
        from rungwise.core.units import parse_quantity

        load = parse_quantity(args.load_ohms, "Ω", "load-ohms")
        if not (math.isfinite(load) and load > 0):
            raise DesignError("load-ohms", "must be a resistance above 0 Ω, e.g. 10k")
    return Extras(rout=read_rout(args.rout),
                  loaded=read_measurement(args.loaded) if args.loaded else None, load_ohms=load)


def run(args: argparse.Namespace) -> int:
    """Diagnose and print; returns the exit code."""
    design = _design(args)
    if not args.repair and (args.target_inl != DEFAULT_TARGET_INL
                            or args.series != DEFAULT_SERIES):
        raise RungwiseError("--series and --target-inl need --repair")
    if not (math.isfinite(args.target_inl) and 0 < args.target_inl <= 100):
        raise DesignError("target-inl", f"{args.target_inl:g} is out of range; allowed: > 0 and "
                          "≤ 100 LSB")
    request = RepairRequest(args.series, args.target_inl) if args.repair else None
    try:
        result = diagnose(read_measurement(args.measured), design, absolute=args.absolute,
                          correction_levels=args.levels, extras=_extras(args), repair=request)
    except DesignMismatch as exc:
        raise DesignMismatch(exc.reason + _candidate_hint(args, exc.bits), exc.source,
                             exc.bits) from None
    if args.correction_csv:
        _write(args.correction_csv, to_csv(result.correction))
    if args.correction_header:
        stem = Path(args.correction_header).stem
        _write(args.correction_header, to_c_header(result.correction, stem,
                                                   note=f"measured: {result.measurement.source}"))
    if args.save_as_built:
        from rungwise.core import designfile
        from rungwise.core.diagnose.saving import as_built_file

        designfile.save(Path(args.save_as_built), as_built_file(result))
    if args.format == "json":
        text = json.dumps(_finite(result.to_dict()), indent=1, allow_nan=False)
    else:
        text = render_table(result)
    sys.stdout.write(text.rstrip("\n") + "\n")
    return 0
