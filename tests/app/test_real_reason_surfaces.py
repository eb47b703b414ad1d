"""When no grade can pass because the nominal design already fails, every surface says so and why:
the Statistics view, ``rungwise compute --grades`` (table and JSON)."""

from __future__ import annotations

import json

from rungwise.app.cli.main import run_cli
from rungwise.app.jobs.workers import run_sync
from rungwise.app.views.stats_job import StatsRequest, statistics_job
from rungwise.core import Design

SWITCHED = Design(topology="r2r-voltage", bits=12, ron_high=40, ron_low=25, name="Switched ladder")
CLEAN = Design(topology="r2r-voltage", bits=6, name="Clean ladder")


def test_statistics_job_and_view_give_the_nominal_reason(qtbot):
    from rungwise.app.views.stats import StatisticsPane

    outcome = run_sync(statistics_job(StatsRequest((SWITCHED, CLEAN), trials=40)))
    assert outcome.loosest(0) is None
    assert outcome.reasons[0].startswith("none — The nominal design already fails")
    assert "switch resistance" in outcome.reasons[0]
    # 40 boards cannot decide 99 % (0.05^(1/40) = 0.93, Clopper and Pearson 1934): undecided is
    # said as such, not as "tighter than ±0.01 %"
    assert outcome.loosest(1) is None
    assert outcome.reasons[1].startswith("none decided within 40 boards per grade")
    decided = run_sync(statistics_job(StatsRequest((CLEAN,), trials=1000)))
    assert decided.loosest(0) is not None
    assert decided.reasons[0] == ""
    pane = StatisticsPane()
    qtbot.addWidget(pane)
    text = pane._verdict(outcome)
    assert "loosest grade that meets it: none — The nominal design already fails" in text
    assert "tighter than" not in text
    pane._fill_table(outcome)
    assert pane.table.item(0, pane.table.columnCount() - 1).text() == (
        "none: the nominal design already fails")
    pane.shutdown()


def test_compute_grades_says_why_none(capsys):
    args = ["compute", "--topology", "r2r-voltage", "--set", "bits=12", "--set", "ron_high=40",
            "--set", "ron_low=25", "--set", "load_r=open", "--trials", "30", "--grades"]
    assert run_cli(args) == 0
    out = capsys.readouterr().out
    assert "none (see below)" in out
    assert "loosest grade: none — The nominal design already fails" in out
    assert run_cli([*args, "--format", "json"]) == 0
    doc = json.loads(capsys.readouterr().out)
    grades = doc["results"][0]["statistics"]["grades"]
    assert grades["loosest"] is None
    assert "switch resistance" in grades["reason"]


def test_bit_count_answer_on_the_command_line_and_in_the_trade_offs_view(qtbot, capsys):
    """Over the bit count the answer is the largest N still meeting the target (decided at a stated
    confidence), on stderr of ``rungwise sweep`` and under the Trade-offs view's plot."""
    from rungwise.app.views.explorer import ExplorerPane

    args = ["sweep", "--topology", "r2r-voltage", "--set", "ron_high=0", "--set", "ron_low=0",
            "--set", "load_r=open", "--over", "bits", "--from", "4", "--to", "12",
            "--tolerance", "0.1%", "--trials", "1000", "--target-yield", "99%"]
    assert run_cli(args) == 0
    err = capsys.readouterr().err
    assert "largest N still meeting 99 % monotonic: N = " in err
    assert "Clopper–Pearson" in err
    pane = ExplorerPane()
    qtbot.addWidget(pane)
    pane.set_candidates([CLEAN])
    pane.spin_from.setValue(4)
    pane.spin_to.setValue(12)
    pane.check_stats.setChecked(True)
    pane.spin_trials.setValue(1000)
    with qtbot.waitSignal(pane.result_changed, timeout=120000):
        pane.button_run.click()
    assert "largest N still meeting 99 % monotonic: N = " in pane.label_answer.text()
    pane.shutdown()
