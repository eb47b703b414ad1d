"""``rungwise bom`` writes the bill of materials."""

from __future__ import annotations

import csv

from rungwise.app.cli.main import run_cli
from rungwise.core.demo import DEMO_BASE, demo_candidates


def test_bom_writes_csv(tmp_path, capsys):
    out = tmp_path / "parts.csv"
    assert run_cli(["bom", "--set", "series=E96", "--set", "unit_r=33k", "-o", str(out)]) == 0
    rows = list(csv.DictReader(out.read_text(encoding="utf-8").splitlines()))
    assert {r["candidate"] for r in rows} == {d.label for d in demo_candidates()}
    ladder = [r for r in rows if r["candidate"] == DEMO_BASE.label and r["kind"] == "resistor"]
    assert {float(r["value_ohms"]) for r in ladder} == {66.5e3, 33.2e3}
    assert sum(int(r["quantity"]) for r in ladder) == 16


def test_bom_warns_on_overload(capsys):
    assert run_cli(["bom", "--topology", "binary-weighted:terminated-divider", "--set", "vref=24",
                    "--set", "unit_r=100", "--set", "bits=6"]) == 0
    err = capsys.readouterr().err
    assert "over the rating" in err
    assert "datasheet" in err


def test_bom_bad_input(capsys):
    assert run_cli(["bom", "--set", "board.derating=2"]) == 2
    assert "board.derating" in capsys.readouterr().err
