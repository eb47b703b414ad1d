"""``rungwise diagnose``: exit codes, the promised JSON keys and the exported files."""

from __future__ import annotations

import json
import re
from pathlib import Path

import pytest

from rungwise.app.cli.main import run_cli
from rungwise.core import designfile
from rungwise.core.diagnose.synthetic import sensor_bias_example

PROMISED = ("inl_endpoint", "inl_bestfit", "dnl", "monotonic", "bit_weight_error_lsb", "suspects")


@pytest.fixture
def example(tmp_path) -> Path:
    path = tmp_path / "board.csv"
    path.write_text(sensor_bias_example(), encoding="utf-8")
    return path


def test_json_holds_the_promised_keys(example, capsys):
    assert run_cli(["diagnose", str(example), "--format", "json"]) == 0
    out = json.loads(capsys.readouterr().out)
    for key in PROMISED:
        assert key in out
    n = out["measurement"]["n_codes_measured"]
    assert len(out["codes"]) == len(out["inl_endpoint"]) == len(out["inl_bestfit"]) == n
    assert len(out["dnl"]) == n
    assert out["dnl"][-1] is None
    assert len(out["bit_weight_error_lsb"]) == 8
    assert out["monotonic"] is True
    top = out["suspects"][0]
    assert top["id"] == "leg5"
    assert 0.0165 < top["deviation"] < 0.0195
    assert all({"id", "deviation"} <= set(s) for s in out["suspects"])
    assert out["measurement"]["missing_codes"] == [17, 18, 200]


def test_table_and_exports(example, tmp_path, capsys):
    csv_path, header, built = tmp_path / "c.csv", tmp_path / "ladder_fix.h", tmp_path / "b.toml"
    rc = run_cli(["diagnose", str(example), "--levels", "128", "--correction-csv", str(csv_path),
                  "--correction-header", str(header), "--save-as-built", str(built)])
    assert rc == 0
    text = capsys.readouterr().out
    assert "leg5" in text
    assert "Monotonic" in text
    assert len(csv_path.read_text().splitlines()) == 129
    assert re.search(r"static const uint8_t ladder_fix\[LADDER_FIX_LEN\]", header.read_text())
    doc = designfile.load(built)
    assert len(doc.candidates) == 2
    assert "leg5" in doc.candidates[1].parts


def test_topology_and_settings_choose_the_design(example, capsys):
    rc = run_cli(["diagnose", str(example), "--topology", "r2r-voltage:buffer", "--set",
                  "unit_r=4k7", "--format", "json"])
    assert rc == 0
    out = json.loads(capsys.readouterr().out)
    assert out["design"]["output"] == "buffer"


@pytest.mark.parametrize(("args", "message"), [
    (["--set", "bits=4"], "beyond the 4-bit design"),
    (["--topology", "nonsense"], "unknown topology"),
    (["--levels", "1"], "levels"),
])
def test_bad_input_exits_2(example, capsys, args, message):
    assert run_cli(["diagnose", str(example), *args]) == 2
    assert message in capsys.readouterr().err


def test_unreadable_file_exits_2_naming_the_line(tmp_path, capsys):
    bad = tmp_path / "bad.csv"
    bad.write_text("0,0.0\n1,0.01\n2,zero\n")
    assert run_cli(["diagnose", str(bad)]) == 2
    err = capsys.readouterr().err
    assert "bad.csv, line 3" in err
    assert "Traceback" not in err
    assert run_cli(["diagnose", str(tmp_path / "missing.csv")]) == 2


def test_candidate_by_name_or_number(example, capsys):
    assert run_cli(["diagnose", str(example), "--candidate", "3", "--format", "json"]) == 0
    assert json.loads(capsys.readouterr().out)["design"]["topology"] == "segmented"
    assert run_cli(["diagnose", str(example), "--candidate", "Ladder, 1 % parts (rev A)",
                    "--format", "json"]) == 0
    assert json.loads(capsys.readouterr().out)["design"]["topology"] == "r2r-voltage"
    assert run_cli(["diagnose", str(example), "--candidate", "9"]) == 2
    assert "no candidate '9'" in capsys.readouterr().err


def test_repair_json_contract_and_saved_plan(example, tmp_path, capsys):
    built = tmp_path / "fix.toml"
    rc = run_cli(["diagnose", str(example), "--format", "json", "--repair", "--series", "E96",
                  "--target-inl", "0.25", "--save-as-built", str(built)])
    assert rc == 0
    out = json.loads(capsys.readouterr().out)
    assert isinstance(out["ambiguous"], bool)
    first = out["explanations"][0]
    assert isinstance(first["residual_rms_lsb"], float)
    assert all(isinstance(k, str) and isinstance(v, float) for k, v in first["parts"].items())
    repair = out["repair"]
    assert repair["predicted_max_abs_inl"] <= 0.25
    assert repair["actions"]
    for action in repair["actions"]:
        assert set(action) == {"id", "action", "ohms"}
        assert action["action"] in {"replace", "parallel", "series"}
        assert action["ohms"] > 0
    doc = designfile.load(built)
    assert doc.settings["repair"]["actions"] == repair["actions"]
    assert doc.candidates[-1].name.endswith("repaired")


@pytest.mark.parametrize(("args", "message"), [
    (["--series", "E24"], "need --repair"),
    (["--loaded", "x.csv"], "go together"),
    (["--rout", "12"], "CODE=OHMS"),
    (["--repair", "--target-inl", "0"], "target-inl"),
    (["--set", "bits=12"], "looks like an 8-bit converter"),
    (["--set", "vref=20"], "cannot explain the curve"),
])
def test_repair_and_sanity_refusals_exit_2(example, capsys, args, message):
    assert run_cli(["diagnose", str(example), *args]) == 2
    assert message in capsys.readouterr().err


def test_millivolts_read_as_volts_are_named(example, tmp_path, capsys):
    wrong = tmp_path / "volts.csv"
    wrong.write_text(example.read_text().replace("code,output_mV", "code,output_V"))
    assert run_cli(["diagnose", str(wrong)]) == 2
    err = capsys.readouterr().err
    assert "millivolts read as volts" in err
    assert "no part is blamed" in err


def test_table_explains_the_bound_and_a_correction_that_changes_nothing(example, capsys):
    assert run_cli(["diagnose", str(example)]) == 0
    text = capsys.readouterr().out
    assert "bound: the most any corrected level can miss its wanted level" in text
    assert "the correction table changes nothing" in text
    assert "Explanations (up to three parts" in text
