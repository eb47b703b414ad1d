"""Exports of the comparison without Qt: the summary table as CSV, Markdown, HTML or XLSX, and
the per-code values as CSV.

The table has one row per summary figure with its key, label and SI unit, and one column per
candidate. CSV and XLSX hold the engine's numbers at full precision; Markdown and HTML are for people and
show each figure as the window does (:func:`rungwise.core.formatting.format_quantity`).
"""

from __future__ import annotations

import csv
import html
import io
import math
import re
from collections.abc import Sequence
from dataclasses import dataclass
from pathlib import Path
from typing import Any, Literal, get_args

import numpy as np

from rungwise.core import SUMMARY_KEYS, Evaluation
from rungwise.core.atomic import write_atomically
from rungwise.core.formatting import display_unit, format_quantity, yes_no

TableFormat = Literal["csv", "md", "html", "xlsx"]
"""Table export formats, named by file extension."""

TABLE_FORMATS: tuple[str, ...] = get_args(TableFormat)

PER_CODE_COLUMNS = ("vout", "rout", "iref", "inl_endpoint", "inl_bestfit", "dnl")
"""Per-code arrays exported, in column order (``dnl`` is empty at the last code)."""

PER_CODE_UNITS = {"vout": "V", "rout": "Ω", "iref": "A", "inl_endpoint": "LSB",
                  "inl_bestfit": "LSB", "dnl": "LSB"}


@dataclass(frozen=True)
class TableRow:
    """One summary figure across the candidates."""

    key: str
    label: str
    unit: str
    values: list[Any]


def comparison_rows(evs: Sequence[Evaluation]) -> list[TableRow]:
    """Rows of the comparison: every summary key any candidate has, in ``SUMMARY_KEYS`` order
    first, then the rest; a candidate without a figure gets ``None``."""
    keys: list[str] = [k for k in SUMMARY_KEYS if any(k in e.summary for e in evs)]
    for e in evs:
        keys += [k for k in e.summary if k not in keys]
    rows = []
    for key in keys:
        label, unit = SUMMARY_KEYS.get(key, (key, ""))
        rows.append(TableRow(key, label.strip(), unit, [_plain(e.summary.get(key)) for e in evs]))
    return rows


def _plain(x: Any) -> Any:
    if isinstance(x, np.generic):
        x = x.item()
    return x


def _data_text(x: Any) -> str:
    """A non-float cell of a data format (CSV, XLSX): yes/no, whole numbers, inf; empty for none."""
    if x is None:
        return ""
    if isinstance(x, bool):
        return yes_no(x)
    if isinstance(x, int):
        return str(x)
    if isinstance(x, float):
        if math.isnan(x):
            return ""
        if math.isinf(x):
            return "inf" if x > 0 else "-inf"
        return repr(x)
    return str(x)


def _csv_value(x: Any) -> str:
    if isinstance(x, float):
        return repr(x) if math.isfinite(x) else ("" if math.isnan(x) else _data_text(x))
    return _data_text(x)


def table_csv(evs: Sequence[Evaluation]) -> str:
    """CSV text: ``key,label,unit,<candidate>…`` then one row per figure (full precision)."""
    buf = io.StringIO()
    w = csv.writer(buf, lineterminator="\n")
    w.writerow(["key", "label", "unit", *[e.design.label for e in evs]])
    for r in comparison_rows(evs):
        w.writerow([r.key, r.label, r.unit, *[_csv_value(v) for v in r.values]])
    return buf.getvalue()


def _md_cell(text: str) -> str:
    return text.replace("|", "\\|").replace("\n", " ")


def table_markdown(evs: Sequence[Evaluation]) -> str:
    """A Markdown (pipe) table: figure, unit, one column per candidate."""
    head = ["Figure", "Unit", *[e.design.label for e in evs]]
    lines = ["| " + " | ".join(_md_cell(h) for h in head) + " |",
             "| " + " | ".join(["---", "---"] + ["---:"] * len(evs)) + " |"]
    for r in comparison_rows(evs):
        cells = [r.label, display_unit(r.unit), *[format_quantity(v, r.unit) for v in r.values]]
        lines.append("| " + " | ".join(_md_cell(c) for c in cells) + " |")
    return "\n".join(lines) + "\n"


def table_html_fragment(evs: Sequence[Evaluation]) -> str:
    """The comparison as an HTML ``<table>`` element (used by the HTML export and the report)."""
    esc = html.escape
    out = ['<table class="comparison" border="1" cellspacing="0" cellpadding="3">',
           "<thead><tr><th>Figure</th><th>Unit</th>"
           + "".join(f"<th>{esc(e.design.label)}</th>" for e in evs) + "</tr></thead>", "<tbody>"]
    for r in comparison_rows(evs):
        out.append(f'<tr data-key="{esc(r.key)}"><td>{esc(r.label)}</td><td>{esc(display_unit(r.unit))}</td>'
                   + "".join(f'<td align="right">{esc(format_quantity(v, r.unit))}</td>'
                             for v in r.values) + "</tr>")
    out.append("</tbody></table>")
    return "\n".join(out)


def table_html(evs: Sequence[Evaluation], title: str = "Comparison") -> str:
    """A complete HTML page holding the comparison table."""
    return ("<!DOCTYPE html>\n<html><head><meta charset=\"utf-8\">"
            f"<title>{html.escape(title)}</title></head><body>\n<h1>{html.escape(title)}</h1>\n"
            + table_html_fragment(evs) + "\n</body></html>\n")


def per_code_csv(evs: Sequence[Evaluation]) -> str:
    """CSV of every code of every candidate: ``candidate,code,vout,…`` (full precision)."""
    buf = io.StringIO()
    w = csv.writer(buf, lineterminator="\n")
    w.writerow(["candidate", "code", *[f"{n} ({PER_CODE_UNITS[n]})" for n in PER_CODE_COLUMNS]])
    for e in evs:
        pc = e.per_code()
        cols = [np.asarray(pc[n], dtype=float) for n in PER_CODE_COLUMNS]
        for i, code in enumerate(e.codes):
            w.writerow([e.design.label, int(code), *[_csv_value(float(c[i])) for c in cols]])
    return buf.getvalue()


def bom_csv(evs: Sequence[Evaluation]) -> str:
    """The bill of materials of every candidate as CSV (``core.parts.bom`` layout)."""
    from rungwise.core.parts.bom import bill_of_materials, to_csv

    return to_csv([(e.design.label, bill_of_materials(e)) for e in evs])


_SHEET_BAD = re.compile(r"[\[\]:*?/\\]")


def _sheet_title(label: str, used: set[str]) -> str:
    base = _SHEET_BAD.sub("_", label)[:28] or "candidate"
    title, n = base, 2
    while title.lower() in used:
        title, n = f"{base[:25]} ({n})", n + 1
    used.add(title.lower())
    return title


def _xlsx_value(x: Any) -> Any:
    if isinstance(x, float) and not math.isfinite(x):
        return None if math.isnan(x) else _data_text(x)
    return x


def write_xlsx(path: Path, evs: Sequence[Evaluation]) -> None:
    """An XLSX workbook: a ``Comparison`` sheet (numbers as numbers), a ``Design`` sheet of the
    inputs, and one sheet of per-code values per candidate."""
    from openpyxl import Workbook  # local: only this export needs it

    wb = Workbook()
    ws = wb.active
    ws.title = "Comparison"
    ws.append(["key", "label", "unit", *[e.design.label for e in evs]])
    for r in comparison_rows(evs):
        ws.append([r.key, r.label, r.unit, *[_xlsx_value(v) for v in r.values]])
    ds = wb.create_sheet("Design")
    inputs = [e.design.to_dict() for e in evs]
    ds.append(["key", *[e.design.label for e in evs]])
    for key in inputs[0]:
        if key == "parts":
            continue
        ds.append([key, *[_xlsx_value(_design_cell(d.get(key))) for d in inputs]])
    used = {"comparison", "design"}
    for e in evs:
        sh = wb.create_sheet(_sheet_title(e.design.label, used))
        sh.append(["code", *[f"{n} ({PER_CODE_UNITS[n]})" for n in PER_CODE_COLUMNS]])
        pc = e.per_code()
        data = np.column_stack([np.asarray(pc[n], dtype=float) for n in PER_CODE_COLUMNS])
        for code, row in zip(e.codes, data.tolist(), strict=True):
            sh.append([int(code), *[_xlsx_value(v) for v in row]])
    write_atomically(path, wb.save)


def _design_cell(x: Any) -> Any:
    if isinstance(x, dict | list | tuple):
        return str(x)
    return _plain(x)


def write_text(path: Path, text: str) -> None:
    """Write a text export atomically, UTF-8."""
    write_atomically(path, lambda tmp: Path(tmp).write_text(text, encoding="utf-8", newline=""))


def write_table(path: Path, evs: Sequence[Evaluation], fmt: str | None = None) -> str:
    """Write the comparison table in the format named by ``fmt`` or the file's extension.

    Returns the format used. Raises ``ValueError`` for an unknown format.
    """
    path = Path(path)
    fmt = (fmt or path.suffix.lstrip(".")).lower()
    fmt = {"markdown": "md", "htm": "html"}.get(fmt, fmt)
    if fmt not in TABLE_FORMATS:
        raise ValueError(f"unknown table format {fmt!r}; use one of " + ", ".join(TABLE_FORMATS))
    if fmt == "xlsx":
        write_xlsx(path, evs)
    else:
        render = {"csv": table_csv, "md": table_markdown, "html": table_html}[fmt]
        write_text(path, render(evs))
    return fmt
