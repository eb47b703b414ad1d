"""Monte Carlo statistics of a design's linearity: seeded, chunked, cancellable.

``monte_carlo(design, trials, seed)`` returns the final :class:`MonteCarloResult`;
``iter_monte_carlo`` yields partial results chunk by chunk (for progress) and stops between chunks
when its ``cancel`` event is set.

Random part values come from ``mismatch.sample_ohms`` in fixed blocks of trials, each block with its
own generator spawned from the seed, so a result depends only on (design, trials, seed), never on
how the work was chunked. Two exact engines share the samples:

- ``exact``: where superposition holds and each leg follows one bit, N + 1 solves per trial give the
  per-bit weights and ``mc_exact`` gives every figure over all codes in O(N);
- ``general``: the batched general solver at every code (``solve.solve`` with per-trial ohms).
"""

from __future__ import annotations

import secrets
from collections.abc import Iterator
from dataclasses import dataclass, field
from typing import Any, Literal

import numpy as np

from . import mc_exact
from .design import Design
from .errors import DesignError
from .metrics import linearity
from .mismatch import MismatchModel, sample_ohms
from .network import Network, PartList
from .solve import CHUNK_ELEMENTS, solve
from .stats_result import MonteCarloResult
from .targets import RUN_SPECS, Targets
from .topologies import build

Engine = Literal["auto", "exact", "general"]
"""Which engine runs the trials; ``auto`` takes ``exact`` where it holds."""

MAX_GENERAL_CODES = 1 << 20
"""Most codes the general engine takes per trial (20 bits); beyond, memory per trial is too big."""

GENERAL_BATCH_ELEMENTS = 1 << 18
"""Most (trial, code) pairs solved per general-engine batch: bounds working memory (~25 MB)."""

GENERAL_PIECE_WORK = 1 << 20
"""Estimated work of one general-engine solve, (trial, code) pairs × :func:`work_nodes`: about
20–60 ms here. Batches hold fewer trials when their work is larger, and a trial too big for one
piece is solved in aligned blocks of codes; the cancel event is checked between pieces (and
between the linearity figures of a long curve), so a cancel returns within 200 ms at any size."""

ARRAY_SETUP_PARTS = 4096
"""Above this many array-held parts (a string's resistors, a group's legs) a trial's codes are not
split into pieces: every solve gathers all their values first (≈ 140 ms for 65,535 legs here,
whatever the piece), so splitting would only repeat it."""

EXACT_BATCH_TRIALS = 2048
"""Most trials per exact-engine batch."""

EXACT_BATCH_WORK = 1 << 18
"""Estimated work of one exact-engine batch, trials × (N + 1) basis codes × :func:`work_nodes`:
about 40–50 ms here (2048 trials at 24 bits took 110–170 ms, too long for a 200 ms cancel on a
busy machine); throughput per trial is unchanged."""

ENVELOPE_ELEMENTS = 1 << 22
"""(trial, code) INL values kept for the per-code envelope (float32, 16 MB)."""

ENVELOPE_MAX_CODES = 4096
"""Most codes on the envelope's code axis (evenly spread, both ends included)."""

BLOCK_DRAWS = 1 << 20
"""Random draws per sampling block; a block's trial count follows from the design's unit count."""

BATCH_DRAWS = 1 << 21
"""Most random draws (trials × physical units) sampled for one batch, about 40 ms here: a design
of many units (a unit-array binary network) gets fewer trials per batch, so a cancel still lands
within 200 ms."""


@dataclass(frozen=True)
class MonteCarloPlan:
    """How a run will be done, known before it starts (memory is bounded by construction).

    ``piece_codes`` < ``n_codes``: each batch's codes are solved in aligned blocks of that many.
    """

    engine: str
    trials: int
    batch_trials: int
    n_codes: int
    envelope_codes: np.ndarray = field(repr=False)
    envelope_trials: int = 0
    piece_codes: int = 0

    @property
    def n_batches(self) -> int:
        """Number of solver batches."""
        return -(-self.trials // self.batch_trials)

    def describe(self) -> str:
        """One line for people, e.g. ``"general engine, 6250 batches of 16 trials × 65536 codes"``."""
        pieces = (f" (solved {self.piece_codes} codes at a time)"
                  if 0 < self.piece_codes < self.n_codes else "")
        return (f"{self.engine} engine, {self.n_batches} batch(es) of ≤ {self.batch_trials} trials × "
                f"{self.n_codes} codes{pieces}; INL envelope from the first {self.envelope_trials} "
                f"trials at {self.envelope_codes.size} codes")


def check_run(trials: Any, seed: Any) -> tuple[int, int]:
    """Validated (trials, seed); ``seed=None`` draws a fresh seed to show and save.

    Raises
    ------
    DesignError
        ``trials`` outside 1 … ``MAX_TRIALS`` or ``seed`` not a whole number in 0 … 2^63 − 1.
    """
    trials = RUN_SPECS["trials"].check("trials", trials)
    if seed is None:
        seed = secrets.randbelow(2**32)
    seed = RUN_SPECS["seed"].check("seed", seed)
    return int(trials), int(seed)


def choose_engine(design: Design, net: Network, engine: Engine = "auto") -> str:
    """``"exact"`` or ``"general"`` for this design (``engine="exact"`` refuses where it fails)."""
    exact = (solve(net, codes=np.array([0])).method == "superposition"
             and mc_exact.is_bitwise(net, design.bits))
    if engine == "exact" and not exact:
        raise DesignError("engine", "the exact engine needs superposition (equal on-resistances and "
                          "a reference without output resistance) and one leg per bit")
    return "exact" if exact and engine != "general" else "general"


def plan_run(design: Design, trials: int, engine: Engine = "auto", net: Network | None = None
             ) -> MonteCarloPlan:
    """The batches and the envelope size of a run (checks the memory limits before starting).

    Raises
    ------
    DesignError
        The general engine is needed for more than 2^20 codes.
    """
    net = net or build(design)
    chosen = choose_engine(design, net, engine)
    n_codes = net.n_codes
    if chosen == "general":
        if n_codes > MAX_GENERAL_CODES:
            raise DesignError("bits", f"{design.bits} bits need the general engine (switch or reference "
                              "resistance breaks superposition), which is limited to 20 bits")
        pairs = max(1, min(GENERAL_BATCH_ELEMENTS, GENERAL_PIECE_WORK // work_nodes(net)))
        batch = max(1, pairs // n_codes)
        piece = n_codes if batch * n_codes <= pairs else 1 << ((pairs // batch).bit_length() - 1)
        if sum(c.size for c in net.chains) + sum(g.size for g in net.groups) > ARRAY_SETUP_PARTS:
            piece = n_codes  # each solve's set-up (the array-held parts' values) outweighs a piece
    else:
        per_trial = (design.bits + 1) * work_nodes(net)
        batch = max(1, min(EXACT_BATCH_TRIALS, CHUNK_ELEMENTS // (design.bits + 1),
                           EXACT_BATCH_WORK // per_trial))
        piece = n_codes
    units = _unit_count(net)  # as _Sampler counts them
    batch = max(1, min(batch, BATCH_DRAWS // units))
    if n_codes <= ENVELOPE_MAX_CODES:
        env_codes = np.arange(n_codes, dtype=np.int64)
    else:
        env_codes = np.unique(np.linspace(0, n_codes - 1, ENVELOPE_MAX_CODES).round().astype(np.int64))
    env_trials = min(trials, max(1, ENVELOPE_ELEMENTS // env_codes.size))
    return MonteCarloPlan(chosen, trials, min(batch, trials), n_codes, env_codes, env_trials,
                          min(piece, n_codes))


def work_nodes(net: Network) -> int:
    """Weight of one (trial, code) pair in a general solve: the nodes eliminated per pair (a
    resistor chain's interior is solved in closed form: it counts once), 16 per leg group (its
    cumulative tables), at least 16 (a string's per-code Thevenin divider and its set-up)."""
    chain_interior = sum(c.size - 1 for c in net.chains)
    return max(16, len(net.unknown_nodes()) - chain_interior + 16 * len(net.groups))


class _Cancelled(Exception):
    """Raised between the pieces of a batch when the run's cancel event is set."""


def _stop_if(cancel: Any) -> None:
    if cancel is not None and cancel.is_set():
        raise _Cancelled


def _unit_count(net: Network) -> int:
    """Physical resistors drawn per trial, plus one (the shared error), from the part arrays."""
    return int(PartList.of(net.parts).units().sum()) + 1


class _Sampler:
    """Trials ``start … start + n`` of a seeded run, independent of how they are requested."""

    def __init__(self, design: Design, net: Network, seed: int) -> None:
        self.design, self.net, self.seed = design, net, seed
        units = _unit_count(net)
        self.block = max(1, min(4096, BLOCK_DRAWS // units))
        self._cached: tuple[int, dict[str, np.ndarray]] | None = None

    def _block(self, index: int) -> dict[str, np.ndarray]:
        if self._cached is None or self._cached[0] != index:
            rng = np.random.Generator(np.random.PCG64(np.random.SeedSequence(self.seed,
                                                                             spawn_key=(index,))))
            self._cached = (index, sample_ohms(self.design, self.net, rng, self.block))
        return self._cached[1]

    def take(self, start: int, n: int) -> dict[str, np.ndarray]:
        """Part values for trials ``start … start + n − 1``; each array shape (n, 1), ohms."""
        pieces: list[dict[str, np.ndarray]] = []
        pos = start
        while pos < start + n:
            index, offset = divmod(pos, self.block)
            count = min(self.block - offset, start + n - pos)
            block = self._block(index)
            pieces.append({k: v[offset:offset + count] for k, v in block.items()})
            pos += count
        if len(pieces) == 1:
            return pieces[0]
        return {k: np.concatenate([p[k] for p in pieces]) for k in pieces[0]}


def sample_trials(design: Design, seed: int, start: int, count: int) -> dict[str, np.ndarray]:
    """The part values a run seeded ``seed`` gives trials ``start … start + count − 1``.

    Returns
    -------
    dict part id → ndarray, shape (count, 1), ohms
        Exactly what ``monte_carlo(design, trials, seed)`` solved for those trials, so any board can
        be rebuilt or re-solved elsewhere.
    """
    return _Sampler(design, build(design), seed).take(start, count)


def _feedback_factor(net: Network, ohms: dict[str, np.ndarray]) -> np.ndarray | float:
    """Virtual-ground outputs scale with the feedback resistor: its sampled/nominal ratio."""
    if net.output.kind != "virtual-ground" or "feedback" not in ohms:
        return 1.0
    return ohms["feedback"] / net.output.feedback_ohms


def _general_vout(net: Network, ohms: dict[str, np.ndarray], piece: int, cancel: Any
                  ) -> np.ndarray:
    """Output voltages of a batch at every code, shape (n_trials, n_codes), solved in aligned
    blocks of ``piece`` codes with a cancel check before each."""
    if piece >= net.n_codes:
        return solve(net, ohms=ohms, vout_only=True).vout
    blocks = []
    for start in range(0, net.n_codes, piece):
        _stop_if(cancel)
        blocks.append(solve(net, ohms=ohms, codes=np.arange(start, start + piece),
                            vout_only=True).vout)
    return np.concatenate(blocks, axis=-1)


def _run_batch(design: Design, net: Network, ohms: dict[str, np.ndarray], engine: str,
               env_codes: np.ndarray, env_rows: int, line: str, piece: int = 0,
               cancel: Any = None) -> tuple[dict[str, np.ndarray], np.ndarray]:
    """Per-trial figures and the INL at the envelope codes of the batch's first ``env_rows``
    trials (shape (env_rows, n_env)); raises ``_Cancelled`` between pieces when cancelled."""
    fb = _feedback_factor(net, ohms)
    if engine == "exact":
        v = solve(net, ohms=ohms, codes=mc_exact.basis_codes(design.bits), vout_only=True).vout * fb
        v0 = v[:, 0]
        w = v[:, 1:] - v0[:, None]
        figures = mc_exact.statistics(w)
        inl = mc_exact.inl_at(w[:env_rows], env_codes, line)
    else:
        v = _general_vout(net, ohms, piece or net.n_codes, cancel) * fb
        long = piece and piece < net.n_codes  # a long curve: checks between its figures too
        v0 = v[:, 0]
        inl_e = linearity.inl_endpoint(v)
        if long:
            _stop_if(cancel)
        inl_b = linearity.inl_bestfit(v)
        if long:
            _stop_if(cancel)
        steps = linearity.dnl(v)
        figures = {
            "max_abs_inl_endpoint": np.max(np.abs(inl_e), axis=-1),
            "max_abs_inl_bestfit": np.max(np.abs(inl_b), axis=-1),
            "max_abs_dnl": (np.max(np.abs(steps), axis=-1) if steps.shape[-1]
                            else np.zeros(v.shape[0])),
            "monotonic": linearity.monotonic(v),
            "lsb": linearity.endpoint_lsb(v),
        }
        inl = (inl_b if line == "bestfit" else inl_e)[:env_rows, env_codes]
    ideal = net.ideal_lsb
    figures["offset"] = v0
    figures["gain_error"] = figures.pop("lsb") / ideal - 1.0 if ideal else np.full(v0.shape, np.nan)
    return figures, inl


def iter_monte_carlo(design: Design, trials: int, seed: int | None = None, cancel: Any = None,
                     targets: Targets | None = None, engine: Engine = "auto", reports: int = 50
                     ) -> Iterator[MonteCarloResult]:
    """Run the trials in batches, yielding the partial result after each chunk.

    Parameters
    ----------
    design : Design
        Its ``mismatch`` and ``build`` tables say what is random.
    trials : int
        1 … ``MAX_TRIALS``.
    seed : int, optional
        Seed of the numpy Generator; a fresh one is drawn (and kept in the result) when omitted.
    cancel : object with ``is_set()``, optional
        Checked between batches (a ``threading.Event``); when set, the last partial result is
        yielded with ``cancelled=True`` and the generator ends.
    targets : Targets, optional
        Limits the yields judge against (default: ½ LSB INL and DNL, monotonic, endpoint line).
    engine : {"auto", "exact", "general"}
    reports : int
        About how many partial results to yield (batches are grouped into that many chunks).

    Yields
    ------
    MonteCarloResult
        Partial results (``done < trials``), then the final one (``complete``).

    Raises
    ------
    DesignError
        Bad ``trials``/``seed``, a design the engine cannot take, or a spread that draws a
        resistor at or below 0 Ω.
    """
    trials, seed = check_run(trials, seed)
    net = build(design)
    plan = plan_run(design, trials, engine, net)
    model = MismatchModel.of(design)
    targets = targets or Targets()
    sampler = _Sampler(design, net, seed)
    result = MonteCarloResult.allocate(design, seed, plan, model, targets)
    every = max(1, trials // max(1, reports))
    last_report = 0
    for start in range(0, trials, plan.batch_trials):
        if cancel is not None and cancel.is_set():
            result.cancelled = True
            yield result
            return
        n = min(plan.batch_trials, trials - start)
        env_rows = max(0, min(n, plan.envelope_trials - start))
        try:
            figures, inl = _run_batch(design, net, sampler.take(start, n), plan.engine,
                                      plan.envelope_codes, env_rows, targets.inl_line,
                                      plan.piece_codes, cancel)
        except _Cancelled:
            result.cancelled = True
            yield result
            return
        result.store(start, figures, inl)
        if result.done - last_report >= every and result.done < trials:
            last_report = result.done
            yield result.snapshot()
    yield result


def monte_carlo(design: Design, trials: int, seed: int | None = None,
                targets: Targets | None = None, engine: Engine = "auto") -> MonteCarloResult:
    """Monte Carlo statistics of ``design`` over ``trials`` random boards.

    Parameters
    ----------
    design : Design
    trials : int
    seed : int, optional
        Shown and saved in the result; the same (design, trials, seed) gives the same result.
    targets : Targets, optional
        Limits the yields judge against.
    engine : {"auto", "exact", "general"}

    Returns
    -------
    MonteCarloResult
        Per-trial arrays of shape (trials,), yields with standard errors, percentiles and the
        per-code INL envelope.
    """
    *_, last = iter_monte_carlo(design, trials, seed, targets=targets, engine=engine, reports=1)
    return last

