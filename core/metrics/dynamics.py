"""The dynamic and spectral figures ``evaluate`` adds: glitch and settling per transition (the
major carry, the worst, the full-scale step) and the test sine's SFDR, THD, SINAD and ENOB."""

from __future__ import annotations

from dataclasses import dataclass
from typing import Any, Literal

import numpy as np

from ..network import Network
from ..timing import timing_of
from .glitch import TransitionFigures, no_glitch_reason, sample_codes, solve_transitions
from .spectrum import design_sine, spectrum_figures

Scope = Literal["all", "major"]
"""Which transitions to solve: all (or the stated sample above 12 bits), or the major carry only."""


@dataclass
class Dynamics:
    """Per-code transition arrays (element c: transition c − 1 → c; element 0 is 0; NaN where not
    computed) and the note saying why they mean nothing (``None`` when they do)."""

    glitch: np.ndarray
    settling: np.ndarray
    peak: np.ndarray
    note: str | None
    sample: str
    glitch_note: str | None = None


def major_code(n_codes: int) -> int:
    """The major carry: transition 2^(N−1) − 1 → 2^(N−1)."""
    return n_codes // 2


def dynamic_figures(design: Any, net: Network, vout: np.ndarray, scope: Scope = "all",
                    cancel: Any = None) -> tuple[dict[str, Any], Dynamics]:
    """Summary entries (labels in :mod:`..figure_registry`) and per-code arrays of ``design``'s
    network.

    ``vout`` (n_codes,) V is the nominal solution (the sine's values are read from it).
    """
    timing = timing_of(design)
    n = net.n_codes
    major = major_code(n)
    codes = sample_codes(design.bits) if scope == "all" else np.array([major])
    from_codes = np.concatenate([codes - 1, [0]])
    to_codes = np.concatenate([codes, [n - 1]])
    figs: TransitionFigures = solve_transitions(net, timing, from_codes, to_codes, cancel=cancel)
    glitch_note = no_glitch_reason(net, timing)
    if glitch_note is not None:  # no edge timing: the glitch figures mean nothing (never 0)
        figs.impulse[:] = np.nan
        figs.peak[:] = np.nan
    per = {name: np.full(n, np.nan) for name in ("glitch", "settling", "peak")}
    for name, arr in (("glitch", figs.impulse), ("settling", figs.settling), ("peak", figs.peak)):
        per[name][codes] = arr[:-1]
        per[name][0] = 0.0
    imp, sett = figs.impulse[:-1], figs.settling[:-1]
    at_major = int(np.searchsorted(codes, major))
    out: dict[str, Any] = {
        "glitch_major": float(imp[at_major]),
        "glitch_peak_major": float(figs.peak[at_major]),
        "glitch_peak_major_lsb": float(figs.peak[at_major] / abs(figs.lsb)) if figs.lsb else np.nan,
        "settling_major": float(sett[at_major]),
    }
    out.update({"glitch_worst": np.nan, "glitch_worst_code": np.nan, "settling_worst": np.nan,
                "settling_worst_code": np.nan})
    if scope == "all" and figs.reason is None:
        s = int(np.nanargmax(sett))
        out.update({"settling_worst": float(sett[s]), "settling_worst_code": int(codes[s])})
    if scope == "all" and glitch_note is None:
        w = int(np.nanargmax(np.abs(imp)))
        out.update({"glitch_worst": float(imp[w]), "glitch_worst_code": int(codes[w])})
    out["settling_full_scale"] = float(figs.settling[-1])
    sine, cycles = design_sine(design)
    out.update({k: float(v) for k, v in spectrum_figures(np.asarray(vout)[sine], cycles).items()})
    from .glitch import sample_text

    return out, Dynamics(glitch=per["glitch"], settling=per["settling"], peak=per["peak"],
                         note=figs.reason, sample=sample_text(design.bits), glitch_note=glitch_note)
