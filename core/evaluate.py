"""``evaluate(design)``: every per-code array and the summary figures of one candidate."""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import Any

import numpy as np

from .design import Design
from .figure_meaning import reasons
from .figure_registry import SUMMARY, labels_and_units
from .limits import check_evaluation
from .metrics import linearity
from .metrics.dynamics import Dynamics, Scope, dynamic_figures
from .metrics.power import WHOLE_CODES, PowerFold
from .metrics.power_arrays import part_power_arrays
from .metrics.structure import structure
from .network import Network
from .part_rows import PartRows
from .parts.figures import part_figures
from .solution import Solution
from .solve import solve
from .topologies import build
from .worst_case import summary as worst_case_summary


@dataclass
class Evaluation:
    """Results of one design at every code.

    Attributes
    ----------
    design : Design
    codes : ndarray of int, shape (n_codes,)
    vout : ndarray, shape (n_codes,), volts
    rout : ndarray, shape (n_codes,), ohms — Thevenin resistance at the output, load excluded
    iref : ndarray, shape (n_codes,), amperes — delivered by the reference
    inl_endpoint : ndarray, shape (n_codes,), endpoint LSB
    inl_bestfit : ndarray, shape (n_codes,), LSB of the least-squares slope
    dnl : ndarray, shape (n_codes − 1,), endpoint LSB
    summary : dict[str, float | int | bool | str]
        Scalar figures (see :data:`SUMMARY_KEYS`).
    parts : sequence of dict
        ``{"id", "ohms", "role", "power_max", "power_code"}`` per resistor, in display order:
        value after snapping (Ω), worst-case power over all codes (W) and the code where it happens
        (a :class:`~rungwise.core.part_rows.PartRows`, whose dicts are made when read).
    network : Network
    solution : Solution
    notes : dict[str, str]
        How some summary figures were decided, in words, by summary key (``guaranteed_monotonic``).
    no_meaning : dict[str, str]
        Summary keys that mean nothing for the inputs (their value is NaN) → the reason
        (``figure_meaning.py``), e.g. settling with no load capacitance.
    dynamics : Dynamics
        Per-transition glitch impulse (V·s), peak (V) and settling (s), shape (n_codes,): element c
        is transition c − 1 → c, element 0 is 0, NaN where not computed; ``note`` says why they
        mean nothing for these inputs (``None`` when they do).
    """

    design: Design
    codes: np.ndarray
    vout: np.ndarray
    rout: np.ndarray
    iref: np.ndarray
    inl_endpoint: np.ndarray
    inl_bestfit: np.ndarray
    dnl: np.ndarray
    summary: dict[str, Any]
    parts: list[dict[str, Any]]
    network: Network = field(repr=False)
    solution: Solution = field(repr=False)
    notes: dict[str, str] = field(default_factory=dict)
    no_meaning: dict[str, str] = field(default_factory=dict)
    dynamics: Dynamics | None = field(default=None, repr=False)

    def per_code(self) -> dict[str, np.ndarray]:
        """Per-code arrays by name; ``dnl`` is padded with NaN at the last code; ``glitch`` (V·s)
        and ``settling`` (s) hold transition c − 1 → c at element c (0 at element 0)."""
        out = {
            "code": self.codes, "vout": self.vout, "rout": self.rout, "iref": self.iref,
            "inl_endpoint": self.inl_endpoint, "inl_bestfit": self.inl_bestfit,
            "dnl": np.append(self.dnl, np.nan),
        }
        if self.dynamics is not None:
            out["glitch"] = self.dynamics.glitch
            out["settling"] = self.dynamics.settling
        return out


SUMMARY_KEYS: dict[str, tuple[str, str]] = labels_and_units(SUMMARY)
"""Summary key → (label, unit) in display order (from :mod:`.figure_registry`)."""


def _argmin_max(x: np.ndarray) -> tuple[float, int, float, int]:
    finite = np.where(np.isfinite(x), x, np.nan)
    if np.all(np.isnan(finite)):
        return float(x[0]), 0, float(x[0]), 0
    lo, hi = int(np.nanargmin(finite)), int(np.nanargmax(finite))
    if np.any(np.isposinf(x)):
        hi = int(np.argmax(np.isposinf(x)))
    return float(x[lo]), lo, float(x[hi]), hi


def summarize(design: Design, net: Network, sol: Solution,
              curves: dict[str, np.ndarray] | None = None,
              guarantee: dict[str, Any] | None = None) -> dict[str, Any]:
    """Scalar figures of a nominal solution (see :data:`SUMMARY_KEYS`).

    ``curves`` may pass the INL/DNL arrays already computed (keys ``inl_endpoint``, ``inl_bestfit``,
    ``dnl``) so they are not computed twice; ``guarantee`` the worst-case entries
    (``worst_case.summary``), placed after ``monotonic``.
    """
    v = sol.vout
    n_codes = v.shape[-1]
    ideal = net.ideal_lsb
    lsb = float(linearity.endpoint_lsb(v))
    curves = curves or linearity_curves(v)
    inl_e, inl_b, steps = curves["inl_endpoint"], curves["inl_bestfit"], curves["dnl"]
    gain_error = lsb / ideal - 1.0 if ideal else float("nan")
    out: dict[str, Any] = {
        "ideal_lsb": ideal,
        "ideal_full_scale": ideal * (n_codes - 1),
        "lsb": lsb,
        "full_scale": float(v[-1]),
        "offset_error": float(v[0]),
        "gain_error": gain_error,
        "gain_error_lsb": gain_error * (n_codes - 1),
        "max_abs_inl_endpoint": float(np.nanmax(np.abs(inl_e))),
        "max_abs_inl_bestfit": float(np.nanmax(np.abs(inl_b))),
        "max_abs_dnl": float(np.nanmax(np.abs(steps))) if steps.size else 0.0,
        "monotonic": bool(linearity.monotonic(v)),
        **(guarantee or {}),
    }
    for name, arr in (("rout", sol.rout), ("iref", sol.iref)):
        lo, lo_code, hi, hi_code = _argmin_max(arr)
        out.update({f"{name}_min": lo, f"{name}_min_code": lo_code, f"{name}_max": hi,
                    f"{name}_max_code": hi_code})
    out.update(structure(net, design.unit_r))
    return out


def linearity_curves(v: np.ndarray) -> dict[str, np.ndarray]:
    """Endpoint INL, best-fit INL and DNL of ``v`` (shape (n_codes,), volts), in LSB."""
    return {"inl_endpoint": linearity.inl_endpoint(v), "inl_bestfit": linearity.inl_bestfit(v),
            "dnl": linearity.dnl(v)}


def evaluate(design: Design, dynamics: Scope = "all") -> Evaluation:
    """Solve ``design`` at every code and compute its figures.

    Parameters
    ----------
    design : Design
    dynamics : {"all", "major"}
        Transitions whose glitch and settling are solved: every one (a stated sample above
        12 bits) or only the major carry and the full-scale step (sweeps).

    Returns
    -------
    Evaluation
        Arrays of shape (n_codes,) (``dnl``: n_codes − 1), SI units, INL/DNL in LSB.

    Raises
    ------
    NetworkError
        The network cannot be solved (names the floating node).
    DesignError
        ``bits``: solving every code would need more than a safe share of memory (``limits.py``).
    """
    check_evaluation(design.bits)
    net = build(design)
    # one nominal solve: its node voltages feed the power figures — kept up to WHOLE_CODES,
    # streamed piece by piece into the power fold above that (plain networks); a string's come
    # from its reference and load currents instead
    array_held = net.selector is not None or bool(net.chains)
    fold = PowerFold(net) if not (array_held or net.groups) and net.n_codes > WHOLE_CODES else None
    sol = solve(net, keep_nodes=not array_held and (net.n_codes <= WHOLE_CODES or fold is not None),
                node_sink=None if fold is None else fold.add)
    v = sol.vout
    curves = linearity_curves(v)
    extra, elements = part_figures(design, net, sol, None if fold is None else fold.result(),
                                   nominal_inl=curves["inl_endpoint"])
    guarantee, guarantee_note = worst_case_summary(design, net=net)
    power_max, power_code = part_power_arrays(elements, net.parts)
    dyn_summary, dyn = dynamic_figures(design, net, v, scope=dynamics)
    summary = {**summarize(design, net, sol, curves, guarantee), **extra, **dyn_summary}
    void = reasons(design, summary, net=net)
    for key in ("worst_case_min_step", "worst_case_transition"):  # no search made: say why
        if isinstance(summary.get(key), float) and np.isnan(summary[key]):
            void.setdefault(key, guarantee_note)
    summary.update(dict.fromkeys(void, float("nan")))
    return Evaluation(
        design=design,
        codes=np.arange(net.n_codes),
        vout=v,
        rout=sol.rout,
        iref=sol.iref,
        inl_endpoint=curves["inl_endpoint"],
        inl_bestfit=curves["inl_bestfit"],
        dnl=curves["dnl"],
        summary=summary,
        parts=PartRows(net.parts, power_max, power_code),
        network=net,
        solution=sol,
        notes={"guaranteed_monotonic": guarantee_note},
        no_meaning=void,
        dynamics=dyn,
    )
