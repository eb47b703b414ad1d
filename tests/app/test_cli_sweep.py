"""``rungwise sweep``: CSV/JSON of every point, equal to direct evaluations; bad input exits 2."""

from __future__ import annotations

import csv
import json

from rungwise.app.cli.main import run_cli
from rungwise.core import Design, evaluate


def test_json_points_equal_direct_evaluations(tmp_path, capsys):
    out = tmp_path / "sweep.json"
    rc = run_cli(["sweep", "--over", "bits", "--from", "2", "--to", "4", "--topology", "string",
                  "--set", "load_r=20k", "--format", "json", "-o", str(out)])
    assert rc == 0
    doc = json.loads(out.read_text())
    assert doc["over"] == "bits"
    assert doc["values"] == [2, 3, 4]
    assert doc["statistics"] is None
    assert [p["bits"] for p in doc["points"]] == [2, 3, 4]
    base = Design(topology="string", ron_high=40.0, ron_low=25.0, unit_r=10e3, vref=3.3,
                  load_r=20e3)
    for p in doc["points"]:
        direct = evaluate(base.replace(bits=p["bits"])).summary
        assert p["max_abs_inl_endpoint"] == direct["max_abs_inl_endpoint"]
        assert p["n_resistors"] == 2 ** p["bits"]
    assert doc["units"]["rout_max"] == "Ω"


def test_csv_with_yields(capsys):
    rc = run_cli(["sweep", "--over", "thermometer_bits", "--from", "0", "--to", "2",
                  "--topology", "segmented", "--set", "bits=6", "--tolerance", "0.5%",
                  "--trials", "50", "--seed", "3"])
    assert rc == 0
    out = capsys.readouterr()
    rows = list(csv.DictReader(out.out.splitlines()))
    assert [r["thermometer_bits"] for r in rows] == ["0", "1", "2"]
    assert all(0.0 <= float(r["yield_monotonic"]) <= 1.0 for r in rows)
    # the answer on stderr names the first M reaching 99 % monotonic boards, or the best reached
    first = next((r for r in rows if float(r["yield_monotonic"]) >= 0.99), None)
    if first is None:
        best = max(rows, key=lambda r: float(r["yield_monotonic"]))
        assert "never 99 % monotonic (best" in out.err
        assert f"M = {best['thermometer_bits']})" in out.err
    else:
        assert (f"99 % monotonic first reached at M = {first['thermometer_bits']} "
                in out.err)
        assert f"— {first['n_resistors']} resistors, {first['n_switches']} switches" in out.err


def test_bad_range_exits_2_naming_the_range(capsys):
    rc = run_cli(["sweep", "--over", "bits", "--from", "3", "--to", "20"])
    assert rc == 2
    assert "from 2 to 16" in capsys.readouterr().err
    rc = run_cli(["sweep", "--over", "bits", "--from", "3", "--to", "4", "--tolerance", "70%"])
    assert rc == 2
    assert "tolerance" in capsys.readouterr().err
    rc = run_cli(["sweep", "--over", "bits", "--from", "3", "--to", "4", "--tolerance", "1%",
                  "--target-yield", "120%"])
    assert rc == 2
    assert "target-yield" in capsys.readouterr().err
