"""The switching view's background job, without Qt: each candidate's glitch and settling at every
transition and its test-sine spectrum, reported candidate by candidate as ``workers.Progress``."""

from __future__ import annotations

import threading
from dataclasses import dataclass
from typing import Any

import numpy as np

from rungwise.core import Design
from rungwise.core.errors import RungwiseError
from rungwise.core.metrics.dynamics import Dynamics, dynamic_figures
from rungwise.core.metrics.spectrum import design_sine, spectrum_db
from rungwise.core.solve import solve
from rungwise.core.topologies import build


@dataclass
class CandidateDynamics:
    """One candidate's figures: per-code transition arrays, summary entries, spectrum (bin, dB),
    or ``error`` when it cannot be solved."""

    design: Design
    dynamics: Dynamics | None = None
    summary: dict[str, Any] | None = None
    bins: np.ndarray | None = None
    spectrum_db: np.ndarray | None = None
    cycles: int = 0
    error: str = ""


def candidate_dynamics(design: Design, cancel: threading.Event | None = None) -> CandidateDynamics:
    """Solve one candidate (raises ``InterruptedError`` when ``cancel`` is set between chunks)."""
    try:
        net = build(design)
        vout = solve(net).vout
        summary, dyn = dynamic_figures(design, net, vout, cancel=cancel)
    except RungwiseError as exc:
        return CandidateDynamics(design, error=str(exc))
    codes, cycles = design_sine(design)
    bins, db = spectrum_db(np.asarray(vout)[codes])
    return CandidateDynamics(design, dyn, summary, bins, db, cycles)


def dynamics_job(designs: tuple[Design, ...]):
    """A ``JobRunner`` job: ``job(cancel)`` yielding ``Progress`` and finally a list of
    :class:`CandidateDynamics` (one per design)."""
    from ..jobs.workers import Cancelled, Progress

    def job(cancel: threading.Event):
        out: list[CandidateDynamics] = []
        for i, d in enumerate(designs):
            if cancel.is_set():
                raise Cancelled
            try:
                out.append(candidate_dynamics(d, cancel))
            except InterruptedError:
                raise Cancelled from None
            yield Progress(i + 1, len(designs), list(out))
        yield out

    return job
