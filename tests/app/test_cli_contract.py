"""``rungwise compute`` from the outside: exit codes, messages and the output formats' contract."""

from __future__ import annotations

import csv
import io
import json
import math
import re
import subprocess
import sys

import pytest

from rungwise.app.cli.main import run_cli
from rungwise.core import SUMMARY_KEYS, Design, evaluate
from rungwise.core.designfile import DesignFile, dumps

CANDIDATES = [
    Design(topology="r2r-current", bits=3, vref=2.5, unit_r=10e3, ron_high=30.0, ron_low=12.0,
           ref_r=15.0, name="Inverted ladder"),
    Design(topology="binary-weighted", output="divider", bits=3, vref=2.5, unit_r=8.2e3,
           ron_high=30.0, ron_low=12.0, load_r=56e3, parts={"bit0": 33.1e3}, name="Divider",
           load_c=20e-12, timing={"rise": 2e-9, "fall": 1e-9, "skew": [0, 1e-9], "node_c": 1e-12}),
]

DYNAMIC_KEYS = ("glitch_major", "glitch_peak_major", "settling_major", "glitch_worst",
                "glitch_worst_code", "settling_worst", "settling_worst_code", "sfdr_db", "thd_db",
                "sinad_db", "enob")
"""Summary keys promised to scripts for the dynamic and spectral figures."""


def test_json_dynamic_keys(design_file):
    proc = _run("compute", str(design_file), "--format", "json", "--per-code")
    assert proc.returncode == 0, proc.stderr
    res = json.loads(proc.stdout)["results"][1]
    s, pc = res["summary"], res["per_code"]
    assert set(DYNAMIC_KEYS) <= set(s)
    major = 2 ** (res["bits"] - 1)  # transition 2^(N−1) − 1 → 2^(N−1)
    assert s["glitch_major"] == pc["glitch"][major] != 0.0
    worst = max(range(1, len(pc["glitch"])), key=lambda c: abs(pc["glitch"][c]))
    assert (s["glitch_worst_code"], s["glitch_worst"]) == (worst, pc["glitch"][worst])
    slow = max(range(1, len(pc["settling"])), key=lambda c: pc["settling"][c])
    assert (s["settling_worst_code"], s["settling_worst"]) == (slow, pc["settling"][slow])
    assert s["settling_major"] == pc["settling"][major] > 0
    assert s["thd_db"] < 0
    assert s["sinad_db"] <= s["sfdr_db"]
    assert s["enob"] == pytest.approx((s["sinad_db"] - 1.76) / 6.02)  # the definition


def _run(*args: str) -> subprocess.CompletedProcess:
    return subprocess.run([sys.executable, "-m", "rungwise.app", *args], capture_output=True,
                          text=True, timeout=120, check=False)


@pytest.fixture(scope="module")
def design_file(tmp_path_factory):
    path = tmp_path_factory.mktemp("cli") / "two.toml"
    path.write_text(dumps(DesignFile(candidates=CANDIDATES)))
    return path


@pytest.fixture(scope="module")
def expected():
    from rungwise.core.skew import add_skew_figures

    evs = [evaluate(d) for d in CANDIDATES]
    for ev in evs:  # compute adds the ratio search's figures
        add_skew_figures(ev)
    return evs


def _same(cli_value, value) -> bool:
    """JSON carries non-finite numbers as null; everything else must be equal exactly."""
    if isinstance(value, float) and not math.isfinite(value):
        return cli_value is None
    return cli_value == value


def test_json_contract_and_values(design_file, expected):
    proc = _run("compute", str(design_file), "--format", "json", "--per-code")
    assert proc.returncode == 0, proc.stderr
    doc = json.loads(proc.stdout)
    assert list(doc) == ["results"]
    assert len(doc["results"]) == len(expected)
    for res, ev in zip(doc["results"], expected, strict=True):
        assert {"topology", "output", "bits", "summary", "parts", "per_code"} <= set(res)
        assert (res["topology"], res["output"], res["bits"]) == (
            ev.design.topology, ev.design.output, ev.design.bits)
        assert set(res["summary"]) == set(ev.summary)
        assert isinstance(res["summary"]["guaranteed_monotonic"], bool)  # issue 19's contract
        ratio = res["summary"]["series_ratio_for_monotonic"]
        assert ratio is None or isinstance(ratio, float)
        assert set(res["notes"]) == {"guaranteed_monotonic", "series_ratio_for_monotonic"}
        for key, value in ev.summary.items():
            assert _same(res["summary"][key], value), key
        assert [{k: p[k] for k in ("id", "ohms", "role")} for p in res["parts"]] == [
            {k: p[k] for k in ("id", "ohms", "role")} for p in ev.parts]
        for got, part in zip(res["parts"], ev.parts, strict=True):  # any further figures too
            assert set(got) == set(part)
            assert all(_same(got[k], part[k]) for k in part), part["id"]
        pc = res["per_code"]
        assert set(pc) == {"code", "vout", "rout", "iref", "inl_endpoint", "inl_bestfit", "dnl",
                           "glitch", "settling"}
        for name in ("glitch", "settling"):  # element c: transition c − 1 → c; element 0 is 0
            arr = ev.per_code()[name]
            assert pc[name][0] == 0.0, name
            assert len(pc[name]) == arr.size, name
            assert all(_same(a, float(b)) for a, b in zip(pc[name], arr, strict=True)), name
        assert pc["code"] == ev.codes.tolist()
        for name in ("vout", "rout", "iref", "inl_endpoint", "inl_bestfit", "dnl"):
            arr = getattr(ev, name)
            assert len(pc[name]) == arr.size, name
            assert all(_same(a, float(b)) for a, b in zip(pc[name], arr, strict=True)), name
    assert {k: doc["results"][1]["parts"][0][k] for k in ("id", "ohms", "role")} == {
        "id": "bit0", "ohms": 33.1e3, "role": "bit"}
    assert doc["results"][0]["per_code"]["rout"][0] is None  # open summing node at code 0


def test_csv_parses_back(design_file, expected):
    proc = _run("compute", str(design_file), "--format", "csv", "--per-code")
    assert proc.returncode == 0, proc.stderr
    summary_text, per_code_text = proc.stdout.split("\n\n")
    rows = list(csv.reader(io.StringIO(summary_text)))
    assert rows[0] == ["metric", *[ev.design.label for ev in expected]]
    by_key = {r[0]: r[1:] for r in rows[1:]}
    for i, ev in enumerate(expected):
        for key, value in ev.summary.items():
            cell = by_key[key][i]
            if isinstance(value, bool):
                assert cell == str(value)
            elif isinstance(value, float) and not math.isfinite(value):
                assert cell == ""
            else:
                assert float(cell) == value, key
    table = list(csv.DictReader(io.StringIO(per_code_text)))
    assert len(table) == sum(ev.codes.size for ev in expected)
    for ev in expected:
        mine = [r for r in table if r["candidate"] == ev.design.label]
        pc = ev.per_code()
        for row in mine:
            c = int(row["code"])
            for name in ("vout", "rout", "iref", "inl_endpoint", "inl_bestfit", "dnl", "glitch",
                         "settling"):
                x = float(pc[name][c])
                assert (row[name] == "") if not math.isfinite(x) else float(row[name]) == x


def _table_number(cell: str, unit: str) -> float | bool:
    """A table cell read back: yes/no, —, ∞ and an engineering prefix before the figure's unit."""
    cell = cell.strip()
    if cell == "—" or cell.startswith("no meaning"):  # core/figure_meaning.py
        return math.nan
    if cell in ("yes", "no"):
        return cell == "yes"
    suffix = "%" if unit == "fraction" else unit
    if suffix and cell.endswith(suffix):
        cell = cell[: -len(suffix)].strip()
    m = re.fullmatch(r"([-−]?)(∞|[\d.]+(?:e[-+]?\d+)?)\s*([fpnuµmkMGT]?)", cell)
    assert m, cell
    sign = -1.0 if m.group(1) else 1.0
    if m.group(2) == "∞":
        return sign * math.inf
    scale = {"": 1, "f": 1e-15, "p": 1e-12, "n": 1e-9, "u": 1e-6, "µ": 1e-6, "m": 1e-3, "k": 1e3,
             "M": 1e6, "G": 1e9, "T": 1e12}[m.group(3)]
    value = sign * float(m.group(2)) * scale
    return value / 100 if unit == "fraction" else value


def test_table_parses_back(design_file, expected):
    proc = _run("compute", str(design_file), "--format", "table")
    assert proc.returncode == 0, proc.stderr
    table, _, notes = proc.stdout.partition("\n\n")  # the notes say how figures were decided
    assert "Monotonic on every board within tolerance: every part anywhere within" in notes
    lines = table.rstrip("\n").split("\n")
    assert [c.strip() for c in re.split(r"\s{2,}", lines[0].strip())] == [
        ev.design.label for ev in expected]
    keys = [k for k in expected[0].summary if all(k in ev.summary for ev in expected)]
    assert len(lines) - 1 == len(keys)  # one row per summary figure, in order
    for line, key in zip(lines[1:], keys, strict=True):
        label, unit = SUMMARY_KEYS.get(key, (key, ""))
        row_label, *cells = re.split(r"\s{2,}", line.strip())
        assert row_label == label.strip()
        for cell, ev in zip(cells, expected, strict=True):
            value = ev.summary[key]
            got = _table_number(cell, unit)
            if value is None or (isinstance(value, float) and math.isnan(value)):
                assert got != got, key  # shown as —
            elif isinstance(value, bool) or (isinstance(value, float) and math.isinf(value)):
                assert got == value, key
            else:
                assert got == pytest.approx(value, rel=5e-4, abs=1e-15), key
    assert {"lsb", "max_abs_inl_endpoint", "rout_max", "iref_max", "monotonic"} <= set(keys)


BAD = [
    # (arguments after "compute", field named, words of the allowed range)
    (["--set", "bits=0"], "bits", "1 to 24"),
    (["--set", "bits=99"], "bits", "1 to 24"),
    (["--set", "unit_r=-4k7"], "unit_r", "≥ 0.001 Ω"),
    (["--set", "ron_low=-1"], "ron_low", "0 (ideal) or ≥ 0.001 Ω"),
    (["--set", "vref=nan"], "vref", "1000 V"),
    (["--set", "unit_r=abc"], "unit_r", "≥ 0.001 Ω"),
    (["--set", "parts.leg9=10k"], "parts.leg9", "leg0"),
    (["--topology", "ladder"], "topology", "r2r-voltage"),
    (["--topology", "r2r-voltage:summing-amp"], "output", "unbuffered"),
    (["--set", "unit_r"], "--set", "key=value"),
]


@pytest.mark.parametrize(("args", "field", "allowed"), BAD)
def test_bad_input_exits_2_with_the_message(args, field, allowed, capsys):
    assert run_cli(["compute", "--format", "json", *args]) == 2
    out, err = capsys.readouterr()
    assert out == ""
    assert err.startswith("rungwise: error: ")
    assert field in err
    assert allowed in err


@pytest.mark.parametrize(("args", "field", "allowed"), [BAD[0], BAD[5], BAD[-1]])
def test_bad_input_in_a_real_process_has_no_traceback(args, field, allowed):
    proc = _run("compute", "--format", "json", *args)
    assert proc.returncode == 2, proc.stderr
    assert proc.stdout == ""
    assert "Traceback" not in proc.stderr
    assert proc.stderr.startswith("rungwise: error: ")
    assert field in proc.stderr
    assert allowed in proc.stderr


def test_missing_design_file_exits_2(tmp_path):
    proc = _run("compute", str(tmp_path / "nowhere.toml"))
    assert proc.returncode == 2
    assert "does not exist" in proc.stderr
    assert "Traceback" not in proc.stderr


def test_bad_value_in_a_design_file_names_the_candidate_and_field(tmp_path, capsys):
    path = tmp_path / "bad.toml"
    text = dumps(DesignFile(candidates=CANDIDATES)).replace("bits = 3", "bits = 30", 1).replace(
        "sealed = true\n", "", 1)  # edited by hand
    assert "bits = 30" in text
    path.write_text(text)
    assert run_cli(["compute", str(path)]) == 2
    out, err = capsys.readouterr()
    assert out == ""
    assert "candidate[0].bits" in err
    assert "1 to 24" in err


@pytest.mark.parametrize(("setting", "hint"), [("topology=r2r-voltage", "--topology r2r-voltage"),
                                               ("output=buffer", "--topology r2r-voltage:buffer")])
def test_set_cannot_change_the_network_and_points_to_topology(setting, hint, capsys):
    assert run_cli(["compute", "--set", setting, "--format", "table"]) == 2
    out, err = capsys.readouterr()
    assert out == ""
    assert setting.split("=")[0] in err
    assert hint in err


def test_topology_choices_are_named_after_their_network(capsys):
    assert run_cli(["compute", "--topology", "r2r-voltage", "--topology", "string",
                    "--format", "json"]) == 0
    results = json.loads(capsys.readouterr().out)["results"]
    assert [(r["name"], r["topology"]) for r in results] == [
        ("R-2R ladder, voltage out (unbuffered)", "r2r-voltage"),
        ("Resistor string (unbuffered)", "string")]


@pytest.mark.parametrize(("setting", "field", "words"), [
    ("vref=5 A", "vref", "volts (V)"), ("unit_r=10 V", "unit_r", "ohms (Ω)"),
    ("ron_high=40 F", "ron_high", "ohms (Ω)"), ("vref=5 mA", "vref", "volts (V)"),
    ("unit_r=10 kV", "unit_r", "ohms (Ω)"), ("unit_r=1 %", "unit_r", "a percentage"),
    ("load_c=3 Hz", "load_c", "farads (F)"), ("bandwidth=2 s", "bandwidth", "hertz (Hz)"),
    ("mismatch.tolerance=1", "mismatch.tolerance", "a fraction from 0 to 0.5 (0 % to 50 %)"),
    ("mismatch.tolerance=5 V", "mismatch.tolerance", "a fraction"),
    ("board.derating=150 %", "board.derating", "(150 %) is out of range"),
    ("board.power_rating=1 A", "board.power_rating", "watts (W)"),
    ("temperature_c=300 V", "temperature_c", "Celsius"),
])
def test_a_wrong_unit_exits_2_naming_the_field(setting, field, words, capsys):
    assert run_cli(["compute", "--set", setting, "--format", "json"]) == 2
    out, err = capsys.readouterr()
    assert out == ""
    assert err.startswith(f"rungwise: error: {field}: ")
    assert words in err
    assert "Traceback" not in err


@pytest.mark.parametrize(("setting", "key", "value"), [
    ("unit_r=4R7", "unit_r", 4.7), ("unit_r=4r7", "unit_r", 4.7), ("unit_r=10meg", "unit_r", 10e6),
    ("unit_r=10 kohm", "unit_r", 10e3), ("unit_r=2k2 Ohm", "unit_r", 2.2e3), ("vref=3V3", "vref", 3.3),
    ("vref=2.5v", "vref", 2.5), ("temperature_c=300 K", "temperature_c", 26.85),
])
def test_the_spellings_engineers_use_are_read(setting, key, value, capsys):
    from rungwise.app.cli.candidates import apply_choices, parse_settings
    from rungwise.core.design import Design

    (design,) = apply_choices([Design()], parse_settings([setting]), None)
    assert getattr(design, key) == pytest.approx(value, rel=1e-12)
    assert run_cli(["compute", "--set", setting, "--format", "json"]) == 0
    assert capsys.readouterr().err == ""
