"""The headless commands around files: new, export (and compute reading what new wrote)."""

from __future__ import annotations

import csv
import io
import json
import os
import subprocess
import sys
from pathlib import Path

import pytest

from rungwise.app.cli.main import run_cli
from rungwise.core import designfile, evaluate
from rungwise.core.demo import demo_candidates


def test_new_writes_the_demo_with_changes(tmp_path: Path, capsys):
    path = tmp_path / "d.toml"
    assert run_cli(["new", str(path), "--set", "unit_r=4k7", "--set", "bits=10", "--seed", "77",
                    "--trials", "500"]) == 0
    doc = designfile.load(path)
    assert doc.candidates == [d.with_settings({"unit_r": "4k7", "bits": "10"})
                              for d in demo_candidates()]
    assert (doc.analysis.seed, doc.analysis.trials) == (77, 500)
    assert "seed 77" in capsys.readouterr().err


def test_new_dash_writes_the_file_to_standard_output(tmp_path: Path, capsys, monkeypatch):
    monkeypatch.chdir(tmp_path)
    assert run_cli(["new", "-", "--seed", "5"]) == 0
    text = capsys.readouterr().out
    assert not (tmp_path / "-").exists()
    doc = designfile.loads(text, "stdout")
    assert doc.candidates == demo_candidates()
    assert doc.analysis.seed == 5


def test_new_refuses_to_overwrite_without_force(tmp_path: Path, capsys):
    path = tmp_path / "d.toml"
    path.write_text("mine")
    assert run_cli(["new", str(path)]) == 2
    assert "exists" in capsys.readouterr().err
    assert path.read_text() == "mine"
    assert run_cli(["new", str(path), "--force", "--topology", "r2r-current"]) == 0
    assert [c.topology for c in designfile.load(path).candidates] == ["r2r-current"]


@pytest.mark.parametrize(
    ("argv", "words"),
    [
        (["new", "{dir}/x.toml", "--set", "bits=99"], "bits"),
        (["new", "{dir}/x.toml", "--seed", "-3"], "analysis.seed"),
        (["new", "{dir}/missing/x.toml"], "does not exist"),
        (["export", "--table", "{dir}/t.doc"], "cannot tell the format"),
        (["export"], "nothing to export"),
        (["export", "--plots", "{dir}/p", "--plot-format", "gif"], "gif"),
        (["export", "{dir}/none.toml", "--table", "{dir}/t.csv"], "does not exist"),
        (["export", "--table", "{dir}/no/t.csv"], "does not exist"),
    ],
)
def test_bad_input_exits_2_with_a_message(tmp_path: Path, capsys, argv, words):
    code = run_cli([a.format(dir=tmp_path) for a in argv])
    err = capsys.readouterr().err
    assert code == 2
    assert words in err
    assert "Traceback" not in err
    assert not (tmp_path / "x.toml").exists()


def test_compute_reads_what_new_wrote(tmp_path: Path, capsys):
    path = tmp_path / "d.toml"
    run_cli(["new", str(path), "--set", "bits=5"])
    capsys.readouterr()
    assert run_cli(["compute", str(path), "--format", "json"]) == 0
    results = json.loads(capsys.readouterr().out)["results"]
    want = evaluate(demo_candidates()[0].replace(bits=5)).summary["max_abs_dnl"]
    assert results[0]["summary"]["max_abs_dnl"] == want


def test_export_table_and_per_code(tmp_path: Path, capsys):
    path = tmp_path / "d.toml"
    run_cli(["new", str(path), "--set", "bits=4"])
    assert run_cli(["export", str(path), "--table", str(tmp_path / "t.csv"),
                    "--per-code", str(tmp_path / "codes.csv")]) == 0
    rows = list(csv.reader(io.StringIO((tmp_path / "t.csv").read_text(encoding="utf-8"))))
    ev = evaluate(designfile.load(path).candidates[0])
    assert float(next(r for r in rows if r[0] == "lsb")[3]) == ev.summary["lsb"]
    per = list(csv.DictReader(io.StringIO((tmp_path / "codes.csv").read_text(encoding="utf-8"))))
    assert len(per) == len(demo_candidates()) * 16


def test_export_plots_with_no_display_in_a_fresh_process(tmp_path: Path):
    env = {k: v for k, v in os.environ.items()
           if k not in {"DISPLAY", "WAYLAND_DISPLAY", "QT_QPA_PLATFORM"}}
    out = subprocess.run([sys.executable, "-m", "rungwise.app", "export", "--set", "bits=4",
                          "--plots", str(tmp_path / "plots"), "--table", str(tmp_path / "t.xlsx")],
                         capture_output=True, text=True, env=env, timeout=120)
    assert out.returncode == 0, out.stderr
    assert sorted(p.name for p in (tmp_path / "plots").iterdir()) == sorted(
        f"{n}.{e}" for n in ("transfer", "inl", "dnl", "rout") for e in ("png", "svg"))
    assert "Traceback" not in out.stderr


def test_export_bom_counts_every_resistor(tmp_path: Path):
    out = tmp_path / "bom.csv"
    assert run_cli(["export", "--set", "bits=6", "--bom", str(out)]) == 0
    rows = list(csv.DictReader(io.StringIO(out.read_text(encoding="utf-8"))))
    for d in demo_candidates():
        ev = evaluate(d.replace(bits=6))
        mine = [r for r in rows if r["candidate"] == ev.design.label and r["kind"] == "resistor"]
        assert sum(int(r["quantity"]) for r in mine) == ev.summary["n_resistors"]
        ohms = {p["id"]: p["ohms"] for p in ev.parts}
        for r in mine:
            assert {ohms[pid] for pid in r["part_ids"].split()} == {float(r["value_ohms"])}
