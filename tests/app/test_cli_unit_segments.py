"""The unit-element LSB section of segmented designs from the command line (new, compute)."""

from __future__ import annotations

import json
from pathlib import Path

from rungwise.app.cli.main import run_cli
from rungwise.core.designfile import load


def test_new_and_compute_with_a_unit_array_section(tmp_path: Path, capsys):
    path = tmp_path / "units.toml"
    assert run_cli(["new", str(path), "--topology", "segmented", "--set", "bits=6",
                    "--set", "thermometer_bits=2", "--set", "build.lsb_section=unit-array",
                    "--set", "parts.bit0=65k", "--seed", "5"]) == 0
    design = load(path).candidates[0]
    assert design.build["lsb_section"] == "unit-array"
    assert dict(design.parts) == {"bit0": 65e3}
    capsys.readouterr()
    assert run_cli(["compute", str(path), "--format", "json"]) == 0
    (result,) = json.loads(capsys.readouterr().out)["results"]
    assert result["summary"]["n_resistors"] == 64
    assert [p["id"] for p in result["parts"]] == ["seg0", "seg1", "seg2", "bit0", "bit1", "bit2",
                                                  "bit3", "term"]


def test_unknown_section_is_refused_by_name(capsys):
    assert run_cli(["compute", "--topology", "segmented",
                    "--set", "build.lsb_section=ladder"]) == 2
    err = capsys.readouterr().err
    assert "build.lsb_section" in err
    assert "r2r, unit-array" in err
