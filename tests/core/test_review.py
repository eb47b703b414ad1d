"""The review's judgement: targets, the recommendation derived from the numbers, the cautions."""

from __future__ import annotations

import numpy as np
import pytest

from rungwise.core import evaluate
from rungwise.core.demo import DEMO_BASE, demo_candidates
from rungwise.core.formatting import format_percent, format_quantity
from rungwise.core.montecarlo import monte_carlo
from rungwise.core.parts.bom import bill_of_materials
from rungwise.core.review import (
    DEFER,
    SAFE_DC_VOLTS,
    cautions,
    judge,
    part_count,
    recommend,
)
from rungwise.core.targets import Targets


@pytest.fixture(scope="module")
def all_evs():
    return [evaluate(d) for d in demo_candidates()]


@pytest.fixture(scope="module")
def evs(all_evs):
    """The demo's two revision-B candidates: the ladder with 0.1 % parts and the segmented one."""
    return all_evs[1:]


def test_demo_ends_in_an_answer_that_passes(all_evs):
    # The demo's story: revision A's 1 % ladder misses the yield, revision B's ladder with 0.1 %
    # parts and the segmented 1 % network both pass, and the ladder needs fewer parts (24 vs 42).
    # Why: the mid-scale step of an 8-bit R-2R ladder moves by about 2^7·σ of a part, so 1 % parts
    # (σ = 1/3 %, coverage 3σ) give σ ≈ 0.43 LSB there and many boards exceed ½ LSB, while 0.1 %
    # parts give ≈ 0.04 LSB; segmenting the top four bits leaves 2^3·σ·√2 ≈ 0.04 LSB per step.
    targets = Targets()
    runs = [monte_carlo(ev.design, 1000, 1, targets=targets) for ev in all_evs]
    yields = [r.yield_all.value for r in runs]
    assert yields[0] == pytest.approx(0.636)  # 636 of 1000 boards of revision A pass
    assert yields[1] == yields[2] == 1.0
    rec = recommend(all_evs, targets, yields)
    assert rec.chosen == 1
    assert [part_count(e.summary) for e in all_evs] == [24, 24, 42]
    assert rec.verdicts[0].failures == ["yield 63.6 % < 99 %"]
    assert rec.text.startswith("Recommended: Ladder, 0.1 % parts — meets the targets")
    assert "the fewest parts (24) of the 2 candidates that meet them" in rec.text


def test_fewest_parts_among_passing_is_recommended(evs):
    counts = [part_count(e.summary) for e in evs]
    assert counts == [e.summary["n_resistors"] + e.summary["n_switches"] + e.summary["n_amplifiers"]
                      for e in evs]
    rec = recommend(evs, Targets())
    assert all(v.passes for v in rec.verdicts)  # both revision-B candidates meet ½ LSB both ways
    best = min(range(len(evs)), key=lambda i: counts[i])
    assert rec.chosen == best
    v = rec.verdicts[best]
    assert rec.text.startswith(f"Recommended: {evs[best].design.label}")
    assert format_quantity(v.inl, "LSB") in rec.text
    assert f"({counts[best]})" in rec.text


def test_tighter_inl_target_changes_the_choice(evs):
    inls = [e.summary["max_abs_inl_endpoint"] for e in evs]
    limit = (min(inls) + max(inls)) / 2  # between the two candidates
    rec = recommend(evs, Targets(max_inl_lsb=limit))
    winner = inls.index(min(inls))
    assert rec.chosen == winner
    assert "only candidate" in rec.text
    loser = rec.verdicts[1 - winner]
    assert loser.failures == [f"max |INL| (endpoint) {format_quantity(max(inls), 'LSB')} > "
                              f"{format_quantity(limit)}"]


def test_none_meets_says_so_with_each_miss(evs):
    rec = recommend(evs, Targets(max_inl_lsb=1e-6, max_dnl_lsb=1e-6))
    assert rec.chosen is None
    assert rec.text.startswith("No candidate meets the targets (max |INL| ≤ 0.000001 LSB")
    for e in evs:
        inl, dnl = e.summary["max_abs_inl_endpoint"], e.summary["max_abs_dnl"]
        assert f"{e.design.label}: max |INL| (endpoint) {format_quantity(inl, 'LSB')}" in rec.text
        assert f"max |DNL| {format_quantity(dnl, 'LSB')}" in rec.text


def test_non_monotonic_candidate_fails_only_when_monotonic_required():
    # a 6-bit ladder whose MSB leg is 20 % high steps backwards at mid-scale (common practice)
    d = demo_candidates()[0].replace(bits=6)
    ev = evaluate(d.replace(parts={"leg5": 24e3}))
    assert not ev.summary["monotonic"]
    loose = Targets(max_inl_lsb=100, max_dnl_lsb=100, monotonic=False)
    assert judge(ev, loose).passes
    assert judge(ev, Targets(max_inl_lsb=100, max_dnl_lsb=100)).failures == ["not monotonic"]


def test_yield_below_target_fails(evs):
    t = Targets(min_yield=0.9)
    rec = recommend(evs, t, yields=[0.95, 0.5])
    assert rec.chosen == 0
    assert rec.verdicts[1].failures == ["yield 50 % < 90 %"]
    assert "yield ≥ 90 %" in rec.text
    assert "yield 95 %" in rec.text


def test_cautions_for_high_voltage_and_power():
    low = evaluate(demo_candidates()[0])
    assert cautions([low]) == [DEFER]
    hot = evaluate(demo_candidates()[0].replace(vref=120.0, unit_r=1e3))
    notes = cautions([hot])
    assert notes[-1] == DEFER
    assert any("120 V" in n and f"{SAFE_DC_VOLTS:g} V DC" in n for n in notes)
    flagged = [ln for ln in bill_of_materials(hot) if ln.flagged]
    assert flagged  # 120 V across 1–2 kΩ is watts, far over a small part's rating
    for ln in flagged:
        assert f"{hot.design.label}: {ln.designators} ({ln.kind}): {ln.note}." in notes


def test_failing_bill_of_materials_is_reported_not_raised(monkeypatch):
    import rungwise.core.review as review

    def broken(ev):
        raise KeyError("leg9")

    monkeypatch.setattr(review, "bill_of_materials", broken)
    notes = cautions([evaluate(demo_candidates()[0])])
    assert notes[0] == (f"{DEMO_BASE.label}: part ratings not checked — the bill of materials could not be "
                        "made (KeyError: 'leg9').")
    assert notes[-1] == DEFER


def test_no_candidate_meets_because_the_nominal_design_fails_says_why():
    from rungwise.core import Design, evaluate
    from rungwise.core.review import recommend
    from rungwise.core.targets import Targets

    switched = Design(topology="r2r-voltage", bits=12, ron_high=40, ron_low=25, name="Switched")
    rec = recommend([evaluate(switched)], Targets())
    assert rec.chosen is None
    assert "Switched: The nominal design already fails before any part mismatch" in rec.text
    assert "switch resistance" in rec.text


def test_yield_meets_only_when_decided_at_the_stated_confidence(evs):
    """Counts are judged by the one-sided Clopper–Pearson bound (Clopper and Pearson 1934):
    300 of 300 boards give a 95 % lower bound of 0.05^(1/300) = 99.00 %, so a 99 % target is met
    and the words show that bound, never '100 %'; 297 of 300 at a 99 % target is undecided."""
    from rungwise.core.stats_result import YieldFigure

    t = Targets(min_yield=0.99)
    all_pass = YieldFigure.of(np.ones(300, dtype=bool))
    near = YieldFigure.of(np.arange(300) >= 3)  # 297 of 300
    rec = recommend(evs, t, yields=[all_pass, near])
    assert rec.chosen == 0
    bound = 0.05 ** (1 / 300)  # Beta⁻¹(0.05; 300, 1), the bound the sentence must show
    assert bound >= 0.99
    assert f"yield ≥ {format_percent(bound)}" in rec.text
    assert "yield 100 %" not in rec.text
    miss = rec.verdicts[1].failures
    assert len(miss) == 1
    assert "undecided against 99 %" in miss[0]
    assert "300 boards" in miss[0]
    assert "Clopper–Pearson" in miss[0]
