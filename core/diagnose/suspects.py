"""Which part's deviation best explains a measured curve, and by how much.

The engine itself gives the sensitivities: one batched :func:`~rungwise.core.solve.solve` with
per-part ohms arrays of shape (n_trials, 1) — trial t changes one part and keeps the others — gives
every part's effect on the output at every measured code at once. For each part alone the model

    V_meas(c) ≈ a + s · V_net(c; R_p = R_p0 · (1 + d))

is fitted by least squares in (a, s, d): a and s take out an unknown offset and gain (reference
voltage, meter calibration, buffer gain) so that only the *shape* of the curve blames a part; d is
found by Gauss–Newton steps on the exact network (each step is one batched solve): the first
step for every part, further ones for the :data:`REFINE` best. With
``absolute=True`` a = 0 and s = 1: the measured volts are trusted as they are.

Parts are ranked by the residual left after their fit; the best one's residual is what a single
part of the network cannot explain (several parts off, switch or load effects, noise). A part whose
only effect is a gain (a divider's terminator, an amplifier's feedback resistor) cannot be told
apart from a reference error with a free gain: it is listed last with no deviation.
"""

from __future__ import annotations

import threading
from dataclasses import dataclass

import numpy as np

from ..design import Design
from ..errors import RungwiseError
from ..network import Network
from ..solve import solve
from ..topologies import build
from .reading import MeasurementError

STEP = 1e-4
"""Relative change of a part used for finite-difference sensitivities (fraction)."""

ITERATIONS = 6
"""Most Gauss–Newton steps per part."""

REFINE = 6
"""After the first step (all parts), only this many best-fitting parts are refined further and
solved exactly; the rest keep their one-step (linearised) fit."""

CONVERGED = 1e-8
"""A deviation step smaller than this (fraction) ends the refinement."""

FULL_RANGE_SHARE = 4
"""Solve every code (then pick the measured ones) when at most this many codes exist per measured
code; otherwise solve only the measured codes."""

TRIAL_CODE_ELEMENTS = 1 << 20
"""Largest trials × codes solved in one call on the every-code path."""

MAX_SUSPECT_PARTS = 1024
"""Most parts fitted one by one; a network with more gets no suspects (with a note)."""

TIE_MARGIN = 0.05
"""Relative margin on the residual RMS within which another part ties with the best one."""

DEVIATION_LIMITS = (-0.9, 9.0)
"""Deviations a fit may reach (fraction); a part needing more does not explain the curve."""


@dataclass(frozen=True)
class Suspect:
    """One part's fit.

    Attributes
    ----------
    id, role : str — part id and role
    nominal_ohms, fitted_ohms : float — ohms (``fitted_ohms`` NaN when not identifiable)
    deviation, deviation_stderr : float — fitted_ohms / nominal_ohms − 1 and its least-squares
        standard error (from the residual taken as white noise; small deviations of the other
        parts bias the value by more than this)
    residual_rms_lsb : float — what this part's fit leaves unexplained, RMS in LSB
    explained : float — 1 − residual² / (residual² with no part changed), fraction
    identifiable : bool — False when the part's effect is only a gain or offset (or nothing)
    """

    id: str
    role: str
    nominal_ohms: float
    fitted_ohms: float
    deviation: float
    deviation_stderr: float
    residual_rms_lsb: float
    explained: float
    identifiable: bool


@dataclass(frozen=True, eq=False)
class SuspectFit:
    """Ranked suspects and the reference fit with every part nominal.

    Attributes
    ----------
    suspects : list[Suspect] — best explanation first
    equivalent : list[str] — other parts that explain the curve as well as the first (residual
        within :data:`TIE_MARGIN`): the curve cannot tell them apart (in an R-2R ladder, the MSB
        leg and the last series resistor both only change the MSB's weight against the rest)
    nominal_residual_rms_lsb : float — RMS residual with every part nominal, LSB
    offset, gain : float — the best suspect's fitted offset (volts) and gain (a fraction, s − 1)
    best_curve : ndarray, shape (n,), volts — the network with the best suspect's value, at the
        measured codes, before offset and gain
    note : str — why no part was fitted (``suspects`` is then empty), else empty
    """

    suspects: list[Suspect]
    nominal_residual_rms_lsb: float
    equivalent: list[str]
    offset: float
    gain: float
    best_curve: np.ndarray
    note: str = ""


def _element_ids(net: Network) -> set[str]:
    """Part ids the solver takes ``ohms`` overrides for (resistors, legs, groups, chains)."""
    ids = {r.part_id for r in net.resistors} | {leg.part_id for leg in net.legs}
    for array in [*getattr(net, "groups", []), *getattr(net, "chains", [])]:
        ids.update(f"{array.prefix}{i}" for i in range(array.size))
    return ids


def trial_curves(design: Design, part_ids: list[str], factors: np.ndarray, codes: np.ndarray
                 ) -> np.ndarray:
    """Output at ``codes`` with, in trial t, part ``part_ids[t]`` multiplied by ``factors[t]``.

    Parameters
    ----------
    design : Design — values of every other part (its ``parts`` overrides included)
    part_ids : list[str], length n_trials
    factors : ndarray, shape (n_trials,)
    codes : ndarray of int, shape (n_codes,)

    Returns
    -------
    ndarray, shape (n_trials, n_codes), volts
        One batched solve. An amplifier's feedback resistor only scales a virtual-ground output
        (V = −R_f · I_sum, and I_sum does not depend on R_f), so it is applied as that factor.
    """
    net = build(design)
    nominal = {p.part_id: p.ohms for p in net.parts}
    elements = _element_ids(net)
    factors = np.asarray(factors, dtype=float)
    n_trials = len(part_ids)
    ohms: dict[str, np.ndarray] = {}
    scale = np.ones((n_trials, 1))
    for t, (pid, f) in enumerate(zip(part_ids, factors, strict=True)):
        if pid in elements:
            arr = ohms.setdefault(pid, np.full((n_trials, 1), nominal[pid]))
            arr[t, 0] = nominal[pid] * f
        elif pid == "feedback" and net.output.kind == "virtual-ground":
            scale[t, 0] = f
        else:
            raise MeasurementError(f"part {pid!r} is not in the {design.topology} network")
    codes = np.asarray(codes, dtype=np.int64)
    if not ohms:  # a solve without per-trial arrays returns one row; broadcast it
        return solve(net, codes=codes).vout[None, :] * np.ones((n_trials, 1)) * scale
    if net.n_codes > FULL_RANGE_SHARE * len(codes):
        return np.broadcast_to(solve(net, ohms=ohms, codes=codes).vout,
                               (n_trials, len(codes))) * scale
    # most codes measured: solve every code (the solver's fastest exact layout) in trial chunks
    step = max(1, TRIAL_CODE_ELEMENTS // net.n_codes)
    rows = []
    for start in range(0, n_trials, step):
        part = {pid: arr[start:start + step] for pid, arr in ohms.items()}
        v = solve(net, ohms=part, codes=None).vout
        rows.append(np.broadcast_to(v, (len(next(iter(part.values()))), net.n_codes))[:, codes])
    return np.concatenate(rows, axis=0) * scale


def _project_fit(y: np.ndarray, base: np.ndarray, sens: np.ndarray | None, absolute: bool):
    """Least squares of y on [1, base] (+ sens): (coefficients, residual, ‖sens ⟂ nuisance‖)."""
    if absolute:
        if sens is None:
            return np.zeros(0), y - base, 0.0
        t = float(sens @ (y - base) / (sens @ sens)) if sens @ sens > 0 else 0.0
        return np.array([t]), y - base - t * sens, float(np.sqrt(sens @ sens))
    nuis = np.column_stack([np.ones_like(base), base])
    q, _ = np.linalg.qr(nuis)
    if sens is None:
        coef, *_ = np.linalg.lstsq(nuis, y, rcond=None)
        return coef, y - nuis @ coef, 0.0
    perp = sens - q @ (q.T @ sens)
    norm = float(np.sqrt(perp @ perp))
    x = np.column_stack([nuis, sens])
    coef, *_ = np.linalg.lstsq(x, y, rcond=None)
    return coef, y - x @ coef, norm


class DiagnosisCancelled(RungwiseError):
    """The caller's cancel event was set; the analysis stopped between steps."""


def fit_suspects(design: Design, codes: np.ndarray, volts: np.ndarray, lsb: float,
                 absolute: bool = False, cancel: threading.Event | None = None) -> SuspectFit:
    """Fit each part's deviation alone to the measured curve and rank the parts.

    Parameters
    ----------
    design : Design — the network as designed (values in ``design.parts`` count as nominal)
    codes : ndarray of int, shape (n,) — measured codes
    volts : ndarray, shape (n,), volts — measured outputs (means of repeats)
    lsb : float — volts per LSB used to express residuals
    absolute : bool — trust offset and gain of the measurement (see the module docstring)
    cancel : threading.Event, optional — checked before every batched solve

    Returns
    -------
    SuspectFit

    Raises
    ------
    DiagnosisCancelled
        ``cancel`` was set.
    """
    net = build(design)
    parts = list(net.parts)
    ids = [p.part_id for p in parts]
    y = np.asarray(volts, dtype=float)
    n = y.size
    n_par = 1 if absolute else 3
    scale = abs(lsb)
    nominal_curve = trial_curves(design, ids[:1], np.ones(1), codes)[0]
    coef0, r0, _ = _project_fit(y, nominal_curve, None, absolute)
    ssr0 = float(r0 @ r0)
    if len(ids) > MAX_SUSPECT_PARTS:
        return SuspectFit(
            suspects=[], equivalent=[], nominal_residual_rms_lsb=float(np.sqrt(ssr0 / n) / scale),
            offset=float(coef0[0]) if coef0.size else 0.0,
            gain=float(coef0[1]) - 1.0 if coef0.size else 0.0, best_curve=nominal_curve,
            note=f"{len(ids)} parts are too many to fit one by one (at most {MAX_SUSPECT_PARTS}); "
                 "look at the DNL: in a string each step is one resistor")
    d = np.zeros(len(ids))
    norms = np.zeros(len(ids))
    ssr_lin = np.full(len(ids), np.inf)
    coef_lin: dict[int, np.ndarray] = {}
    active = np.ones(len(ids), dtype=bool)
    refine = list(range(len(ids)))
    for iteration in range(ITERATIONS):
        sel = [j for j in refine if active[j]]
        if not sel:
            break
        if cancel is not None and cancel.is_set():
            raise DiagnosisCancelled("diagnosis cancelled")
        f = 1.0 + d[sel]
        chosen = [ids[j] for j in sel]
        both = trial_curves(design, chosen + chosen, np.concatenate([f, f * (1.0 + STEP)]), codes)
        base, pert = both[: len(sel)], both[len(sel):]
        sens = (pert - base) / (f * STEP)[:, None]
        largest = 0.0
        for i, j in enumerate(sel):
            coef, r, norm = _project_fit(y, base[i], sens[i], absolute)
            norms[j] = norm
            if norm <= 1e-9 * max(float(np.sqrt(sens[i] @ sens[i])), 1e-300) or norm == 0.0:
                active[j] = False
                continue
            ssr_lin[j] = float(r @ r)
            coef_lin[j] = coef[:-1] if not absolute else np.zeros(0)
            gain = 1.0 if absolute else float(coef[1])
            step = float(coef[-1]) / gain if gain != 0.0 else 0.0  # no gain: nothing to follow
            new = float(np.clip(d[j] + step, *DEVIATION_LIMITS))
            largest = max(largest, abs(new - d[j]))
            d[j] = new
        if iteration == 0:
            refine = [int(j) for j in np.argsort(ssr_lin, kind="stable") if active[j]][:REFINE]
        if largest < CONVERGED:
            break
    exact = [j for j in refine if active[j]]
    final_rows = trial_curves(design, [ids[j] for j in exact], 1.0 + d[exact], codes) if exact \
        else np.zeros((0, n))
    final = dict(zip(exact, final_rows, strict=True))
    rows: list[tuple[float, Suspect, np.ndarray]] = []
    for j, p in enumerate(parts):
        if not active[j]:
            rows.append((np.inf, Suspect(p.part_id, p.role, p.ohms, float("nan"), float("nan"),
                                         float("nan"), float(np.sqrt(ssr0 / n) / scale), 0.0,
                                         False), np.zeros(0)))
            continue
        if j in final:
            coef, r, _ = _project_fit(y, final[j], None, absolute)
            ssr = float(r @ r)
        else:  # ranked below the refined parts: the one-step (linearised) fit is kept
            coef, ssr = coef_lin[j], float(ssr_lin[j])
        dof = max(n - n_par, 1)
        gain = 1.0 if absolute else abs(float(coef[1])) or 1.0
        stderr = float(np.sqrt(ssr / dof) / (norms[j] * gain)) if n > n_par else float("nan")
        explained = 1.0 - ssr / ssr0 if ssr0 > 0 else 0.0
        rows.append((ssr, Suspect(p.part_id, p.role, p.ohms, p.ohms * (1.0 + d[j]), float(d[j]),
                                  stderr, float(np.sqrt(ssr / n) / scale), explained, True),
                     coef))
    order = sorted(range(len(rows)), key=lambda i: rows[i][0])
    best = order[0]
    coef = rows[best][2]
    offset = float(coef[0]) if not absolute and coef.size else 0.0
    gain = float(coef[1]) - 1.0 if not absolute and coef.size else 0.0
    ranked = [rows[i][1] for i in order]
    first = ranked[0]
    ties = [s.id for s in ranked[1:] if s.identifiable and first.identifiable
            and s.residual_rms_lsb <= first.residual_rms_lsb * (1.0 + TIE_MARGIN) + 1e-12]
    return SuspectFit(
        suspects=ranked, equivalent=ties,
        nominal_residual_rms_lsb=float(np.sqrt(ssr0 / n) / scale),
        offset=offset, gain=gain,
        best_curve=final.get(best, nominal_curve),
    )


def as_built(design: Design, suspect: Suspect) -> Design:
    """``design`` with the suspect part at its fitted value (an as-built candidate).

    Raises
    ------
    MeasurementError
        The suspect has no fitted value (its effect is only a gain).
    """
    if not suspect.identifiable or not np.isfinite(suspect.fitted_ohms):
        raise MeasurementError(f"part {suspect.id} has no fitted value (its effect is only a gain)")
    parts = {**design.parts, suspect.id: suspect.fitted_ohms}
    name = f"{design.label}, as built ({suspect.id} {suspect.deviation * 100:+.2f} %)"
    return design.replace(parts=parts, name=name)
