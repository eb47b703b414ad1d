"""``rungwise compute --trials T --seed S``: the statistics summary in table, JSON and CSV."""

from __future__ import annotations

import json

import pytest

from rungwise.app.cli.main import run_cli
from rungwise.core import Design, designfile, monte_carlo
from rungwise.core.demo import DEMO_BASE
from rungwise.core.grades import loosest_grade
from rungwise.core.targets import AnalysisSettings, Targets

ARGS = ["compute", "--topology", "r2r-voltage", "--set", "bits=6", "--set", "mismatch.tolerance=2 %"]


def test_json_has_a_statistics_object_equal_to_the_api(capsys):
    assert run_cli([*ARGS, "--trials", "300", "--seed", "5", "--format", "json"]) == 0
    stats = json.loads(capsys.readouterr().out)["results"][0]["statistics"]
    api = monte_carlo(DEMO_BASE.with_settings({"bits": "6", "mismatch.tolerance": "2 %"}), 300, 5)
    assert stats["seed"] == 5
    assert stats["done"] == 300
    assert stats["yields"]["yield_monotonic"]["value"] == api.yield_monotonic.value
    assert stats["yields"]["yield_all"]["stderr"] == pytest.approx(api.yield_all.stderr)
    assert stats["percentiles"]["max_abs_dnl"]["p99"] == pytest.approx(api.percentiles["max_abs_dnl"][99.0])


def test_table_and_csv_show_the_seed_and_yields(capsys):
    assert run_cli([*ARGS, "--trials", "200", "--seed", "9"]) == 0
    out = capsys.readouterr().out
    assert "Seed" in out
    assert " 9" in out
    assert "Yield, monotonic" in out
    assert run_cli([*ARGS, "--trials", "200", "--seed", "9", "--format", "csv"]) == 0
    rows = dict(line.split(",", 1) for line in capsys.readouterr().out.splitlines() if "," in line)
    assert rows["stat.seed"] == "9"
    assert 0.0 <= float(rows["stat.yield_dnl"]) <= 1.0


def test_seed_and_targets_come_from_the_design_file(tmp_path, capsys):
    path = tmp_path / "two.toml"
    doc = designfile.DesignFile([Design(bits=5, mismatch={"tolerance": 0.05})],
                                analysis=AnalysisSettings(trials=100, seed=123),
                                targets=Targets(max_dnl_lsb=2.0))
    designfile.save(path, doc)
    assert run_cli(["compute", str(path), "--trials", "100", "--format", "json"]) == 0
    stats = json.loads(capsys.readouterr().out)["results"][0]["statistics"]
    assert stats["seed"] == 123
    assert stats["targets"]["max_dnl_lsb"] == 2.0


@pytest.mark.parametrize(("extra", "words"), [(["--trials", "0"], "trials"),
                                              (["--seed", "4"], "--seed needs --trials"),
                                              (["--trials", "10", "--seed", "-3"], "seed"),
                                              (["--trials", "10", "--set", "mismatch.tolerance=90 %"],
                                               "mismatch.tolerance")])
def test_bad_statistics_input_exits_2_with_a_named_field(extra, words, capsys):
    assert run_cli([*ARGS, *extra]) == 2
    assert words in capsys.readouterr().err


def test_grades_report_the_curve_and_the_loosest_grade_like_the_api(capsys):
    assert run_cli([*ARGS, "--trials", "300", "--seed", "4", "--grades", "--criterion", "monotonic",
                    "--format", "json"]) == 0
    grades = json.loads(capsys.readouterr().out)["results"][0]["statistics"]["grades"]
    design = DEMO_BASE.with_settings({"bits": "6", "mismatch.tolerance": "2 %"})
    grade, curve = loosest_grade(design, 0.99, trials=300, seed=4, criterion="monotonic")
    assert grades["loosest"] == grade
    assert [p["yield"] for p in grades["curve"]] == curve.values.tolist()
    assert grades["criterion"] == "monotonic"
    assert run_cli([*ARGS, "--trials", "100", "--seed", "4", "--grades", "--format", "csv"]) == 0
    rows = dict(line.split(",", 1) for line in capsys.readouterr().out.splitlines() if "," in line)
    assert "stat.grade.loosest" in rows
    assert float(rows["stat.grade.0.0001"]) == 1.0
    assert run_cli([*ARGS, "--trials", "10", "--criterion", "dnl"]) == 2
    assert "--criterion needs --grades" in capsys.readouterr().err
