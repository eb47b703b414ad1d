"""Suggested unit values agree with a full evaluation of each and honour the limits."""

from __future__ import annotations

import numpy as np
import pytest

from rungwise.core import Design, evaluate
from rungwise.core.parts.eseries import values
from rungwise.core.parts.suggest import Limits, suggest


@pytest.mark.parametrize("design", [
    Design(bits=8, load_c=20e-12, ron_high=40.0, ron_low=25.0, series="E24"),
    Design(topology="binary-weighted", output="summing-amp", bits=6, feedback_r=4.99e3, series="E12"),
    Design(topology="r2r-current", bits=6, series="E96", build={"two_r": "two-units"}),
    Design(topology="segmented", bits=6, thermometer_bits=2, ron_high=50.0, series="E24"),
    Design(topology="segmented", bits=6, thermometer_bits=3, ron_high=50.0, series="E24",
           build={"lsb_section": "unit-array"}),
    Design(topology="string", bits=4, ron_high=50.0, load_r=1e5, series="E24"),
], ids=["ladder", "summing", "current-two-units", "segmented", "segmented-units", "string"])
def test_suggestions_match_full_evaluations(design):
    limits = Limits(iref_max=1e-3, settling_max=1e-6, noise_lsb_max=0.01)
    found = suggest(design, limits, top=5)
    assert len(found) == 5
    for s in found:
        assert s.unit_r in values(design.series)
        ev = evaluate(design.replace(unit_r=s.unit_r))
        assert s.iref_max == pytest.approx(np.max(np.abs(ev.iref)), rel=1e-9)
        assert s.rout_max == pytest.approx(ev.summary["rout_max"], rel=1e-9)
        assert s.max_abs_inl == pytest.approx(ev.summary["max_abs_inl_endpoint"], rel=1e-6, abs=1e-9)
        if not np.isnan(ev.summary["settling_time"]):
            assert s.settling_time == pytest.approx(ev.summary["settling_time"], rel=1e-9)
        assert s.noise_lsb == pytest.approx(ev.summary["noise_rms"] / abs(ev.summary["lsb"]), rel=1e-9)
        assert s.reason.startswith(f"#{found.index(s) + 1}: ")


def test_ranking_puts_values_meeting_the_limits_first_then_smallest_snapping_error():
    d = Design(bits=8, load_c=20e-12, ron_high=40.0, ron_low=25.0, series="E24")
    found = suggest(d, Limits(iref_max=1e-3, settling_max=1e-6, noise_lsb_max=0.01), top=20)
    misses = [len(s.misses) for s in found]
    assert misses == sorted(misses)
    good = [s for s in found if not s.misses]
    assert len(good) >= 5
    assert all(s.iref_max <= 1e-3 and s.settling_time <= 1e-6 and s.noise_lsb <= 0.01 for s in good)
    inl = [round(s.max_abs_inl, 4) for s in good]
    assert inl == sorted(inl)
    # 7.5 kΩ has its 2R (15 kΩ) in E24, so snapping adds nothing and it ranks first
    assert found[0].unit_r == 7.5e3


def test_impossible_limits_are_reported_as_misses():
    d = Design(bits=8, load_c=1e-9, series="E12")
    found = suggest(d, Limits(iref_max=1e-6, settling_max=1e-9), top=3)
    assert all(s.misses for s in found)
    assert "over the limit" in found[0].reason


class _CancelAfter:
    """An event that reads as set from its ``n``-th check on (counts the checks)."""

    def __init__(self, n: int) -> None:
        self.n, self.checks = n, 0

    def is_set(self) -> bool:
        self.checks += 1
        return self.checks >= self.n


def test_cancel_stops_between_batches(monkeypatch):
    import rungwise.core.parts.suggest as module

    calls = []
    real = module.solve
    monkeypatch.setattr(module, "solve", lambda *a, **k: calls.append(1) or real(*a, **k))
    d = Design(topology="string", bits=12, series="E96")  # 673 values in batches of 64 rows
    cancel = _CancelAfter(3)
    assert suggest(d, Limits(), cancel=cancel) == []
    assert len(calls) == 2  # two batches solved, the third check stopped the search
    calls.clear()
    assert len(suggest(d.replace(bits=4), Limits(), cancel=_CancelAfter(10**9), top=3)) == 3
    assert calls  # not cancelled: every batch solved


def test_parts_alike_share_one_column():
    # a string's parts are all alike: one column; a ladder has R and 2R (two kinds) plus switches
    from rungwise.core.parts.snapping import snapped_ids
    from rungwise.core.parts.suggest import _alike_columns
    from rungwise.core.topologies import build

    for design, n_kinds in ((Design(topology="string", bits=6), 1),
                            (Design(topology="r2r-voltage", bits=6), 2)):
        net = build(design)
        kinds, index = _alike_columns(list(net.parts), set(snapped_ids(design, net)))
        assert len(kinds) == n_kinds
        assert index.shape == (len(list(net.parts)),)
