"""Design files: round trip, upgrades of older layouts, atomic writes, damaged files refused."""

from __future__ import annotations

import dataclasses
import os
from pathlib import Path

import pytest
from hardening.strategies import field_value
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from rungwise.core import FIELDS, OUTPUTS_BY_TOPOLOGY, TOPOLOGIES, Design, DesignError
from rungwise.core import designfile as dfile
from rungwise.core.demo import demo_candidates
from rungwise.core.design import MAX_OHMS, MIN_OHMS
from rungwise.core.targets import AnalysisSettings, Targets
from rungwise.core.topologies import part_ids


@st.composite
def designs(draw) -> Design:
    """Any valid design: every numeric key from its FIELDS range, topology/output, name, parts."""
    topology = draw(st.sampled_from(TOPOLOGIES))
    output = draw(st.sampled_from(OUTPUTS_BY_TOPOLOGY[topology]))
    values = {k: draw(field_value(k, 12)) for k in FIELDS}
    if values["thermometer_bits"] is not None:
        values["thermometer_bits"] = min(values["thermometer_bits"], values["bits"])
    if topology == "string":
        values["bits"] = min(values["bits"], 10)
    name = draw(st.text(max_size=20).filter(lambda s: "\x00" not in s))
    base = Design(topology=topology, output=output, **values, name=name)
    ids = part_ids(topology, base.output, base.bits, base.thermometer_bits)
    chosen = draw(st.lists(st.sampled_from(ids), max_size=3, unique=True))
    parts = {pid: draw(st.floats(MIN_OHMS, MAX_OHMS, allow_nan=False)) for pid in chosen}
    return base.replace(parts=parts) if parts else base


@settings(max_examples=60, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(cands=st.lists(designs(), min_size=1, max_size=3),
       seed=st.integers(0, 2**63 - 1), trials=st.integers(1, 10**6),
       inl=st.floats(0, 100), line=st.sampled_from(["endpoint", "bestfit"]))
def test_round_trip_gives_equal_designs(cands, seed, trials, inl, line):
    doc = dfile.DesignFile(cands, settings={"view": "inl"},
                           analysis=AnalysisSettings(trials=trials, seed=seed),
                           targets=Targets(max_inl_lsb=inl, inl_line=line))
    back = dfile.loads(dfile.dumps(doc))
    assert back == doc
    for a, b in zip(back.candidates, cands, strict=True):
        assert a.to_dict() == b.to_dict()


def test_every_design_key_is_written():
    d = demo_candidates()[0]
    text = dfile.dumps(dfile.DesignFile([d.replace(feedback_r=5e3, parts={"leg0": 20.1e3})]))
    for f in dataclasses.fields(Design):
        assert f"\n{f.name} = " in text or f"[candidate.{f.name}]" in text, f.name


def test_file_on_disk_round_trip(tmp_path: Path):
    path = tmp_path / "pick.toml"
    doc = dfile.DesignFile(demo_candidates(), analysis=AnalysisSettings(trials=250, seed=99))
    dfile.save(path, doc)
    assert dfile.load(path) == doc
    assert [p.name for p in tmp_path.iterdir()] == ["pick.toml"]


# --- older layouts ---------------------------------------------------------------------------
VERSION_0 = """
format = "rungwise-design"
version = 0
seed = 31
trials = 400

[design]
topology = "binary-weighted"
output = "terminated-divider"
bits = 6
vref = 5.0
unit_r = 4700.0
load_r = "open"
"""

VERSION_1 = """
format = "rungwise-design"
version = 1

[settings]
seed = 8
trials = 64
view = "dnl"

[[candidate]]
topology = "r2r-voltage"
bits = 10
unit_r = "4k7"

[[candidate]]
topology = "r2r-current"
bits = 10
"""


def test_version_0_single_design_is_upgraded():
    doc = dfile.loads(VERSION_0)
    assert doc.candidates == [Design(topology="binary-weighted", output="terminated-divider",
                                     bits=6, vref=5.0, unit_r=4700.0)]
    assert doc.analysis == AnalysisSettings(trials=400, seed=31)
    assert doc.targets == Targets()
    assert doc.settings == {}


def test_version_1_settings_seed_moves_to_analysis():
    doc = dfile.loads(VERSION_1)
    assert [c.topology for c in doc.candidates] == ["r2r-voltage", "r2r-current"]
    assert doc.candidates[0].unit_r == 4700.0
    assert doc.analysis == AnalysisSettings(trials=64, seed=8)
    assert doc.settings == {"view": "dnl"}
    # an upgraded file is written back in the current layout and reads the same
    again = dfile.loads(dfile.dumps(doc))
    assert again == doc
    assert f"version = {dfile.SCHEMA_VERSION}" in dfile.dumps(doc)


def test_old_file_with_bad_value_names_the_key():
    with pytest.raises(DesignError) as info:
        dfile.loads(VERSION_0.replace("bits = 6", "bits = 99"))
    assert info.value.field == "candidate[0].bits"
    assert "out of range" in str(info.value)


# --- damaged files ---------------------------------------------------------------------------
def _hand_edited(text: str) -> str:
    """A written file as a person edits it: the ``sealed`` line deleted (the [end] table stays)."""
    assert text.startswith(dfile.SEALED_HEAD)
    return text.replace("sealed = true\n", "", 1)


def _good_text() -> str:
    return _hand_edited(dfile.dumps(dfile.DesignFile(demo_candidates())))


def _second_candidate(text: str, old: str, new: str) -> str:
    head, sep, tail = text.partition("[[candidate]]")
    head2, sep2, tail2 = tail.partition("[[candidate]]")
    assert old in tail2
    return head + sep + head2 + sep2 + tail2.replace(old, new, 1)


@pytest.mark.parametrize(
    ("change", "field", "words"),
    [
        (lambda t: t[: len(t) // 2] + "\n[[cand", "x.toml", "line"),
        (lambda t: t.replace('format = "rungwise-design"', 'format = "other"'), "format", "not a"),
        (lambda t: t.replace("version = 3", "version = 4"), "version", "newer"),
        (lambda t: t.replace("version = 3", 'version = "3"'), "version", "whole number"),
        (lambda t: _second_candidate(t, "unit_r = 10000.0", "unit_r = -1.0"),
         "candidate[1].unit_r", "out of range"),
        (lambda t: _second_candidate(t, "unit_r = 10000.0", "unit_r = [1, 2]"),
         "candidate[1].unit_r", "cannot read"),
        (lambda t: _second_candidate(t, "bits = 8", "bits = 1e400"), "candidate[1].bits", "finite"),
        (lambda t: _second_candidate(t, "bits = 8", "bits = 123456789012345678901234567890"),
         "candidate[1].bits", "too large"),
        (lambda t: _second_candidate(t, "bits = 8", "bits = 8\ncolour = 3"), "candidate[1].colour",
         "unknown"),
        (lambda t: t.replace("[targets]", "[targets]\nstrictness = 2"), "targets.strictness",
         "unknown"),
        (lambda t: t.replace("seed = 1", "seed = -4"), "analysis.seed", "out of range"),
        (lambda t: t.replace("monotonic = true", "monotonic = 1"), "targets.monotonic", "true or false"),
        (lambda t: "extra = 1\n" + t, "extra", "unknown top-level"),
        (lambda t: t.split("[[candidate]]")[0], "candidate", "no [[candidate]]"),
        (lambda t: "sealed = true\n" + t, "sealed", "hand-written"),
        (lambda t: _second_candidate(t, 'name = "Ladder, 0.1 % parts"', "name = 5"), "candidate[1].name",
         "text"),
    ],
)
def test_damaged_file_is_refused_with_what_and_where(change, field, words):
    text = change(_good_text())
    with pytest.raises(DesignError) as info:
        dfile.loads(text, source="x.toml")
    assert info.value.field == field
    assert words in str(info.value)


def test_bad_value_message_gives_its_line():
    text = _second_candidate(_good_text(), "unit_r = 10000.0", "unit_r = -1.0")
    line = next(i + 1 for i, ln in enumerate(text.splitlines()) if ln == "unit_r = -1.0")
    with pytest.raises(DesignError, match=rf"\(line {line}\) in x\.toml"):
        dfile.loads(text, source="x.toml")


def test_syntax_error_gives_line_and_column():
    text = _good_text().replace("bits = 8", "bits = = 8", 1)
    line = next(i + 1 for i, ln in enumerate(text.splitlines()) if ln == "bits = = 8")
    with pytest.raises(DesignError, match=rf"line {line}, column \d+: not valid TOML"):
        dfile.loads(text, source="x.toml")


def test_unreadable_files_are_refused(tmp_path: Path):
    with pytest.raises(DesignError, match="does not exist"):
        dfile.load(tmp_path / "missing.toml")
    binary = tmp_path / "b.toml"
    binary.write_bytes(b"\xff\xfe\x00garbage")
    with pytest.raises(DesignError, match="cannot read"):
        dfile.load(binary)
    nested = tmp_path / "n.toml"
    nested.write_text('format = "rungwise-design"\nversion = 2\nx = ' + "[" * 5000 + "]" * 5000)
    with pytest.raises(DesignError):
        dfile.load(nested)


def test_loading_a_damaged_file_leaves_it_untouched(tmp_path: Path):
    path = tmp_path / "d.toml"
    damaged = _good_text().replace("bits = 8", "bits = 800", 1)
    path.write_text(damaged)
    before = (path.read_bytes(), os.stat(path).st_mtime_ns)
    with pytest.raises(DesignError):
        dfile.load(path)
    assert (path.read_bytes(), os.stat(path).st_mtime_ns) == before
    assert sorted(p.name for p in tmp_path.iterdir()) == ["d.toml"]


# --- whole files only ------------------------------------------------------------------------
def _written(tmp_path: Path) -> Path:
    """A saved three-candidate file with settings, parts and non-ASCII text (µ, Ω, °)."""
    cands = [*demo_candidates()[:2], demo_candidates()[0].replace(
        name="Ladder 4µ7 Ω ° trimmed", parts={"leg0": 20.1e3}, mismatch={"tolerance": 0.001})]
    path = tmp_path / "three.toml"
    dfile.save(path, dfile.DesignFile(cands, settings={"view": "inl", "note": "ε ≤ ½ LSB"}))
    return path


def test_every_cut_short_copy_is_refused_as_incomplete(tmp_path: Path):
    path = _written(tmp_path)
    data = path.read_bytes()
    whole = dfile.load(path)
    cut = tmp_path / "cut short.toml"
    loaded, unclear, changed = [], [], []
    for n in range(len(data) + 1):
        cut.write_bytes(data[:n])
        try:
            doc = dfile.load(cut)
        except DesignError as exc:
            if str(cut) not in str(exc) or "incomplete" not in str(exc):
                unclear.append((n, str(exc)))
            if cut.read_bytes() != data[:n]:
                changed.append(n)
            continue
        assert doc == whole
        loaded.append(n)
    # only the whole file, or the whole file less its trailing newline, loads
    assert loaded == [len(data.rstrip()), len(data)]
    assert unclear == []
    assert changed == []
    assert sorted(p.name for p in tmp_path.iterdir()) == ["cut short.toml", "three.toml"]


def test_a_changed_byte_is_refused_as_damaged(tmp_path: Path):
    text = _written(tmp_path).read_text(encoding="utf-8")
    for old, new in [("bits = 8", "bits = 9"), ("seed = 1", "seed = 2")]:
        with pytest.raises(DesignError, match=r"x\.toml does not match the checksum.*not opened"):
            dfile.loads(text.replace(old, new, 1), source="x.toml")
    with pytest.raises(DesignError, match="counts 2 candidates, the file holds 3"):
        dfile.loads(text.replace("candidates = 3", "candidates = 2"), source="x.toml")
    # the same file with Windows line ends, or a byte-order mark, is the same file
    assert dfile.loads(text.replace("\n", "\r\n")) == dfile.loads("\ufeff" + text) == dfile.loads(text)


@pytest.mark.parametrize("version", [2, dfile.SCHEMA_VERSION])
def test_minimal_hand_written_file_loads_with_defaults(version):
    text = f'format = "rungwise-design"\nversion = {version}\n[[candidate]]\ntopology = "string"\nbits = 5\n'
    doc = dfile.loads(text)
    assert doc.candidates == [Design(topology="string", bits=5)]
    assert doc.analysis == AnalysisSettings()
    assert doc.targets == Targets()
    # a written file edited by hand (its sealed line deleted) loads with the edit
    edited = _hand_edited(dfile.dumps(doc)).replace("bits = 5", "bits = 6")
    assert dfile.loads(edited).candidates == [Design(topology="string", bits=6)]


# --- atomic writes ---------------------------------------------------------------------------
@pytest.mark.parametrize("where", ["write", "replace"])
def test_interrupted_save_keeps_the_previous_file(tmp_path: Path, monkeypatch, where):
    path = tmp_path / "keep.toml"
    dfile.save(path, dfile.DesignFile(demo_candidates()))
    before = path.read_bytes()

    def boom(*args, **kwargs):
        raise OSError("disk full (simulated)")

    if where == "replace":
        monkeypatch.setattr(os, "replace", boom)
    else:
        monkeypatch.setattr(os, "fsync", boom)
    changed = dfile.DesignFile([demo_candidates()[0].replace(bits=12)])
    with pytest.raises(OSError, match="simulated"):
        dfile.save(path, changed)
    assert path.read_bytes() == before
    assert [p.name for p in tmp_path.iterdir()] == ["keep.toml"]


def test_unwritable_design_refused_before_touching_the_file(tmp_path: Path):
    path = tmp_path / "keep.toml"
    path.write_text("previous")
    with pytest.raises(DesignError, match="at least one candidate"):
        dfile.save(path, dfile.DesignFile([]))
    assert path.read_text() == "previous"
    assert [p.name for p in tmp_path.iterdir()] == ["keep.toml"]


def test_statistics_and_parts_keys_round_trip():
    d = demo_candidates()[0].replace(
        series="E96", load_c=22e-12, temperature_c=55.0, bandwidth=20e3,
        mismatch={"distribution": "uniform", "tolerance": 0.001},
        build={"two_r": "two-units"})
    doc = dfile.DesignFile([d, demo_candidates()[1].replace(build={"binary": "unit-array"})])
    text = dfile.dumps(doc)
    assert "[candidate.mismatch]" in text
    assert dfile.loads(text) == doc


def test_bad_mismatch_value_is_named_by_its_path():
    text = _hand_edited(dfile.dumps(dfile.DesignFile([demo_candidates()[0].replace(
        mismatch={"tolerance": 0.01})])))
    with pytest.raises(DesignError) as info:
        dfile.loads(text.replace("tolerance = 0.01", "tolerance = 7.0"))
    assert info.value.field.startswith("candidate[0].mismatch")
