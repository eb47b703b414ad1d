"""``rungwise search``: the JSON contract, CSV, the table's words, the file's question, bad input."""

from __future__ import annotations

import csv
import json

import pytest

from rungwise.app.cli.main import run_cli
from rungwise.core import Design
from rungwise.core.designfile import DesignFile, save
from rungwise.core.search_question import SearchQuestion

SMALL = ["--set", "bits=6", "--set", "ron_high=0", "--set", "ron_low=0", "--set", "load_r=open",
         "--topology", "r2r-voltage", "--topology", "binary-weighted:divider", "--series", "exact",
         "--grades", "1%,0.2%", "--trials", "800", "--workers", "1"]


def test_json_contract(tmp_path):
    out = tmp_path / "search.json"
    rc = run_cli(["search", *SMALL, "--seed", "7", "--criterion", "monotonic", "--format", "json",
                  "-o", str(out)])
    assert rc == 0
    doc = json.loads(out.read_text())
    assert doc["seed"] == 7
    assert "Clopper–Pearson" in doc["method"]
    costs = [d["cost"] for d in doc["designs"]]
    assert costs == sorted(costs)
    assert len(doc["designs"]) == 4
    for d in doc["designs"]:
        assert isinstance(d["cost"], float)
        assert isinstance(d["meets"], bool)
        assert isinstance(d["yield"], float)
        assert isinstance(d["yield_stderr"], float)
        assert isinstance(d["trials"], int)
        assert (d["resistors"], d["switches"], d["amplifiers"]) in ((12, 6, 0), (6, 6, 0))
        design = Design.from_dict(d["design"])
        assert design.mismatch["tolerance"] in (0.01, 0.002)
        assert design.bits == 6
    first = next(i for i, d in enumerate(doc["designs"]) if d["meets"])
    assert doc["answer"] == first
    assert "invented example prices" in doc["prices"]


def test_table_and_csv_say_the_prices_are_examples(capsys):
    assert run_cli(["search", *SMALL]) == 0
    text = capsys.readouterr().out
    assert "Cheapest design that meets every target" in text or "No design" in text
    assert "invented example prices" in text
    assert "Why the other networks lost" in text
    assert run_cli(["search", *SMALL, "--format", "csv"]) == 0
    rows = list(csv.DictReader(capsys.readouterr().out.splitlines()))
    assert len(rows) == 4
    assert all("invented example prices" in r["prices"] for r in rows)
    assert [float(r["cost"]) for r in rows] == sorted(float(r["cost"]) for r in rows)


def test_the_files_question_and_prices_are_used(tmp_path, capsys):
    path = tmp_path / "q.toml"
    q = SearchQuestion.from_dict({"topologies": ["r2r-voltage"], "series": ["exact"],
                                  "grades": ["0.5%"], "trials": 400, "seed": 5})
    from rungwise.core.cost import CostTable

    save(path, DesignFile([Design(bits=5)], search=q, cost=CostTable.from_dict({"switch": 1.0})))
    assert run_cli(["search", str(path), "--format", "json", "--workers", "1"]) == 0
    doc = json.loads(capsys.readouterr().out)
    assert doc["seed"] == 5
    assert len(doc["designs"]) == 1
    assert doc["designs"][0]["cost_breakdown"]["switches"] == 5.0
    assert "your prices" in doc["prices"]


@pytest.mark.parametrize(("args", "words"), [
    (["--grades", "70%"], "grades"),
    (["--topology", "ladder"], "unknown topology"),
    (["--target-yield", "150%"], "target_yield"),
    (["--thermometer-bits", "6-2"], "thermometer_bits: 6-2 is out of range; allowed: 0 … 16, low end first"),
    (["--unit-r", "100k-1k"], "unit_r"),
    (["--grades", "0.001%"], "no price"),
    (["--criterion", "best"], "invalid choice"),
])
def test_bad_space_or_target_exits_2(args, words, capsys):
    assert run_cli(["search", "--set", "bits=6", "--workers", "1", *args]) == 2
    err = capsys.readouterr().err
    assert words in err
    assert "Traceback" not in err
