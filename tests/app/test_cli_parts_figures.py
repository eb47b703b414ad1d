"""``rungwise compute --format json`` carries the real-part figures the contract promises."""

from __future__ import annotations

import json
import math
import re

import pytest

from rungwise.app.cli.main import run_cli


def test_compute_json_has_part_figures(capsys):
    code = run_cli(["compute", "--format", "json", "--set", "series=E96", "--set", "load_c=10p",
                    "--set", "unit_r=33k", "--set", "temperature_c=50", "--set", "bandwidth=20k"])
    assert code == 0
    res = json.loads(capsys.readouterr().out)["results"][0]
    s = res["summary"]
    for key in ("settling_time", "noise_density", "noise_rms", "iref_max", "power_total_max"):
        assert isinstance(s[key], float)
        assert s[key] > 0
    leg = res["parts"][0]
    assert leg["ohms"] == pytest.approx(66.5e3)
    assert {"power_max", "power_code"} <= set(leg)
    # folded through the output pole (load_c = 10 pF): density·√(f_c·atan(B/f_c))
    fc = 1 / (2 * math.pi * s["settling_tau"])
    assert s["noise_rms"] == pytest.approx(s["noise_density"] * math.sqrt(fc * math.atan(20e3 / fc)),
                                           rel=1e-12)


def test_bad_series_is_a_bad_input(capsys):
    assert run_cli(["compute", "--set", "series=E7"]) == 2
    assert "series" in capsys.readouterr().err


def test_figures_with_no_meaning_say_why(capsys):
    # no load capacitance and no temperature coefficient: settling and drift rows say so
    assert run_cli(["compute", "--format", "table", "--set", "bits=6", "--set", "load_c=0"]) == 0
    lines = capsys.readouterr().out.splitlines()
    row = next(ln for ln in lines if ln.startswith("Settling to ½ LSB"))
    number = re.search(r"no meaning \((\d+)\)", row)  # the reason is listed once under the table
    assert number is not None, row
    assert f"({number[1]}) No meaning: no load capacitance given" in "\n".join(lines)
    assert " 0 s" not in row
    assert run_cli(["compute", "--format", "json", "--set", "bits=6", "--set", "load_c=1n",
                    "--set", "mismatch.tempco=0"]) == 0
    res = json.loads(capsys.readouterr().out)["results"][0]
    assert res["summary"]["drift_inl_high"] is None
    assert res["no_meaning"]["drift_inl_high"] == "no temperature coefficient set"
    assert "settling_time" not in res["no_meaning"]
    assert res["summary"]["settling_time"] > 0
