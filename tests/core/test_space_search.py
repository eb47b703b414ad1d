"""The design-space search: ranking, costs, honest yield decisions, executors, refusals."""

from __future__ import annotations

import math

import numpy as np
import pytest

from rungwise.core import Design, monte_carlo
from rungwise.core.cost import EXAMPLE_RESISTOR, CostTable
from rungwise.core.errors import DesignError
from rungwise.core.grades import with_tolerance
from rungwise.core.search_point import decide_point
from rungwise.core.search_question import SearchQuestion
from rungwise.core.space_search import InlineExecutor, default_executor, search
from rungwise.core.targets import Targets
from rungwise.core.yield_decision import SequentialYield, clopper_pearson_bounds, decide_yield

PRICE = CostTable()  # the invented example prices


def _r2r_question(**kw) -> SearchQuestion:
    base = dict(networks=(("r2r-voltage", "unbuffered"),), series=("exact",),
                grades=(0.01, 0.005, 0.0025, 0.001), criterion="monotonic", trials=4000)
    return SearchQuestion(**{**base, **kw})


def _hand_cost(resistors: int, switches: int, grade: float) -> float:
    """Hand count: resistors × price(grade) × series factor + switches + board area per part."""
    return (resistors * EXAMPLE_RESISTOR[grade] * PRICE.series_factor["exact"]
            + switches * PRICE.switch + (resistors + switches) * PRICE.area_per_part)


def test_small_space_enumerated_by_hand_ranks_as_the_search() -> None:
    """Every point of a small space fully evaluated by hand (part counts counted by hand, full
    Monte Carlo runs decided once at the end) ranks exactly as the search does, and every point
    the full run decides gets the same verdict."""
    base = Design(topology="r2r-voltage", bits=6)
    q = SearchQuestion(networks=(("r2r-voltage", "unbuffered"),
                                 ("binary-weighted", "terminated-divider")),
                       series=("exact",), grades=(0.02, 0.005), criterion="monotonic", trials=1500)
    result = search(base, q, executor=InlineExecutor())
    # hand counts (common practice): an N-bit R-2R ladder has 2N resistors (N legs, N − 1 series,
    # one terminator) and N switches; a terminated binary-weighted network N + 1 and N.
    hand = []
    for topo, out, resistors in (("r2r-voltage", "unbuffered", 12),
                                 ("binary-weighted", "terminated-divider", 7)):
        for grade in q.grades:
            d = with_tolerance(Design(topology=topo, output=out, bits=6), grade)
            full = monte_carlo(d, 1500, q.seed)
            verdict = decide_yield(full.yield_monotonic.passed, 1500, 0.99).verdict
            hand.append((_hand_cost(resistors, 6, grade), topo, grade, verdict))
    hand.sort()
    got = [(p.cost, p.design.topology, p.grade, p.verdict) for p in result.decided]
    assert [(t, g) for _, t, g, _ in got] == [(t, g) for _, t, g, _ in hand]
    for (cost, *_), (hand_cost, *_) in zip(got, hand, strict=True):
        assert cost == pytest.approx(hand_cost, rel=1e-12)
    for (*_, v), (*_, hv) in zip(got, hand, strict=True):
        if hv != "undecided":
            assert v == hv


def test_zero_tolerance_cheapest_is_the_fewest_cheapest_parts() -> None:
    """With exact parts every board is the nominal one: the answer is the network with the fewest
    parts (hand count, common practice: the binary-weighted divider N resistors and N switches;
    terminated N + 1 and N; R-2R 2N and N; segmented more; a string 2^N resistors)."""
    base = Design(topology="r2r-voltage", bits=5)
    q = SearchQuestion(series=("exact",), grades=(0.0,), thermometer_bits=(1, 2), trials=2000)
    cost = CostTable(resistor={0.0: 0.01})
    result = search(base, q, cost=cost, executor=InlineExecutor())
    best = result.answer
    assert best is not None
    assert (best.design.topology, best.design.output) == ("binary-weighted", "divider")
    assert best.counts() == (5, 5, 0)
    assert best.cost == pytest.approx(5 * 0.01 * 4.0 + 5 * 0.05 + 10 * 0.003)
    assert result.decided[1].counts() == (6, 5, 0)  # the terminated one is next
    assert all(p.yield_ in (0.0, 1.0) for p in result.decided)
    costs = [p.cost for p in result.decided]
    assert costs == sorted(costs)


def _r2r_outputs(ohms: dict[str, np.ndarray], bits: int, vref: float) -> np.ndarray:
    """Independent dense nodal solve of an R-2R voltage ladder with ideal switches, shape
    (trials, codes): per trial, the bit weights from N + 1 solves (superposition: each leg's drive
    enters the right-hand side linearly), then V(k) = Σ b_i·w_i. Nodes n0 (LSB end) … n{N−1}
    (output); term 2R from n0 to ground; leg i from n_i to Vref or ground; series i from n_i to
    n_{i+1} (textbook R-2R; Horowitz and Hill, The Art of Electronics, DAC section)."""
    trials = ohms["term"].shape[0]
    weights = np.zeros((trials, bits))
    for t in range(trials):
        g = np.zeros((bits, bits))
        g[0, 0] += 1 / ohms["term"][t]
        for i in range(bits):
            g[i, i] += 1 / ohms[f"leg{i}"][t]
        for i in range(bits - 1):
            c = 1 / ohms[f"series{i}"][t]
            g[i, i] += c
            g[i + 1, i + 1] += c
            g[i, i + 1] -= c
            g[i + 1, i] -= c
        rhs = np.zeros((bits, bits))
        for i in range(bits):
            rhs[i, i] = vref / ohms[f"leg{i}"][t]
        weights[t] = np.linalg.solve(g, rhs)[bits - 1]  # numpy dense solve
    codes = np.arange(2**bits)
    bits_of = (codes[:, None] >> np.arange(bits)) & 1
    return weights @ bits_of.T


def _independent_yield(bits: int, tolerance: float, trials: int, seed: int) -> tuple[int, int]:
    rng = np.random.default_rng(seed)
    r = 10e3
    nominal = {"term": 2 * r, **{f"leg{i}": 2 * r for i in range(bits)},
               **{f"series{i}": r for i in range(bits - 1)}}
    # Gaussian parts with σ = tolerance / 3 (the design's default coverage_sigma)
    ohms = {k: v * (1 + tolerance / 3 * rng.standard_normal(trials)) for k, v in nominal.items()}
    v = _r2r_outputs(ohms, bits, 3.3)
    ok = np.all(np.diff(v, axis=1) >= 0, axis=1)
    return int(ok.sum()), trials


def test_dense_reference_solve_is_the_ideal_ladder() -> None:
    # sanity of the independent solver: nominal values give Vref·k/2^N (common practice)
    bits = 5
    ohms = {"term": np.array([20e3]), **{f"leg{i}": np.array([20e3]) for i in range(bits)},
            **{f"series{i}": np.array([10e3]) for i in range(bits - 1)}}
    v = _r2r_outputs(ohms, bits, 3.3)[0]
    assert np.allclose(v, 3.3 * np.arange(32) / 32, rtol=0, atol=1e-12)


def test_answer_yield_agrees_with_an_independent_monte_carlo() -> None:
    """The answer's yield re-estimated by an independent Monte Carlo (own sampler, bit weights from
    a dense nodal solve) agrees within the stated confidence; the next looser grade fails."""
    base = Design(topology="r2r-voltage", bits=8)
    result = search(base, _r2r_question(), executor=InlineExecutor())
    best = result.answer
    assert best is not None
    assert best.grade == 0.005
    passed, n = _independent_yield(8, best.grade, 3000, seed=99)
    lo, hi = clopper_pearson_bounds(passed, n, 0.025)  # Clopper and Pearson 1934
    assert hi >= 0.99  # the independent run does not contradict "meets"
    assert lo <= best.yield_ + 3 * best.yield_stderr
    assert hi >= best.yield_ - 3 * best.yield_stderr
    looser = next(p for p in result.decided if p.grade == 0.01)
    assert looser.verdict == "fails"
    passed, n = _independent_yield(8, 0.01, 3000, seed=98)
    assert clopper_pearson_bounds(passed, n, 0.05)[1] < 0.99


def test_early_stopping_on_real_points_errs_within_the_confidence() -> None:
    """Seeded study of points near the target: the search's early decision and a full run's
    decision (same boards, all of the budget, one look) disagree no more often than 1 − confidence
    allows (Clopper and Pearson 1934 bounds; Bonferroni over the looks; Wald 1945 for stopping
    at planned looks)."""
    budget, runs, disagree, decided = 1600, 24, 0, 0
    ctx = {"targets": Targets().to_dict(), "criterion": "monotonic", "target_yield": 0.99,
           "trials": budget, "confidence": 0.95, "method": "clopper-pearson"}
    design = Design(topology="r2r-voltage", bits=8)
    for grade in (0.006, 0.0075):
        for seed in range(runs):
            early = decide_point(design.to_dict(), grade, ctx, seed)["decision"]
            full = monte_carlo(with_tolerance(design, grade), budget, seed)
            whole = decide_yield(full.yield_monotonic.passed, budget, 0.99)
            if early["verdict"] != "undecided" and whole.verdict != "undecided":
                decided += 1
                disagree += early["verdict"] != whole.verdict
    assert decided > 10
    assert disagree <= max(1, math.ceil(0.05 * 2 * runs))


def test_sequential_decision_matches_the_boards_in_order() -> None:
    design = with_tolerance(Design(topology="r2r-voltage", bits=8), 0.005)
    ctx = {"targets": Targets().to_dict(), "criterion": "monotonic", "target_yield": 0.99,
           "trials": 2000, "confidence": 0.95, "method": "clopper-pearson"}
    got = decide_point(design.to_dict(), 0.005, ctx, 5)
    full = monte_carlo(design, 2000, 5)
    want = SequentialYield(0.99, 2000, first=100).update(full.monotonic)
    assert got["decision"] == want.to_dict()
    assert got["trials"] == want.trials


def test_process_pool_gives_the_inline_result() -> None:
    base = Design(topology="r2r-voltage", bits=6)
    q = _r2r_question(grades=(0.01, 0.002), trials=800)
    inline = search(base, q, executor=InlineExecutor())
    with default_executor(2) as pool:
        pooled = search(base, q, executor=pool)
    assert [p.to_dict() for p in pooled.decided] == [p.to_dict() for p in inline.decided]
    assert search(base, q).to_dict()["designs"] == inline.to_dict()["designs"]  # its own pool


def test_nominal_failure_is_pruned_with_the_real_reason() -> None:
    base = Design(topology="r2r-voltage", bits=12, ron_high=40, ron_low=25)
    q = _r2r_question(grades=(0.001,), trials=400)
    result = search(base, q, executor=InlineExecutor())
    assert result.answer is None
    assert [p.verdict for p in result.points] == ["pruned"]
    assert "nominal design already fails" in result.points[0].reason
    assert "switch resistance" in result.points[0].reason
    assert "No design in the space meets" in result.answer_text()


def test_json_contract_fields() -> None:
    base = Design(topology="r2r-voltage", bits=6)
    doc = search(base, _r2r_question(grades=(0.01, 0.002), trials=800),
                 executor=InlineExecutor()).to_dict()
    assert doc["seed"] == 1
    assert "Clopper–Pearson" in doc["method"]
    costs = [d["cost"] for d in doc["designs"]]
    assert costs == sorted(costs)
    for entry in doc["designs"]:
        assert set(entry) >= {"design", "cost", "meets", "yield", "yield_stderr", "trials",
                              "resistors", "switches", "amplifiers"}
        again = Design.from_dict(entry["design"])
        assert again.mismatch["tolerance"] in (0.01, 0.002)
    first = next(i for i, d in enumerate(doc["designs"]) if d["meets"])
    assert doc["answer"] == first
    assert "invented example prices" in doc["prices"]


@pytest.mark.parametrize(("kw", "field"), [
    ({"grades": (0.00001,)}, "cost.resistor"),
    ({"networks": (("string", "unbuffered"),)}, "topology"),
])
def test_bad_space_is_refused(kw: dict, field: str) -> None:
    base = Design(topology="r2r-voltage", bits=20)
    with pytest.raises(DesignError) as err:
        search(base, _r2r_question(**kw), executor=InlineExecutor())
    assert err.value.field == field


def test_on_chip_model_is_refused() -> None:
    base = Design(topology="r2r-voltage", bits=6, mismatch={"model": "on-chip"})
    with pytest.raises(DesignError, match="on-chip"):
        search(base, _r2r_question(), executor=InlineExecutor())


def test_build_styles_are_part_of_the_space() -> None:
    """A binary-weighted divider built one part per bit has N resistors, as a unit-element array
    2^N − 1 (bit k = 2^k units; hand count, common practice)."""
    base = Design(topology="binary-weighted", output="divider", bits=4)
    q = SearchQuestion.from_dict({"topologies": ["binary-weighted:divider", "r2r-voltage"],
                                  "builds": ["as-designed", "binary=unit-array"],
                                  "series": ["exact"], "grades": ["0.1%"], "trials": 400})
    result = search(base, q, executor=InlineExecutor())
    counts = sorted((dict(p.design.build).get("binary", "per-bit"), p.counts()[0])
                    for p in result.points if p.design.topology == "binary-weighted")
    assert counts == [("per-bit", 4), ("unit-array", 15)]
    ladders = [p for p in result.points if p.design.topology == "r2r-voltage"]
    assert len(ladders) == 1  # the binary build key does not apply to a ladder: no duplicate
    assert any("binary unit-array" in p.describe() for p in result.points)


def test_limits_prune_with_their_figures() -> None:
    """Reference current of an unloaded R-2R ladder: Vref/(2R) per driven leg at most, all legs
    driven at full scale → Vref/R (common practice); a limit below it prunes the ladder, naming
    the figure; a settling limit with no load capacitance says the figure is not defined."""
    base = Design(topology="r2r-voltage", bits=6, vref=1.0, unit_r=10e3)
    q = _r2r_question(grades=(0.01,), trials=200, max_iref=50e-6)
    (point,) = search(base, q, executor=InlineExecutor()).points
    assert point.verdict == "pruned"
    assert "largest reference current" in point.reason
    assert "> 50 µA" in point.reason
    q = _r2r_question(grades=(0.01,), trials=200, max_iref=1e-3, max_transition_settling=1e-6)
    (point,) = search(base, q, executor=InlineExecutor()).points
    assert point.verdict == "pruned"
    assert "not defined here" in point.reason


@pytest.mark.parametrize(("method", "words"), [("wilson", "Wilson score bound"),
                                               ("wald-sprt", "Wald sequential probability ratio")])
def test_other_decision_methods_name_themselves(method: str, words: str) -> None:
    base = Design(topology="r2r-voltage", bits=8)
    result = search(base, _r2r_question(method=method, grades=(0.01, 0.0025)),
                    executor=InlineExecutor())
    assert words in result.method
    verdicts = {p.grade: p.verdict for p in result.decided}
    assert verdicts[0.01] == "fails"  # about 96 % monotonic (see the Clopper–Pearson search)
    assert verdicts[0.0025] == "meets"
    assert all(words in p.reason for p in result.decided)
