"""Every export read back by an independent reader, numbers compared with the engine's."""

from __future__ import annotations

import csv
import io
import math
import xml.etree.ElementTree as ET
from html.parser import HTMLParser
from pathlib import Path

import numpy as np
import pytest

from rungwise.app.export import tables as export_table
from rungwise.app.plots.specs import comparison_plots, nice_ticks
from rungwise.core import evaluate
from rungwise.core.demo import demo_candidates
from rungwise.core.formatting import DIGITS, NO_VALUE
from rungwise.core.units import parse_value


@pytest.fixture(scope="module")
def evs():
    designs = [d.replace(bits=6) for d in demo_candidates()]
    return [evaluate(d) for d in designs]


def _engine_value(ev, key):
    v = ev.summary[key]
    return float(v) if not isinstance(v, bool) else v


def test_csv_table_has_the_engines_numbers_exactly(evs, tmp_path: Path):
    path = tmp_path / "t.csv"
    assert export_table.write_table(path, evs) == "csv"
    rows = list(csv.reader(io.StringIO(path.read_text(encoding="utf-8"))))
    assert rows[0] == ["key", "label", "unit", *[e.design.label for e in evs]]
    by_key = {r[0]: r for r in rows[1:]}
    assert set(by_key) == set(evs[0].summary)
    for key, row in by_key.items():
        for ev, cell in zip(evs, row[3:], strict=True):
            want = ev.summary[key]
            if isinstance(want, bool):
                assert cell == ("yes" if want else "no")
            elif isinstance(want, float) and math.isnan(want):  # a figure with no meaning
                assert cell == "", key
            else:
                assert float(cell) == float(want), key


def test_xlsx_read_back_with_openpyxl(evs, tmp_path: Path):
    from openpyxl import load_workbook

    path = tmp_path / "t.xlsx"
    export_table.write_table(path, evs)
    wb = load_workbook(path, read_only=True)
    assert wb.sheetnames[:2] == ["Comparison", "Design"]
    comp = list(wb["Comparison"].iter_rows(values_only=True))
    # XLSX numbers keep 16 significant digits (openpyxl), so allow a last-digit difference
    for row in comp[1:]:
        for ev, cell in zip(evs, row[3:], strict=True):
            want = ev.summary[row[0]]
            if isinstance(want, float) and math.isnan(want):  # a figure with no meaning: empty
                assert cell is None, row[0]
                continue
            assert cell == pytest.approx(want, rel=1e-15, abs=0), row[0]
    for ev, name in zip(evs, wb.sheetnames[2:], strict=True):
        rows = list(wb[name].iter_rows(values_only=True))
        assert [r[0] for r in rows[1:]] == ev.codes.tolist()
        assert np.allclose([r[1] for r in rows[1:]], ev.vout, rtol=1e-15, atol=0)
        assert np.allclose([r[6] for r in rows[1:-1]], ev.dnl, rtol=1e-15, atol=1e-15)
        assert rows[-1][6] is None  # no step after the last code
    design = {r[0]: r[1:] for r in wb["Design"].iter_rows(values_only=True)}
    assert design["unit_r"] == tuple(e.design.unit_r for e in evs)
    wb.close()


class _TableCells(HTMLParser):
    def __init__(self) -> None:
        super().__init__()
        self.rows: list[list[str]] = []
        self.keys: list[str | None] = []
        self._cell: list[str] | None = None

    def handle_starttag(self, tag, attrs):
        if tag == "tr":
            self.rows.append([])
            self.keys.append(dict(attrs).get("data-key"))
        elif tag in {"td", "th"}:
            self._cell = []

    def handle_endtag(self, tag):
        if tag in {"td", "th"} and self._cell is not None:
            self.rows[-1].append("".join(self._cell))
            self._cell = None

    def handle_data(self, data):
        if self._cell is not None:
            self._cell.append(data)


def _read_back(cell: str, unit: str) -> float:
    """A figure as the one formatter writes it (prefix, % for fractions, × after), as a number."""
    if cell == NO_VALUE:
        return math.nan
    text = cell.removesuffix("×").strip()
    if unit not in ("fraction", "×"):
        text = text.removesuffix(unit).strip()
    return parse_value(text)


def _check_text_cells(evs, keys, rows):
    seen = 0
    units = {r.key: r.unit for r in export_table.comparison_rows(evs)}
    for key, row in zip(keys, rows, strict=True):
        for ev, cell in zip(evs, row[2:], strict=True):
            want = ev.summary[key]
            if isinstance(want, bool):
                assert cell == ("yes" if want else "no")
            elif math.isnan(float(want)):
                assert cell == NO_VALUE, key
            else:  # DIGITS significant digits: within half a unit in the last place
                got = _read_back(cell, units[key])
                assert got == pytest.approx(float(want), rel=5 * 10.0 ** -DIGITS, abs=1e-300), key
            seen += 1
    assert seen == len(evs) * len(evs[0].summary)


def test_html_table_read_back_with_html_parser(evs, tmp_path: Path):
    path = tmp_path / "t.html"
    export_table.write_table(path, evs)
    parser = _TableCells()
    parser.feed(path.read_text(encoding="utf-8"))
    assert parser.rows[0] == ["Figure", "Unit", *[e.design.label for e in evs]]
    _check_text_cells(evs, parser.keys[1:], parser.rows[1:])


def test_markdown_table_read_back(evs, tmp_path: Path):
    path = tmp_path / "t.md"
    export_table.write_table(path, evs)
    lines = path.read_text(encoding="utf-8").splitlines()
    rows = [[c.strip().replace("\\|", "|") for c in ln.strip("|").split(" | ")] for ln in lines]
    assert rows[0] == ["Figure", "Unit", *[e.design.label for e in evs]]
    keys = [r.key for r in export_table.comparison_rows(evs)]
    assert [r[0] for r in rows[2:]] == [r.label for r in export_table.comparison_rows(evs)]
    _check_text_cells(evs, keys, rows[2:])


def test_per_code_csv_matches_arrays(evs):
    rows = list(csv.DictReader(io.StringIO(export_table.per_code_csv(evs))))
    assert len(rows) == sum(e.codes.size for e in evs)
    for ev in evs:
        mine = [r for r in rows if r["candidate"] == ev.design.label]
        assert np.array_equal([float(r["vout (V)"]) for r in mine], ev.vout)
        assert np.array_equal([float(r["inl_endpoint (LSB)"]) for r in mine], ev.inl_endpoint)
        assert np.array_equal([float(r["dnl (LSB)"]) for r in mine[:-1]], ev.dnl)
        assert mine[-1]["dnl (LSB)"] == ""


def test_unknown_table_format_refused(evs, tmp_path: Path):
    with pytest.raises(ValueError, match="unknown table format"):
        export_table.write_table(tmp_path / "t.doc", evs)
    assert list(tmp_path.iterdir()) == []


def test_nice_ticks_are_round_and_inside():
    assert nice_ticks(0, 63).tolist() == [0, 20, 40, 60]
    t = nice_ticks(-0.0489, 0.019)
    assert np.allclose(t, [-0.04, -0.02, 0.0])  # span 0.068 / 5 → step 0.02


# --- plots (Qt, offscreen) -------------------------------------------------------------------
def _points(el) -> np.ndarray:
    return np.array([[float(v) for v in p.split(",")] for p in el.get("points").split()])


def test_svg_curves_follow_the_engines_values(evs, tmp_path: Path, qapp):
    from rungwise.app.plots.export import export_plots
    from rungwise.app.plots.paint import PALETTE

    written = export_plots(evs, tmp_path, ["svg"])
    assert sorted(p.name for p in written) == ["dnl.svg", "inl.svg", "rout.svg", "transfer.svg"]
    root = ET.parse(tmp_path / "transfer.svg").getroot()  # independent XML parser
    ns = {"s": "http://www.w3.org/2000/svg"}
    assert root.find("s:title", ns).text == "Output voltage against code"
    for i, ev in enumerate(evs):
        groups = [g for g in root.iter("{http://www.w3.org/2000/svg}g")
                  if g.get("stroke", "").lower() == PALETTE[i]]
        lines = [_points(p) for g in groups for p in g.findall("s:polyline", ns)]
        curve = max(lines, key=len)
        assert len(curve) == ev.codes.size
        # screen x is affine in the code, screen y affine in Vout (y grows downwards)
        for col, want in ((0, ev.codes.astype(float)), (1, ev.vout)):
            a, b = np.polyfit(want, curve[:, col], 1)
            assert np.allclose(a * want + b, curve[:, col], atol=0.02)
        assert np.polyfit(ev.vout, curve[:, 1], 1)[0] < 0


def test_png_plots_are_images_of_the_right_size(evs, tmp_path: Path, qapp):
    from PySide6.QtGui import QImage

    from rungwise.app.plots.export import export_plots

    export_plots(evs, tmp_path, ["png"])
    for spec in comparison_plots(evs):
        img = QImage(str(tmp_path / f"{spec.name}.png"))
        assert (img.width(), img.height()) == (1200, 800)
        colours = {img.pixel(x, y) for x in range(0, 1200, 7) for y in range(0, 800, 7)}
        assert len(colours) > 5  # not blank


def test_nonfinite_points_break_the_line(qapp, tmp_path: Path):
    from rungwise.app.plots.paint import PALETTE, save_svg
    from rungwise.app.plots.specs import PlotSpec, Series

    y = np.array([0.0, 1.0, math.inf, 3.0, 4.0, math.nan, 6.0])
    spec = PlotSpec("t", "gap", "code", "y", (Series("a", np.arange(7.0), y),))
    save_svg(spec, tmp_path / "t.svg")
    root = ET.parse(tmp_path / "t.svg").getroot()
    ns = "{http://www.w3.org/2000/svg}"
    mine = [_points(p) for g in root.iter(f"{ns}g") if g.get("stroke", "").lower() == PALETTE[0]
            for p in g.findall(f"{ns}polyline")]
    # codes 0–1 and 3–4 (the lone finite point 6 draws nothing), plus the legend's sample line
    assert sorted(len(p) for p in mine) == [2, 2, 2]
