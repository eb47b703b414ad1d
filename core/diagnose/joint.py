"""Several parts at once: every set of up to three parts that explains a measured curve.

Model (as in ``suspects.py``, now with a set S of parts): V_meas ≈ a + s·V_net(R_p = R_p0·(1 + d_p),
p ∈ S). First the sensitivity of the network's output to each part (one batched solve) gives a
linear least-squares fit for *every* set of one, two and three parts at once (small normal
equations, stacked); the sets that explain the curve within the noise and hold no smaller set that
already does are kept, best first, and refined by Gauss–Newton on the exact network (each step
one batched solve for every kept set).

Within the noise: the meter's floor is the RMS its pooled noise (from repeats; else
:data:`MIN_NOISE_LSB` per reading) leaves on the per-code means. A set explains the curve when its
residual RMS is at most :data:`TIE` × max(best set's, floor), and the best set's is itself at most
:data:`UNEXPLAINED` × floor + :data:`UNEXPLAINED_LSB` (else nothing explains it and the closest
sets are listed as such); extra measurements must be explained too, each block by the same rule
(output resistances against their assumed uncertainty, :data:`ROUT_NOISE`). The linear pass
only screens: the best :data:`SCREENED` sets of each size are refined on the exact network before
they are judged.

Identifiability: the bit-weight sensitivity matrix W (bits × parts: how each part's deviation moves
each least-squares bit weight; the gain direction removed when the gain is free) has rank at most
N − 1 while an R-2R ladder has 2N parts. Parts whose columns are linearly dependent (up to three
at a time) change the bit weights the same way: the curve cannot tell them apart. Extra
measurements add rows: the output resistance at some codes, or the curve again with a known load
(its change with the load carries the output resistance at every code).
"""

from __future__ import annotations

import itertools
import threading
from dataclasses import dataclass, field

import numpy as np

from ..design import Design
from ..network import PartList
from ..solve import solve
from ..topologies import build
from .bit_weights import bit_matrix
from .reading import Measurement, MeasurementError
from .suspects import DiagnosisCancelled, _element_ids

MAX_PARTS = 3
"""Largest set of parts fitted together."""

MAX_CANDIDATES = 40
"""Parts considered for sets of two and three (the best single fits first)."""

MAX_EXPLANATIONS = 12
"""Most explanations reported."""

MIN_DEVIATION = 1e-3
"""A set in which some part is fitted within ±0.1 % is not a distinct explanation (that part is
not off; the smaller set without it says the same)."""

SCREENED = 12
"""Sets of each size passed from the linear screen to the exact refinement."""

STEP = 1e-6
"""Relative change of a part for the sensitivities (fraction)."""

ITERATIONS = 5
"""Gauss–Newton steps of the refinement."""

DEPENDENT = 1e-4
"""Smallest singular value of unit-length sensitivity columns below which they are dependent."""

ROUT_NOISE = 1e-3
"""Relative uncertainty assumed for a measured output resistance (0.1 %)."""

TIE = 2.0
"""Another set explains the curve as well when its residual RMS is at most this many times the best
set's (or the meter's floor, if larger): the other parts' own small deviations leave differences of
that order that no set of three parts can take up."""

UNEXPLAINED = 3.0
"""The best set explains the curve only when its residual RMS is within this many times the
meter's floor plus :data:`UNEXPLAINED_LSB`."""

UNEXPLAINED_LSB = 0.01
"""See :data:`UNEXPLAINED`, LSB."""

MIN_NOISE_LSB = 0.002
"""Noise assumed per reading when the file has no repeats and the fit leaves nothing, LSB."""


@dataclass(frozen=True)
class Extras:
    """Measurements that help tell parts apart.

    Attributes
    ----------
    rout : dict code → ohms — output resistance measured at some codes (sources zeroed)
    loaded : Measurement or None — the curve measured again with ``load_ohms`` across the output
    load_ohms : float — that load, ohms
    """

    rout: dict[int, float] = field(default_factory=dict)
    loaded: Measurement | None = None
    load_ohms: float = float("nan")

    def names(self) -> list[str]:
        """What was given, in words."""
        out = []
        if self.rout:
            out.append(f"output resistance at {len(self.rout)} code(s)")
        if self.loaded is not None:
            out.append(f"the curve with a {self.load_ohms:g} Ω load")
        return out


@dataclass
class Explanation:
    """One set of parts and their fitted deviations.

    ``parts``: id → deviation (fraction); ``residual_rms_lsb``: what the set leaves of the main
    curve, RMS in LSB; ``rout_rms_sigma``: of the measured output resistances, RMS in units of
    their assumed uncertainty (:data:`ROUT_NOISE`); ``loaded_rms_lsb``: of the loaded curve, LSB;
    ``chi2``/``dof``: every row over the noise σ²; ``fits``: within the noise (module docstring).
    """

    parts: dict[str, float]
    residual_rms_lsb: float
    chi2: float
    dof: int
    fits: bool
    rout_rms_sigma: float = 0.0
    loaded_rms_lsb: float = 0.0


@dataclass(frozen=True, eq=False)
class JointFit:
    """Result of :func:`fit_joint`.

    Attributes
    ----------
    explanations : list[Explanation] — best first (those within the noise, or the best few when
        none is)
    ambiguous : bool — more than one explanation fits within the noise
    rank : int — rank of the bit-weight sensitivity matrix (with the extra rows)
    n_parts : int — parts it covers
    confounded : list[list[str]] — smallest sets of parts with dependent columns (≤ 3 parts)
    noise_lsb : float — σ used for "within the noise", LSB
    noise_known : bool — σ came from repeated readings
    extras : list[str] — extra measurements used
    note : str — a plain-words summary
    """

    explanations: list[Explanation]
    ambiguous: bool
    rank: int
    n_parts: int
    confounded: list[list[str]]
    noise_lsb: float
    noise_known: bool
    extras: list[str]
    note: str


def _board_outputs(design: Design, boards: list[dict[str, float]], codes: np.ndarray,
                   extras: Extras) -> np.ndarray:
    """Stacked model rows (main curve, then rout at ``extras.rout`` codes, then the loaded curve)
    of each board (part id → factor); shape (n_boards, n_rows)."""
    nets = [build(design)]
    if extras.loaded is not None:
        nets.append(build(design.replace(load_r=extras.load_ohms)))
    rows = []
    for k, net in enumerate(nets):
        elements = _element_ids(net)
        nominal = {p.part_id: p.ohms for p in net.parts}
        ids = sorted({pid for b in boards for pid in b})
        ohms, scale = {}, np.ones((len(boards), 1))
        for pid in ids:
            f = np.array([b.get(pid, 1.0) for b in boards])[:, None]
            if pid in elements:
                ohms[pid] = nominal[pid] * f
            elif pid == "feedback" and net.output.kind == "virtual-ground":
                scale = scale * f
        want = codes if k == 0 else extras.loaded.codes
        rcodes = np.array(sorted(extras.rout), dtype=np.int64) if k == 0 else np.zeros(0, np.int64)
        allc = np.unique(np.concatenate([want, rcodes]))
        sol = solve(net, ohms=ohms or None, codes=allc)
        v = np.broadcast_to(sol.vout, (len(boards), allc.size)) * scale
        rows.append(v[:, np.searchsorted(allc, want)])
        if k == 0 and rcodes.size:
            r = np.broadcast_to(sol.rout, (len(boards), allc.size))
            rows.append(r[:, np.searchsorted(allc, rcodes)])
    return np.concatenate(rows, axis=1)


class _Problem:
    """The stacked, weighted least-squares problem: rows, weights, nuisance columns."""

    def __init__(self, m: Measurement, design: Design, extras: Extras, lsb: float, noise: float,
                 absolute: bool) -> None:
        self.m, self.design, self.extras, self.absolute = m, design, extras, absolute
        self.n_main = m.codes.size
        self.lsb = abs(lsb)
        self.noise_known = bool(np.isfinite(noise) and noise > 0)
        self.sigma_v = noise if self.noise_known else MIN_NOISE_LSB * self.lsb
        rcodes = sorted(extras.rout)
        y = [m.volts, np.array([extras.rout[c] for c in rcodes], dtype=float)]
        if extras.loaded is not None:
            y.append(extras.loaded.volts)
        self.y_raw = np.concatenate(y)
        n_r = len(rcodes)
        n_l = 0 if extras.loaded is None else extras.loaded.codes.size
        self.kind = np.concatenate([np.zeros(self.n_main), np.ones(n_r), np.full(n_l, 2)])
        counts = [m.count, np.ones(n_r)] + ([extras.loaded.count] if n_l else [])
        w = np.sqrt(np.concatenate(counts).astype(float)) / self.sigma_v  # means of repeats
        w[self.kind == 1] = 1.0 / (ROUT_NOISE * np.abs(self.y_raw[self.kind == 1]))
        self.w = w

    def nuisance(self, base: np.ndarray) -> np.ndarray:
        """Offset and gain columns of the curve rows (none when absolute); weighted."""
        if self.absolute:
            return np.zeros((base.size, 0))
        curve = self.kind != 1
        cols = np.column_stack([curve.astype(float), np.where(curve, base, 0.0)])
        return cols * self.w[:, None]

    def residual(self, model: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
        """Weighted residual after the nuisance fit, and the nuisance coefficients."""
        y = self.y_raw * self.w
        x = model * self.w
        n = self.nuisance(model)
        if n.shape[1] == 0:
            return y - x, np.zeros(0)
        curve = self.kind != 1
        r_other = np.where(curve, 0.0, y - x)
        coef, *_ = np.linalg.lstsq(n, np.where(curve, y, 0.0), rcond=None)
        return np.where(curve, y - n @ coef, r_other), coef


def fit_joint(m: Measurement, design: Design, lsb: float, noise: float, absolute: bool = False,
              extras: Extras | None = None, cancel: threading.Event | None = None) -> JointFit:
    """Fit every set of up to :data:`MAX_PARTS` parts to the curve (see the module docstring).

    Parameters
    ----------
    m : Measurement — the main curve
    design : Design — as designed
    lsb : float — volts per LSB for the figures
    noise : float — pooled meter noise per reading, volts (NaN when unknown)
    absolute : bool — trust the measured offset and gain
    extras : Extras, optional
    cancel : threading.Event, optional — checked before every batched solve
    """
    extras = extras or Extras()
    prob = _Problem(m, design, extras, lsb, noise, absolute)
    net = build(design)
    ids = [pid for pid in PartList.of(net.parts).ids()]
    if len(ids) > 1024:
        return JointFit([], False, 0, len(ids), [], np.nan, prob.noise_known, extras.names(),
                        f"{len(ids)} parts are too many to fit in sets")
    _check(cancel)
    boards = [{}] + [{pid: 1.0 + STEP} for pid in ids]
    out = _board_outputs(design, boards, m.codes, extras)
    base = out[0]
    r0, _ = prob.residual(base)
    sens = (out[1:] - base) / STEP  # (parts, rows), raw units
    n_mat = prob.nuisance(base)
    q = np.linalg.qr(n_mat)[0] if n_mat.shape[1] else np.zeros((base.size, 0))
    jw = sens.T * prob.w[:, None]  # rows × parts, weighted
    jp = jw - q @ (q.T @ jw)  # nuisance removed
    yp = r0
    norms = np.sqrt(np.sum(jp**2, axis=0))
    usable = norms > 1e-9 * max(float(norms.max()), 1e-300)
    rank, confounded = _identifiability(m, design, sens, base, ids, usable, absolute, prob)
    cand = np.flatnonzero(usable)
    gram = jp.T @ jp
    c = jp.T @ yp
    single = np.full(len(ids), -np.inf)
    single[cand] = c[cand] ** 2 / np.maximum(np.diag(gram)[cand], 1e-300)
    cand = cand[np.argsort(-single[cand], kind="stable")][:MAX_CANDIDATES]
    yy = float(yp @ yp)
    sets, ssr, coefs = [], [], []
    for k in range(1, MAX_PARTS + 1):
        combos = np.array(list(itertools.combinations(sorted(cand.tolist()), k)), dtype=np.int64)
        if combos.size == 0:
            continue
        g = gram[combos[:, :, None], combos[:, None, :]]  # (sets, k, k)
        b = c[combos]
        ev = np.linalg.eigvalsh(g)
        ok = ev[:, 0] > 1e-10 * np.maximum(ev[:, -1], 1e-300)
        combos, g, b = combos[ok], g[ok], b[ok]
        if combos.size == 0:
            continue
        d = np.linalg.solve(g, b[:, :, None])[:, :, 0]
        sets += [tuple(row) for row in combos.tolist()]
        ssr.append(yy - np.sum(b * d, axis=1))
        coefs += list(d)
    ssr_all = np.concatenate(ssr) if ssr else np.zeros(0)
    n_rows = base.size
    n_nuis = n_mat.shape[1]
    # σ²: the meter's (weights are in its units, so 1) or, when the best three-part fit leaves more,
    # that: the other parts' small deviations act as noise no set of three can take up
    big = [i for i, st in enumerate(sets) if len(st) == max(len(x) for x in sets)] if sets else []
    s2 = 1.0
    if big:
        j = big[int(np.argmin(ssr_all[big]))]
        s2 = max(1.0, float(ssr_all[j]) / max(n_rows - n_nuis - len(sets[j]), 1))
    chi = ssr_all / s2
    np.array([max(n_rows - n_nuis - len(s), 1) for s in sets])
    # the linear pass only screens: the best few sets of each size go to the exact refinement
    sizes = np.array([len(st) for st in sets])
    screened: list[int] = []
    for k in range(1, MAX_PARTS + 1):
        idx = np.flatnonzero(sizes == k)
        screened += idx[np.argsort(chi[idx], kind="stable")][:SCREENED].tolist()
    refined = _refine(prob, design, m, extras, ids, [sets[i] for i in screened],
                      [coefs[i] for i in screened], s2, cancel)
    floor = prob.sigma_v * float(np.sqrt(np.mean(1.0 / m.count))) / prob.lsb
    best_rms = min((e.residual_rms_lsb for e in refined), default=0.0)
    best_rout = min((e.rout_rms_sigma for e in refined), default=0.0)
    best_loaded = min((e.loaded_rms_lsb for e in refined), default=0.0)
    explained = best_rms <= UNEXPLAINED * floor + UNEXPLAINED_LSB
    for e in refined:
        e.fits = (explained and e.residual_rms_lsb <= TIE * max(best_rms, floor)
                  and e.rout_rms_sigma <= TIE * max(best_rout, 1.0)
                  and e.loaded_rms_lsb <= TIE * max(best_loaded, floor))
    refined.sort(key=lambda e: (len(e.parts), e.residual_rms_lsb))  # fewest parts, then best fit
    explanations = [e for e in refined if e.fits and all(abs(x) >= MIN_DEVIATION
                                                         for x in e.parts.values())]
    any_fit = bool(explanations)
    if not explanations:
        explanations = sorted(refined, key=lambda e: e.chi2)[:3]
    explanations = explanations[:MAX_EXPLANATIONS]
    fitting = [e for e in explanations if e.fits]
    ambiguous = len(fitting) > 1
    note = _note(explanations, fitting, any_fit, confounded, rank, int(usable.sum()), extras)
    return JointFit(explanations, ambiguous, rank, int(usable.sum()), confounded,
                    float(np.sqrt(s2) * prob.sigma_v / prob.lsb), prob.noise_known,
                    extras.names(), note)


def _check(cancel: threading.Event | None) -> None:
    if cancel is not None and cancel.is_set():
        raise DiagnosisCancelled("diagnosis cancelled")


def _refine(prob: _Problem, design: Design, m: Measurement, extras: Extras, ids: list[str],
            sets: list[tuple[int, ...]], coefs: list[np.ndarray], s2: float,
            cancel: threading.Event | None) -> list[Explanation]:
    """Gauss–Newton on the exact network for each set, all sets in one batched solve per step."""
    devs = [np.clip(np.asarray(cf, dtype=float), -0.9, 9.0) for cf in coefs]
    for _ in range(ITERATIONS):
        _check(cancel)
        boards = []
        for s, d in zip(sets, devs, strict=True):
            b = {ids[j]: 1.0 + x for j, x in zip(s, d, strict=True)}
            boards.append(b)
            for j in s:
                bb = dict(b)
                bb[ids[j]] = b[ids[j]] * (1.0 + STEP)
                boards.append(bb)
        out = _board_outputs(design, boards, m.codes, extras)
        pos = 0
        for i, (s, d) in enumerate(zip(sets, devs, strict=True)):
            base = out[pos]
            jac = (out[pos + 1: pos + 1 + len(s)] - base) / (STEP * (1.0 + d))[:, None]
            pos += 1 + len(s)
            r, _ = prob.residual(base)
            n_mat = prob.nuisance(base)
            jw = jac.T * prob.w[:, None]
            if n_mat.shape[1]:
                q = np.linalg.qr(n_mat)[0]
                jw = jw - q @ (q.T @ jw)
            step, *_ = np.linalg.lstsq(jw, r, rcond=None)
            devs[i] = np.clip(d + step, -0.9, 9.0)
    _check(cancel)
    boards = [{ids[j]: 1.0 + x for j, x in zip(s, d, strict=True)} for s, d in zip(sets, devs,
                                                                                      strict=True)]
    out = _board_outputs(design, boards, m.codes, extras)
    result = []
    for s, d, model in zip(sets, devs, out, strict=True):
        r, _ = prob.residual(model)
        ssr = float(r @ r)
        dof = max(r.size - prob.nuisance(model).shape[1] - len(s), 1)
        raw = r / prob.w  # volts (curves) or ohms (output resistance)
        chi = ssr / s2
        result.append(Explanation(
            parts={ids[j]: float(x) for j, x in zip(s, d, strict=True)},
            residual_rms_lsb=_rms(raw[prob.kind == 0]) / prob.lsb, chi2=chi, dof=dof,
            fits=False, rout_rms_sigma=_rms(r[prob.kind == 1]),
            loaded_rms_lsb=_rms(raw[prob.kind == 2]) / prob.lsb))
    return result


def _rms(x: np.ndarray) -> float:
    return float(np.sqrt(np.mean(x**2))) if x.size else 0.0


def _identifiability(m: Measurement, design: Design, sens: np.ndarray, base: np.ndarray,
                     ids: list[str], usable: np.ndarray, absolute: bool, prob: _Problem
                     ) -> tuple[int, list[list[str]]]:
    """Rank of the bit-weight sensitivity matrix (extra rows appended) and the smallest dependent
    sets of its columns (see the module docstring)."""
    bits = design.bits
    b = np.column_stack([np.ones(m.codes.size), bit_matrix(m.codes, bits)])
    proj = np.linalg.pinv(b)[1:]  # bits × codes: least-squares bit weights
    main = prob.kind == 0
    w = proj @ sens[:, main].T  # bits × parts
    if not absolute:
        g = proj @ base[main]
        g = g / max(float(np.linalg.norm(g)), 1e-300)
        w = w - np.outer(g, g @ w)
    blocks = [w / max(float(np.abs(w).max()), 1e-300)]
    other = ~main
    if other.any():
        x = sens[:, other].T * prob.w[other][:, None]
        blocks.append(x / max(float(np.abs(x).max()), 1e-300))
    mat = np.vstack(blocks)[:, usable]
    names = [pid for pid, u in zip(ids, usable, strict=True) if u]
    if mat.size == 0:
        return 0, []
    cols = mat / np.maximum(np.linalg.norm(mat, axis=0), 1e-300)
    sv = np.linalg.svd(cols, compute_uv=False)
    rank = int(np.sum(sv > DEPENDENT * sv[0]))
    n = cols.shape[1]
    # pairs: for unit columns the smaller singular value of [a b] is √(1 − |a·b|)
    gram = np.abs(cols.T @ cols)
    i, j = np.triu_indices(n, 1)
    pairs = [(a, b) for a, b in zip(i.tolist(), j.tolist(), strict=True)
             if 1.0 - gram[a, b] < DEPENDENT**2]
    found = [[names[a], names[b]] for a, b in pairs]
    if n <= MAX_CANDIDATES:
        combos = np.array(list(itertools.combinations(range(n), 3)), dtype=np.int64)
        if combos.size:
            sv = np.linalg.svd(np.moveaxis(cols[:, combos], 0, 1), compute_uv=False)[:, -1]
            in_pair = {frozenset(p) for p in pairs}
            for row in combos[sv < DEPENDENT].tolist():
                if not any(frozenset(q) in in_pair for q in itertools.combinations(row, 2)):
                    found.append([names[r] for r in row])
    return rank, found


def _note(explanations, fitting, any_fit, confounded, rank, n_parts, extras) -> str:
    """The finding in plain words."""
    words = []
    if not any_fit:
        words.append("no set of up to three parts explains the curve within the noise; the "
                     "closest are listed")
    elif len(fitting) > 1:
        words.append(f"{len(fitting)} different sets of parts explain the curve within the "
                     "noise: the measurement cannot tell them apart")
    else:
        words.append("one set of parts explains the curve within the noise")
    if confounded:
        groups = "; ".join(" and ".join(g) for g in confounded[:6])
        words.append(f"the bit-weight sensitivity matrix has rank {rank} for {n_parts} parts, so "
                     f"these change the curve alike and can never be told apart from it: {groups}")
    if extras.names():
        words.append("used " + " and ".join(extras.names()))
    elif len(fitting) > 1 or confounded:
        words.append("measuring the output resistance at a few codes, or the curve again with a "
                     "known load, can break such ties")
    return "; ".join(words)


def read_rout(items: list[str]) -> dict[int, float]:
    """``CODE=OHMS`` strings (e.g. ``"128=10.02k"``) → {code: ohms}."""
    from ..units import parse_quantity

    out: dict[int, float] = {}
    for text in items:
        code, _, ohms = text.partition("=")
        try:
            c = int(code.strip(), 0)
            r = parse_quantity(ohms, "Ω", "rout")
        except (ValueError, TypeError) as exc:
            raise MeasurementError(f"output resistance {text!r}: expected CODE=OHMS, e.g. "
                                   "128=10.02k") from exc
        if c < 0 or not (np.isfinite(r) and r > 0):
            raise MeasurementError(f"output resistance {text!r}: code ≥ 0 and ohms > 0 needed")
        out[c] = float(r)
    return out
