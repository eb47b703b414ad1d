"""``diagnose(measurement, design)``: every finding about a built converter in one object."""

from __future__ import annotations

import math
import threading
from dataclasses import dataclass
from typing import Any

import numpy as np

from ..design import Design
from ..solve import solve
from ..topologies import build
from .bit_weights import BitFit, bit_matrix, fit_bit_weights
from .correction import CorrectionTable, correction_table
from .curve import CurveLinearity, curve_linearity, pooled_noise
from .joint import Extras, JointFit, fit_joint
from .reading import Measurement, MeasurementError
from .repair import DEFAULT_SERIES, DEFAULT_TARGET_INL, RepairPlan, plan_repair
from .sanity import check_span, suggested_bits
from .suspects import SuspectFit, as_built, fit_suspects


@dataclass(frozen=True)
class RepairRequest:
    """Asks :func:`diagnose` for a repair plan: new parts from ``series``, target max |INL| and
    |DNL| ``target_inl`` (LSB)."""

    series: str = DEFAULT_SERIES
    target_inl: float = DEFAULT_TARGET_INL


@dataclass(frozen=True, eq=False)
class Diagnosis:
    """Findings about a measured curve against a design.

    Attributes
    ----------
    measurement : Measurement
    design : Design — the network as designed
    measured : CurveLinearity — of the measured curve
    predicted_volts : ndarray, shape (n,), volts — the design's output at the measured codes
    predicted : CurveLinearity — of that prediction, at the same codes and by the same rules
    bits_measured, bits_predicted : BitFit — bit-weight fits of the measured and predicted curves
    suspects : SuspectFit
    as_built : Design or None — ``design`` with the best suspect at its fitted value
    as_built_volts : ndarray, shape (n,), volts — its output at the measured codes (NaN if none)
    correction : CorrectionTable — missing codes inside the measured range are offered with the
        bit-weight fit's estimate when every bit's weight is known
    noise : float — pooled noise of repeated readings, volts (NaN without repeats)
    noise_floor_rms_lsb : float — expected RMS of the per-code means from that noise, LSB
    joint : JointFit — sets of up to three parts that explain the curve, and what the curve
        cannot tell apart
    repair : RepairPlan or None — when asked for
    checks : list[str] — what the checks between measurement and design found, in words
    """

    measurement: Measurement
    design: Design
    measured: CurveLinearity
    predicted_volts: np.ndarray
    predicted: CurveLinearity
    bits_measured: BitFit
    bits_predicted: BitFit
    suspects: SuspectFit
    as_built: Design | None
    as_built_volts: np.ndarray
    correction: CorrectionTable
    noise: float
    noise_floor_rms_lsb: float
    joint: JointFit | None = None
    repair: RepairPlan | None = None
    checks: tuple[str, ...] = ()

    def to_dict(self) -> dict[str, Any]:
        """Plain JSON-ready values (non-finite numbers become ``None``); keys are a promise."""
        return _as_dict(self)


def diagnose(measurement: Measurement, design: Design, absolute: bool = False,
             correction_levels: int | None = None, cancel: threading.Event | None = None,
             extras: Extras | None = None, repair: RepairRequest | None = None) -> Diagnosis:
    """Analyse a measured curve against ``design``.

    Parameters
    ----------
    measurement : Measurement
    design : Design — the network as designed; its resolution fixes the code range
    absolute : bool — trust the measurement's offset and gain when blaming parts
    correction_levels : int, optional — wanted levels of the correction table
    cancel : threading.Event, optional — stops the part fit between solves
        (raises ``DiagnosisCancelled``)
    extras : Extras, optional — output resistances or a loaded curve that help tell parts apart
    repair : RepairRequest, optional — also plan a repair

    Returns
    -------
    Diagnosis

    Raises
    ------
    MeasurementError
        A code beyond the design's range, fewer than two codes, a flat curve, or a curve the design
        cannot explain at all (``sanity.check_span``: names the likely unit, resolution or
        setting to change).
    """
    m = measurement
    n_codes = 2**design.bits
    if m.codes[-1] >= n_codes:
        bad = int(m.codes[-1])
        raise MeasurementError(f"code {bad} is beyond the {design.bits}-bit design "
                               f"(codes 0 … {n_codes - 1}); set the right number of bits",
                               source=m.source)
    if m.code_bits > design.bits:
        raise MeasurementError(f"the file writes codes with {m.code_bits} binary digits but the "
                               f"design has {design.bits} bits; set the right number of bits",
                               source=m.source)
    _check_extras(extras, design.bits)
    net = build(design)
    predicted_volts = solve(net, codes=m.codes).vout
    check_span(m, predicted_volts, design.bits)
    checks = []
    fewer = suggested_bits(m, design.bits)
    if fewer is not None:
        checks.append(f"the codes stop at {int(m.codes[-1])}, under a quarter of the {design.bits}"
                      f"-bit range: if the board has {fewer} bits, choose that candidate")
    measured = curve_linearity(m.codes, m.volts, net.ideal_lsb, n_codes)
    predicted = curve_linearity(m.codes, predicted_volts, net.ideal_lsb, n_codes)
    fit = fit_suspects(design, m.codes, m.volts, measured.lsb, absolute=absolute, cancel=cancel)
    built = None
    built_volts = np.full(m.codes.size, np.nan)
    if fit.suspects and fit.suspects[0].identifiable:
        best = fit.suspects[0]
        built = as_built(design, best)
        built_volts = solve(build(built), codes=m.codes).vout
    bits_measured = fit_bit_weights(m.codes, m.volts, design.bits)
    gaps = missing_codes(m, design.bits)
    gaps = gaps[(gaps > m.codes[0]) & (gaps < m.codes[-1])]
    if bits_measured.identifiable.all() and gaps.size:
        estimates = bits_measured.offset + bit_matrix(gaps, design.bits) @ bits_measured.weights
    else:
        gaps, estimates = gaps[:0], np.zeros(0)
    noise = pooled_noise(m.spread, m.count)
    floor = float(noise * np.sqrt(np.mean(1.0 / m.count)) / abs(measured.lsb))
    joint = fit_joint(m, design, measured.lsb, noise, absolute=absolute, extras=extras,
                      cancel=cancel)
    fitting = [e for e in joint.explanations if e.fits]
    if joint.explanations and not fitting:
        checks.append("no set of up to three parts off explains the curve's shape within the "
                      "noise: the parts listed are the closest, not blamed")
    plan = None
    if repair is not None:
        plan = plan_repair(design, m.codes, m.volts, fitting, repair.target_inl, repair.series)
    correction = correction_table(m.codes, m.volts, correction_levels, gaps, estimates)
    if _changes_nothing(correction, m.codes):
        checks.append("the correction table changes nothing: every wanted level's nearest code "
                      "is its own")
    return Diagnosis(
        measurement=m, design=design, measured=measured, predicted_volts=predicted_volts,
        predicted=predicted,
        bits_measured=bits_measured,
        bits_predicted=fit_bit_weights(m.codes, predicted_volts, design.bits),
        suspects=fit, as_built=built, as_built_volts=built_volts,
        correction=correction, noise=noise, noise_floor_rms_lsb=floor,
        joint=joint, repair=plan, checks=tuple(checks),
    )


def _changes_nothing(table: CorrectionTable, codes: np.ndarray) -> bool:
    """Every wanted level maps to the code it would be sent as anyway (one level per code)."""
    if table.code.size != codes[-1] - codes[0] + 1:
        return False
    return bool(np.array_equal(table.code, np.arange(codes[0], codes[-1] + 1)))


def _check_extras(extras: Extras | None, bits: int) -> None:
    """Extra measurements must be at codes of the design."""
    if extras is None:
        return
    top = 2**bits - 1
    bad = [c for c in extras.rout if c > top]
    if bad:
        raise MeasurementError(f"output resistance at code {bad[0]}: beyond the {bits}-bit "
                               f"design (codes 0 … {top})", source="output resistance")
    if extras.loaded is not None:
        if extras.loaded.codes[-1] > top:
            raise MeasurementError(f"code {int(extras.loaded.codes[-1])} is beyond the {bits}-bit "
                                   f"design (codes 0 … {top})", source=extras.loaded.source)
        if not (np.isfinite(extras.load_ohms) and extras.load_ohms > 0):
            raise MeasurementError("the loaded curve needs its load in ohms (> 0)",
                                   source=extras.loaded.source)


def missing_codes(measurement: Measurement, bits: int) -> np.ndarray:
    """Codes 0 … 2^N − 1 not measured; shape (n_missing,)."""
    present = np.zeros(2**bits, dtype=bool)
    present[measurement.codes[measurement.codes < 2**bits]] = True
    return np.flatnonzero(~present)


def _num(x: Any) -> Any:
    if isinstance(x, np.generic):
        x = x.item()
    if isinstance(x, float) and not math.isfinite(x):
        return None
    return x


def _list(a: np.ndarray) -> list:
    return [_num(x) for x in np.asarray(a).tolist()]


def _as_dict(d: Diagnosis) -> dict[str, Any]:
    m, lin, bm = d.measurement, d.measured, d.bits_measured
    lsb = abs(lin.lsb)
    missing = missing_codes(m, d.design.bits)
    noise_lsb = m.spread / lsb
    return {
        "measurement": {
            "source": m.source, "n_readings": m.n_readings, "n_codes_measured": int(m.codes.size),
            "n_codes_missing": int(missing.size), "missing_codes": _list(missing),
            "n_codes_repeated": int(np.sum(m.count > 1)),
        },
        "design": {"name": d.design.label, "topology": d.design.topology,
                   "output": d.design.output, "bits": d.design.bits},
        "codes": _list(m.codes),
        "vout": _list(m.volts),
        "count": _list(m.count),
        "noise_lsb": _list(noise_lsb),
        "predicted_vout": _list(d.predicted_volts),
        "as_built_vout": _list(d.as_built_volts),
        "inl_endpoint": _list(lin.inl_endpoint),
        "inl_bestfit": _list(lin.inl_bestfit),
        "dnl": [*_list(lin.dnl), None],
        "dnl_span": [*_list(lin.dnl_span), None],
        "predicted_inl_endpoint": _list(d.predicted.inl_endpoint),
        "monotonic": lin.monotonic,
        "summary": {
            "lsb": lin.lsb, "offset_error": lin.offset_error, "gain_error": lin.gain_error,
            "gain_error_lsb": lin.gain_error_lsb,
            "max_abs_inl_endpoint": float(np.max(np.abs(lin.inl_endpoint))),
            "max_abs_inl_bestfit": float(np.max(np.abs(lin.inl_bestfit))),
            "max_abs_dnl": lin.max_abs_dnl,
            "predicted_max_abs_inl_endpoint": float(np.max(np.abs(d.predicted.inl_endpoint))),
            "noise_rms": _num(d.noise), "noise_rms_lsb": _num(d.noise / lsb),
            "noise_floor_rms_lsb": _num(d.noise_floor_rms_lsb),
        },
        "bit_weights": _list(bm.weights),
        "bit_weight_stderr": _list(bm.stderr),
        "bit_weight_error_lsb": _list(bm.weight_error_lsb),
        "bit_weight_error_vs_design_lsb": _list((bm.weights - d.bits_predicted.weights) / lsb),
        "superposition_residual_rms_lsb": _num(bm.residual_rms_lsb),
        "design_superposition_residual_rms_lsb": _num(d.bits_predicted.residual_rms_lsb),
        "suspects": [
            {"id": s.id, "role": s.role, "deviation": _num(s.deviation),
             "deviation_stderr": _num(s.deviation_stderr), "nominal_ohms": s.nominal_ohms,
             "fitted_ohms": _num(s.fitted_ohms), "residual_rms_lsb": _num(s.residual_rms_lsb),
             "explained": _num(s.explained), "identifiable": s.identifiable}
            for s in d.suspects.suspects
        ],
        "equivalent_suspects": list(d.suspects.equivalent),
        "nominal_residual_rms_lsb": _num(d.suspects.nominal_residual_rms_lsb),
        "unexplained_rms_lsb": _num(d.suspects.suspects[0].residual_rms_lsb)
        if d.suspects.suspects else None,
        "suspects_note": d.suspects.note,
        "fitted_offset": d.suspects.offset, "fitted_gain_error": d.suspects.gain,
        "as_built": None if d.as_built is None else {
            k: _num(v) for k, v in d.as_built.to_dict().items()},
        "correction": {
            "max_abs_inl_after": d.correction.max_abs_inl,
            "max_abs_inl_before": float(np.max(np.abs(lin.inl_endpoint))),
            "n_estimated_used": int(d.correction.estimated.sum()),
            "bound_lsb": d.correction.bound_lsb, "n_levels": int(d.correction.code.size),
            "skip_codes": _list(d.correction.skip),
            "changes_nothing": _changes_nothing(d.correction, m.codes),
            "bound_meaning": BOUND_MEANING,
        },
        "explanations": [] if d.joint is None else [
            {"parts": dict(e.parts), "residual_rms_lsb": _num(e.residual_rms_lsb),
             "fits": e.fits} for e in d.joint.explanations],
        "ambiguous": bool(d.joint is not None and d.joint.ambiguous),
        "identifiability": None if d.joint is None else {
            "method": "rank of the bit-weight sensitivity matrix",
            "rank": d.joint.rank, "n_parts": d.joint.n_parts,
            "confounded": [list(g) for g in d.joint.confounded],
            "extra_measurements": list(d.joint.extras), "note": d.joint.note},
        "checks": list(d.checks),
        **({} if d.repair is None else {"repair": {
            k: (_num(v) if not isinstance(v, list) else v) for k, v in d.repair.to_dict().items()}}),
    }


BOUND_MEANING = ("bound: the most any corrected level can miss its wanted level — half the widest "
                 "gap between neighbouring output levels the board can make")
"""What the correction table's bound means, in words (shown wherever the bound is)."""
