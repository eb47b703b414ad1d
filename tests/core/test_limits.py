"""Work too big for this machine is refused before it starts, with the field named."""

from __future__ import annotations

import importlib

import pytest

from rungwise.app.cli.main import run_cli
from rungwise.core import Design, DesignError, evaluate, limits
from rungwise.core.montecarlo import (
    BATCH_DRAWS,
    ENVELOPE_ELEMENTS,
    EXACT_BATCH_TRIALS,
    EXACT_BATCH_WORK,
    GENERAL_BATCH_ELEMENTS,
    MAX_GENERAL_CODES,
    plan_run,
    work_nodes,
)
from rungwise.core.solve import CHUNK_ELEMENTS
from rungwise.core.targets import MAX_TRIALS
from rungwise.core.topologies import build

evaluate_module = importlib.import_module("rungwise.core.evaluate")


def test_budget_check_names_bits_and_the_largest_resolution_that_fits():
    limits.check_evaluation(10, budget=limits.BYTES_PER_CODE * 1024)
    with pytest.raises(DesignError) as info:
        limits.check_evaluation(11, budget=limits.BYTES_PER_CODE * 1024)
    assert info.value.field == "bits"
    assert "choose 10 bits or fewer" in str(info.value)


def test_24_bits_on_a_small_machine_is_refused_before_solving(monkeypatch):
    monkeypatch.setattr(limits, "machine_memory", lambda: 4 * 2**30)  # 1 GB allowed
    calls = []
    monkeypatch.setattr(evaluate_module, "build", lambda d: calls.append(d))
    with pytest.raises(DesignError, match=r"^bits: 24 bits need about 12\.5 GB .* 1\.0 GB allowed"):
        evaluate(Design(bits=24))
    assert calls == []  # refused before the network was even built


def test_the_command_line_refuses_it_with_exit_code_2(monkeypatch, capsys):
    monkeypatch.setattr(limits, "machine_memory", lambda: 2**30)
    assert run_cli(["compute", "--set", "bits=24"]) == 2
    err = capsys.readouterr().err
    assert "bits" in err
    assert "Traceback" not in err


def test_statistics_memory_is_bounded_at_24_bits_and_the_most_trials():
    # the exact engine batches its trials; the general one is refused above 2^20 codes
    plan = plan_run(Design(bits=24), MAX_TRIALS)
    assert plan.batch_trials * (24 + 1) <= CHUNK_ELEMENTS
    assert plan.envelope_codes.size * plan.envelope_trials <= ENVELOPE_ELEMENTS
    with pytest.raises(DesignError, match=r"^bits: .*limited to 20 bits"):
        plan_run(Design(bits=21, ron_high=10.0), 10, engine="general")
    general = plan_run(Design(bits=16, ron_high=10.0), MAX_TRIALS, engine="general")
    assert general.batch_trials * 2**16 <= GENERAL_BATCH_ELEMENTS
    widest = plan_run(Design(bits=20, ron_high=10.0), MAX_TRIALS, engine="general")
    assert widest.batch_trials == 1  # one trial of MAX_GENERAL_CODES codes per batch
    assert widest.n_codes == MAX_GENERAL_CODES


def test_batches_of_a_many_unit_design_draw_a_bounded_number_of_values():
    # a unit-array binary network of 18 bits is 2^18 − 1 physical resistors per board: a batch
    # holds only as many boards as BATCH_DRAWS allows (each batch is one uninterruptible sampling)
    design = Design(topology="binary-weighted", bits=18, build={"binary": "unit-array"})
    plan = plan_run(design, MAX_TRIALS)
    units = 2**18 - 1  # bit k is 2^k units
    assert plan.batch_trials == BATCH_DRAWS // (units + 1) == 8
    plain = plan_run(Design(topology="binary-weighted", bits=18), MAX_TRIALS)
    assert plain.batch_trials == EXACT_BATCH_WORK // (19 * 16)  # work-bound: 19 codes, 16 nodes


def test_exact_batches_shrink_with_the_work_of_a_trial():
    # (N + 1) basis codes × nodes per trial: a 24-bit ladder gets fewer trials per batch
    for bits in (8, 12, 24):
        design = Design(bits=bits)
        plan = plan_run(design, MAX_TRIALS)
        per_trial = (bits + 1) * work_nodes(build(design))
        assert plan.batch_trials == min(EXACT_BATCH_TRIALS, EXACT_BATCH_WORK // per_trial)
    assert plan.batch_trials * per_trial <= EXACT_BATCH_WORK


def test_memory_falls_back_where_sysconf_does_not_answer(monkeypatch):
    import os
    import sys

    assert limits.machine_memory() > 2**28  # this machine answers (Linux: sysconf)
    monkeypatch.delattr(os, "sysconf")  # as on Windows
    monkeypatch.setattr(sys, "platform", "linux")
    assert limits.machine_memory() == limits.FALLBACK_MEMORY
    monkeypatch.setattr(sys, "platform", "win32")  # the Win32 call is absent here: still a figure
    assert limits.machine_memory() == limits.FALLBACK_MEMORY
