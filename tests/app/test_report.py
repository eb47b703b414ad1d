"""The design-review PDF, read back with pdftotext (poppler-utils), numbers against the engine's."""

from __future__ import annotations

import os
import shutil
import subprocess
import sys
import unicodedata
from pathlib import Path

import pytest

from rungwise.app.cli.main import run_cli
from rungwise.core import designfile, evaluate
from rungwise.core.demo import demo_candidates
from rungwise.core.designfile import DesignFile
from rungwise.core.parts.bom import bill_of_materials
from rungwise.core.review import DEFER, recommend
from rungwise.core.targets import AnalysisSettings, Targets

pytestmark = pytest.mark.skipif(shutil.which("pdftotext") is None and os.environ.get("CI") != "true",
                                reason="pdftotext (poppler-utils) not installed; .ci/setup installs it")


def _pdf_text(path: Path) -> str:
    out = subprocess.run(["pdftotext", str(path), "-"], capture_output=True, text=True, check=True)
    return " ".join(unicodedata.normalize("NFKC", out.stdout).split())


def _design(tmp_path: Path, targets: Targets = Targets()) -> tuple[Path, DesignFile]:  # noqa: B008
    doc = DesignFile([d.replace(bits=5) for d in demo_candidates()],
                     analysis=AnalysisSettings(trials=300, seed=4242), targets=targets)
    path = tmp_path / "pick.toml"
    designfile.save(path, doc)
    return path, doc


def test_report_text_matches_the_engine(tmp_path: Path, qapp, capsys):
    path, doc = _design(tmp_path)
    pdf = tmp_path / "review.pdf"
    assert run_cli(["report", str(path), "-o", str(pdf)]) == 0
    text = _pdf_text(pdf)
    evs = [evaluate(d) for d in doc.candidates]
    for ev in evs:
        for key in ("max_abs_inl_endpoint", "max_abs_dnl", "lsb", "iref_max"):
            assert f"{ev.summary[key]:.6g}" in text, key
        worst = max(ev.parts, key=lambda p: p["power_max"])
        assert worst["id"] in text
        for line in bill_of_materials(ev):
            assert line.designators in text
    from rungwise.core.montecarlo import monte_carlo

    yields = []
    for d in doc.candidates:
        mc = monte_carlo(d, 300, 4242, targets=doc.targets)
        yields.append(float(mc.yield_all))
        assert mc.yield_all.text() in text
    assert "seed 4242" in text
    rec = recommend(evs, doc.targets, yields)
    assert " ".join(rec.text.split()) in text
    assert rec.text.startswith(f"Recommended: {evs[rec.chosen].design.label}")
    assert " ".join(DEFER.split()) in text
    for heading in ("Design and assumptions", "Comparison", "Plots", "Statistics and yield",
                    "Parts and ratings", "Cautions", "Method and sources"):
        assert heading in text
    err = capsys.readouterr().err
    assert rec.text.split(" — ")[0] in err
    # progress of the statistics on stderr, ending at every board of each candidate
    for i, d in enumerate(doc.candidates):
        assert (f"statistics of {d.label} ({i + 1} of {len(doc.candidates)}): 300 of 300 boards"
                in err)


def _images(pdf: Path) -> list[list[str]]:
    listing = subprocess.run(["pdfimages", "-list", str(pdf)], capture_output=True, text=True,
                             check=True).stdout.splitlines()[2:]
    return [ln.split() for ln in listing if ln.split()[2] == "image"]


@pytest.mark.parametrize(("stats", "plots"), [(False, 4), (True, 5)])
def test_report_embeds_each_plot_once(tmp_path: Path, qapp, stats, plots):
    if shutil.which("pdfimages") is None:
        pytest.skip("pdfimages (poppler-utils) not installed")
    path, _ = _design(tmp_path)
    pdf = tmp_path / "review.pdf"
    assert run_cli(["report", str(path), "-o", str(pdf), *([] if stats else ["--no-stats"])]) == 0
    images = _images(pdf)
    # four comparison plots (+ the INL spread with statistics), each drawn once: a plot cut by a
    # page break would be listed twice
    assert len(images) == plots
    assert len({img[10] for img in images}) == plots
    text = _pdf_text(pdf)
    assert ("Statistics were not computed" in text) is not stats


def test_report_says_plainly_when_no_candidate_meets(tmp_path: Path, qapp):
    path, doc = _design(tmp_path, Targets(max_inl_lsb=1e-4, max_dnl_lsb=1e-4))
    pdf = tmp_path / "review.pdf"
    assert run_cli(["report", str(path), "-o", str(pdf), "--no-stats"]) == 0
    text = _pdf_text(pdf)
    assert "No candidate meets the targets (max |INL| ≤ 0.0001 LSB (endpoint)" in text
    ev = evaluate(doc.candidates[1])
    assert f"max |INL| (endpoint) {ev.summary['max_abs_inl_endpoint']:.3g} LSB > 0.0001" in text


def test_report_bad_output_name_exits_2(tmp_path: Path, capsys):
    assert run_cli(["report", "-o", str(tmp_path / "r.txt")]) == 2
    assert ".pdf" in capsys.readouterr().err
    assert list(tmp_path.iterdir()) == []


def test_report_with_no_display_in_a_fresh_process(tmp_path: Path):
    env = {k: v for k, v in os.environ.items()
           if k not in {"DISPLAY", "WAYLAND_DISPLAY", "QT_QPA_PLATFORM"}}
    pdf = tmp_path / "r.pdf"
    out = subprocess.run([sys.executable, "-m", "rungwise.app", "report", "--set", "bits=4",
                          "--no-stats", "-o", str(pdf)], capture_output=True, text=True, env=env,
                         timeout=120)
    assert out.returncode == 0, out.stderr
    assert pdf.read_bytes().startswith(b"%PDF")
    assert "Traceback" not in out.stderr
