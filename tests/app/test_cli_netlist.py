"""``rungwise netlist``: the file it writes runs in ngspice and prints the engine's output."""

from __future__ import annotations

import re
import subprocess
from pathlib import Path

import numpy as np
import pytest
from references import spice

from rungwise.app.cli.main import run_cli
from rungwise.core import Design, designfile, evaluate
from rungwise.core.designfile import DesignFile


def _file(tmp_path: Path) -> tuple[Path, DesignFile]:
    doc = DesignFile([Design(name="first", bits=6, unit_r=10e3),
                      Design(topology="binary-weighted", output="terminated-divider",
                             name="second", bits=6, unit_r=12e3, ron_high=30.0, ron_low=15.0,
                             ref_r=5.0, load_r=33e3, series="E24")])
    path = tmp_path / "two.toml"
    designfile.save(path, doc)
    return path, doc


@pytest.mark.ngspice
def test_netlist_of_a_chosen_candidate_and_code_runs_in_ngspice(tmp_path: Path, capsys):
    exe = spice.require_ngspice()
    path, doc = _file(tmp_path)
    cir = tmp_path / "second.cir"
    assert run_cli(["netlist", str(path), "--candidate", "2", "--code", "0b101101",
                    "-o", str(cir)]) == 0
    text = cir.read_text()
    assert "candidate 'second'" in text
    assert "code 45 (0b101101)" in text
    assert "from two.toml" in text
    out = subprocess.run([exe, "-b", str(cir)], capture_output=True, text=True, check=True)
    value = float(re.search(r"^v\(out\) = (\S+)$", out.stdout, re.M).group(1))
    # source: ngspice — the printed v(out) is the engine's output at code 45
    assert value == pytest.approx(evaluate(doc.candidates[1]).vout[45], rel=1e-9)


@pytest.mark.ngspice
def test_all_codes_sweep_by_name_on_stdout(tmp_path: Path, capsys):
    exe = spice.require_ngspice()
    path, doc = _file(tmp_path)
    assert run_cli(["netlist", str(path), "--candidate", "first", "--all-codes",
                    "--set", "load_r=47k"]) == 0
    cir = tmp_path / "sweep.cir"
    cir.write_text(capsys.readouterr().out)
    out = subprocess.run([exe, "-b", str(cir)], capture_output=True, text=True, check=True)
    rows = re.findall(r"^\d+\s+(\S+)\s+(\S+)\s*$", out.stdout, re.M)
    got = np.array([float(v) for _, v in rows])
    # source: ngspice — every code of the swept netlist
    expected = evaluate(doc.candidates[0].with_settings({"load_r": "47k"})).vout
    np.testing.assert_allclose(got, expected, rtol=3e-8, atol=1e-12)


@pytest.mark.parametrize(("args", "words"), [
    (["--code", "64"], "from 0 to 63"),
    (["--code", "x"], "from 0 to 63"),
    (["--candidate", "3", "--code", "1"], "choose one of 1: first, 2: second"),
    ([], "one of the arguments --code --all-codes is required"),
    (["--code", "1", "--all-codes"], "not allowed with"),
])
def test_bad_choices_exit_2_naming_the_field(tmp_path: Path, capsys, args, words):
    path, _ = _file(tmp_path)
    assert run_cli(["netlist", str(path), *args, "-o", str(tmp_path / "x.cir")]) == 2
    assert words in capsys.readouterr().err
    assert not (tmp_path / "x.cir").exists()
