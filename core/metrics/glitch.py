"""Glitch and settling of every transition, from the exact transient (``transient.py``).

For a transition c − 1 → c (named by c, ``CONVENTIONS.md``), with v_sync the output when every
switch changes at t = 0 as a step:

- net glitch impulse ∫₀^∞ (v − v_sync) dt, V·s — in closed form (positive: extra area above);
- peak glitch max |v − v_sync|, V — the exact waveform evaluated on a grid that holds every
  switching event (both sides of a jump) and refined by golden-section search around the
  largest value;
- settling time, the last time |v − v(∞)| exceeds ½ endpoint LSB, from t = 0 — the last grid
  point outside the band, then bisection on the exact waveform; past the last event the
  grid reaches the bound ln(Σ|amp|/(½ LSB))/λ_min beyond which no excursion is possible.

IEEE Std 1658 calls the impulse "glitch impulse" and measures it against the settled output on
both sides of the transition; ours is taken against the simultaneous-switching response, so the
part of the output's change that any switching would produce (the RC settling) is excluded and
only what the switches' timing adds is counted. Its settling time runs from the code change (its
"settling time" may start at the end of a stated delay); the ½ LSB error band is ours too.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from ..network import Network
from ..timing import Timing
from . import string_figures, string_laplace, string_taps
from .switching import CAP_FLOOR, branches, leg_skews, plain_node_count
from .transient import Segments, respond

MAX_NODES = 64
"""Largest network (unknown nodes of its plain form) the dense transient solver takes."""

ALL_TRANSITION_BITS = 12
"""Up to this resolution every transition is solved; above it a stated sample (``sample_codes``)."""

CHUNK = 256
"""Transitions solved together (bounds memory: chunk × grid × modes)."""

SEGMENT_POINTS = 17
"""Grid points per segment between events (fewer when there are many segments, see
:data:`GRID_BUDGET`; each segment is short then), ends included."""
GRID_BUDGET = 320
TAIL_POINTS = 120
REFINE_STEPS = 48


@dataclass
class TransitionFigures:
    """Figures of a batch of code changes ``from_codes`` → ``to_codes`` (shape (B,)).

    ``impulse`` V·s, ``peak`` V, ``settling`` s, each (B,); ``lsb`` the endpoint LSB (V).
    ``reason`` says why the figures mean nothing for these inputs (arrays NaN), else ``None``.
    """

    from_codes: np.ndarray
    to_codes: np.ndarray
    impulse: np.ndarray
    peak: np.ndarray
    settling: np.ndarray
    lsb: float
    reason: str | None = None


def sample_codes(bits: int) -> np.ndarray:
    """Transitions solved for ``bits``: all (c = 1 … 2^N − 1) up to :data:`ALL_TRANSITION_BITS`,
    else every carry into the top 12 bits, c = k·2^(N − 12) (the major carry included)."""
    step = 1 << max(0, bits - ALL_TRANSITION_BITS)
    return np.arange(step, 1 << bits, step, dtype=np.int64)


def sample_text(bits: int) -> str:
    """The transitions solved, in words."""
    if bits <= ALL_TRANSITION_BITS:
        return "every transition"
    return (f"the transitions c = k·2^{bits - ALL_TRANSITION_BITS} (every carry into the top "
            f"{ALL_TRANSITION_BITS} bits); the others are not computed")


def _uses_laplace(net: Network, timing: Timing, method: str) -> bool:
    """Whether a string with node capacitance goes to the Laplace-domain solution: when asked,
    or (``auto``) when it is too large for the dense solver and the solution holds."""
    if method == "laplace":
        if not string_laplace.applies(net, timing):
            raise ValueError("the Laplace-domain solution takes a resistor string with "
                             "timing.node_c set")
        return True
    return (method == "auto" and plain_node_count(net) > MAX_NODES
            and string_laplace.applies(net, timing))


def no_dynamics_reason(net: Network, timing: Timing) -> str | None:
    """Why glitch and settling mean nothing for these inputs, or ``None``."""
    if (plain_node_count(net) > MAX_NODES and not string_taps.applies(net, timing.node_c)
            and not string_laplace.applies(net, timing)):
        return (f"not computed: the dense transient solver takes networks of up to {MAX_NODES} "
                f"nodes and this one has {plain_node_count(net)}; only resistor strings have a "
                "solver for more")
    out = net.output
    load = timing.load_c if out.kind == "node" and not out.buffered else 0.0
    load = load if load >= CAP_FLOOR else 0.0
    if timing.node_c == 0 and load == 0 and not timing.has_edges:
        return ("no capacitance and instant switch edges: every code change is a clean step "
                "(set timing.node_c, load_c or timing.rise/fall/skew)")
    return None


NO_EDGES = ("no switch edge timing given (timing.rise, fall, skew): every switch moves at once, "
            "so nothing differs from the simultaneous step")
"""Why the glitch figures mean nothing when every edge is instant and on time."""


def no_glitch_reason(net: Network, timing: Timing) -> str | None:
    """Why the glitch figures (impulse, peak) mean nothing for these inputs, or ``None``."""
    return no_dynamics_reason(net, timing) or (None if timing.has_edges else NO_EDGES)


def dynamics_reason(design, glitch: bool = False, net: Network | None = None) -> str | None:
    """:func:`no_dynamics_reason` (or with ``glitch`` :func:`no_glitch_reason`) of a design
    (``net``: its built network, when the caller has it)."""
    from ..timing import timing_of
    from ..topologies import build

    tm = timing_of(design)
    if glitch and not tm.has_edges:
        return NO_EDGES
    if design.topology != "string" and (tm.has_edges or tm.node_c > 0):
        return None  # only strings outgrow the solver; no need to build
    net = build(design) if net is None else net
    return no_glitch_reason(net, tm) if glitch else no_dynamics_reason(net, tm)


class _Grid:
    """Shared evaluation points of a batch: (segment, τ) pairs in time order."""

    def __init__(self, actual: Segments, sync: Segments, half_lsb: float) -> None:
        times = actual.times
        seg, tau = [], []
        per = max(5, min(SEGMENT_POINTS, GRID_BUDGET // max(len(times) - 1, 1)))
        for j in range(len(times) - 1):
            pts = np.linspace(0.0, times[j + 1] - times[j], per)
            seg.append(np.full(pts.size, j))
            tau.append(pts)
        lam = np.concatenate([actual.lam[:, -1], sync.lam[:, 0]], axis=-1)
        amp = np.concatenate([np.abs(actual.amp[:, -1]), np.abs(sync.amp[:, 0])], axis=-1)
        pos = lam > 0
        total = np.sum(np.where(pos, amp, 0.0), axis=-1)
        slow = np.min(np.where(pos, lam, np.inf), axis=-1, initial=np.inf)
        fast = np.max(np.where(pos, lam, 0.0)) if pos.any() else 0.0
        with np.errstate(divide="ignore", invalid="ignore"):
            bound = np.log(np.maximum(total, 1e-300) / max(half_lsb, 1e-300)) / slow
        bound = np.where(np.isfinite(bound) & (bound > 0), bound, 0.0)
        # sync starts at 0; the actual tail starts at the last event
        reach = float(np.max(bound)) if bound.size else 0.0
        if fast > 0 and reach > 0:
            tail = np.concatenate([[0.0], np.geomspace(min(1e-3 / fast, reach / 10), reach * 1.05,
                                                       TAIL_POINTS)])
        else:
            tail = np.array([0.0])
        seg.append(np.full(tail.size, len(times) - 1))
        tau.append(tail)
        self.seg = np.concatenate(seg)
        self.tau = np.concatenate(tau)
        self.t = times[self.seg] + self.tau


def _golden_max(f, lo: np.ndarray, hi: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Maximum of f over [lo, hi] per row (f unimodal there), by golden-section search."""
    r = (np.sqrt(5.0) - 1) / 2
    a, b = lo.copy(), hi.copy()
    c, d = b - r * (b - a), a + r * (b - a)
    fc, fd = f(c), f(d)
    for _ in range(REFINE_STEPS):
        left = fc > fd
        b = np.where(left, d, b)
        a = np.where(left, a, c)
        c, d = b - r * (b - a), a + r * (b - a)
        fc, fd = f(c), f(d)
    x = (a + b) / 2
    return x, f(x)


def _figures(actual: Segments, sync: Segments, half_lsb: float
             ) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Impulse, peak and settling of a solved batch."""
    impulse = actual.area() - sync.area()
    grid = _Grid(actual, sync, half_lsb)
    b = actual.y0.shape[0]
    y = actual.on_grid(grid.seg, grid.tau)
    ys = sync.on_grid(np.zeros_like(grid.seg), grid.t)
    diff = np.abs(y - ys)
    i = np.argmax(diff, axis=1)
    rows = np.arange(b)
    peak = diff[rows, i]
    last = grid.seg.size - 1
    lo_i = np.where((i > 0) & (grid.seg[np.maximum(i - 1, 0)] == grid.seg[i]), i - 1, i)
    hi_i = np.where((i < last) & (grid.seg[np.minimum(i + 1, last)] == grid.seg[i]), i + 1, i)
    s_i = grid.seg[i][:, None]
    t0 = actual.times[grid.seg[i]][:, None]
    here, there = actual.piece(s_i), sync.piece(np.zeros_like(s_i))

    def gap(x):
        return np.abs(Segments.piece_at(here, x) - Segments.piece_at(there, t0 + x))

    _, refined = _golden_max(gap, grid.tau[lo_i][:, None], grid.tau[hi_i][:, None])
    peak = np.maximum(peak, refined[:, 0])

    out = np.abs(y - actual.final[:, None]) > half_lsb
    any_out = out.any(axis=1)
    k = last - np.argmax(out[:, ::-1], axis=1)
    settling = np.where(any_out, 0.0, 0.0)
    nxt = np.minimum(k + 1, last)
    jump = (grid.seg[nxt] != grid.seg[k]) | (k == last)
    settling = np.where(jump, grid.t[nxt], settling)
    s_k = grid.seg[nxt][:, None]
    lo = grid.tau[k][:, None].copy()
    hi = grid.tau[nxt][:, None].copy()
    fin = actual.final[:, None]
    piece = actual.piece(s_k)
    for _ in range(REFINE_STEPS):
        mid = (lo + hi) / 2
        outside = np.abs(Segments.piece_at(piece, mid) - fin) > half_lsb
        lo = np.where(outside, mid, lo)
        hi = np.where(outside, hi, mid)
    settled = actual.times[grid.seg[nxt]] + hi[:, 0]
    settling = np.where(jump, settling, settled)
    settling = np.where(any_out, settling, 0.0)
    settling = np.where((k == last) & any_out, np.nan, settling)
    return impulse, peak, settling


class _Solver:
    """The transient of one network: the dense branch form, or for a long string with no node
    capacitance the three-node template (``string_taps.py``)."""

    def __init__(self, net: Network, timing: Timing, method: str = "auto") -> None:
        self.net, self.timing = net, timing
        self.template = method == "auto" and string_taps.applies(net, timing.node_c)
        if self.template:
            self.br = string_taps.template(net, timing.load_c)
            self.start = np.full(2, max(timing.skew, default=0.0))
        else:
            self.br = branches(net, timing.node_c, timing.load_c)
            self.start = leg_skews(self.br, timing.skew)

    def lsb(self) -> float:
        """Endpoint LSB of the network, V (the exact static solver)."""
        from ..solve import solve

        v = solve(self.net, codes=np.array([0, self.net.n_codes - 1])).vout
        return float((v[1] - v[0]) / max(self.net.n_codes - 1, 1))

    def respond(self, from_codes: np.ndarray, to_codes: np.ndarray) -> tuple[Segments, Segments]:
        tm = self.timing
        if not self.template:
            return respond(self.br, self.start, tm.rise, tm.fall, from_codes, to_codes)
        low, high = np.minimum(from_codes, to_codes), np.maximum(from_codes, to_codes)
        scale = string_taps.pair_scale(self.net, self.br, low, high)
        first = (from_codes > to_codes).astype(np.int64)  # tap a is the template's code 0
        return respond(self.br, self.start, tm.rise, tm.fall, first, 1 - first, scale=scale)


def solve_transitions(net: Network, timing: Timing, from_codes: np.ndarray,
                      to_codes: np.ndarray, cancel=None, method: str = "auto"
                      ) -> TransitionFigures:
    """Glitch impulse, peak and settling of each change ``from_codes`` → ``to_codes``.

    Vectorised over transitions in chunks of :data:`CHUNK`; ``cancel`` (an event, optional) is
    checked between chunks and stops the work with ``InterruptedError``. ``method="dense"``
    keeps a string off its three-node template and its Laplace-domain solution (for checks);
    ``method="laplace"`` takes a string with node capacitance to the latter at any size.
    """
    from_codes = np.asarray(from_codes, dtype=np.int64)
    to_codes = np.asarray(to_codes, dtype=np.int64)
    nan = np.full(to_codes.shape, np.nan)
    reason = no_dynamics_reason(net, timing)
    if reason is not None:
        return TransitionFigures(from_codes, to_codes, nan, nan.copy(), nan.copy(), np.nan, reason)
    if _uses_laplace(net, timing, method):
        lsb = string_laplace.string_path(net, timing).lsb()
        with np.errstate(over="ignore", under="ignore"):
            figs = string_figures.transition_figures(net, timing, from_codes, to_codes,
                                                     abs(lsb) / 2, cancel=cancel)
        return TransitionFigures(from_codes, to_codes, *figs, lsb=lsb)
    solver = _Solver(net, timing, method)
    lsb = solver.lsb()
    parts = []
    for s in range(0, to_codes.size, CHUNK):
        if cancel is not None and cancel.is_set():
            raise InterruptedError("cancelled")
        with np.errstate(over="ignore"):  # a mode far faster than the edges: its terms vanish
            actual, sync = solver.respond(from_codes[s:s + CHUNK], to_codes[s:s + CHUNK])
            parts.append(_figures(actual, sync, abs(lsb) / 2))
    cat = [np.concatenate(x) if parts else nan for x in zip(*parts, strict=True)] or [nan] * 3
    return TransitionFigures(from_codes, to_codes, *cat, lsb=lsb)


def waveforms(net: Network, timing: Timing, from_code: int, to_code: int, times: np.ndarray,
              method: str = "auto") -> tuple[np.ndarray, np.ndarray]:
    """The output of one change and its simultaneous-switching response at ``times`` (P,), V."""
    if _uses_laplace(net, timing, method):
        with np.errstate(over="ignore", under="ignore"):
            return string_figures.waveforms(net, timing, from_code, to_code, times)
    solver = _Solver(net, timing, method)
    with np.errstate(over="ignore"):
        actual, sync = solver.respond(np.array([from_code]), np.array([to_code]))
        t = np.asarray(times, float)[None, :]
        return actual.value(t)[0], sync.value(t)[0]
