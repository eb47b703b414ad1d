"""One formatter: a figure reads the same in the window's table, the command line, a text export
and the report, and follows the formatter's rules (prefixes, % for fractions, yes/no)."""

from __future__ import annotations

from pathlib import Path

import pytest

from rungwise.app.cli.main import run_cli
from rungwise.app.export import tables
from rungwise.app.export.report_blocks import Heading, Table
from rungwise.app.export.report_content import gather, report_blocks
from rungwise.app.window.compare_table import cell_text
from rungwise.core import SUMMARY_KEYS, designfile, evaluate
from rungwise.core.design import Design
from rungwise.core.designfile import DesignFile
from rungwise.core.formatting import format_percent, format_quantity, format_si, yes_no

DESIGN = Design(topology="r2r-voltage", bits=6, name="Only", load_c=1e-9)


@pytest.fixture(scope="module")
def ev():
    return evaluate(DESIGN)


def _keys(ev) -> list[str]:
    return [k for k in ev.summary if k in SUMMARY_KEYS and k not in ev.no_meaning]


def _cli_cells(tmp_path: Path, capsys) -> dict[str, str]:
    path = tmp_path / "one.toml"
    designfile.save(path, DesignFile([DESIGN]))
    capsys.readouterr()
    assert run_cli(["compute", str(path)]) == 0
    head, *lines = capsys.readouterr().out.split("\n\n")[0].splitlines()
    column = head.index(DESIGN.name)
    cells = [(line[:column].strip(), line[column:].strip()) for line in lines]
    labels = [label for label, _ in cells]
    return {label: cell for label, cell in cells if labels.count(label) == 1}


def _md_cells(ev) -> dict[str, str]:
    rows = tables.table_markdown([ev]).splitlines()[2:]
    keys = [r.key for r in tables.comparison_rows([ev])]
    return {k: row.strip("|").split(" | ")[-1].strip() for k, row in zip(keys, rows, strict=True)}


def _report_cells(ev) -> dict[str, str]:
    blocks = report_blocks(gather(DesignFile([DESIGN]), with_stats=False))
    start = next(i for i, b in enumerate(blocks) if isinstance(b, Heading) and "Comparison" in b.text)
    table = next(b for b in blocks[start:] if isinstance(b, Table))
    keys = [r.key for r in tables.comparison_rows([ev])]  # the report's rows, in this order
    return {k: row[-1] for k, row in zip(keys, table.rows, strict=True)}


def test_every_surface_shows_the_same_text(ev, tmp_path, capsys):
    cli = _cli_cells(tmp_path, capsys)
    md, report = _md_cells(ev), _report_cells(ev)
    keys = _keys(ev)
    assert len(cli) > 20
    assert {"lsb", "gain_error", "max_abs_inl_endpoint", "monotonic", "spread"} <= set(keys)
    for key in keys:
        label, unit = SUMMARY_KEYS[key]
        want = format_quantity(ev.summary[key], unit)
        assert cell_text(key, ev.summary[key]) == want, key
        if label.strip() in cli:  # a label used once ("  at code" rows are told apart by place)
            assert cli[label.strip()] == want, key
        assert md[key] == want, key
        assert report[key] == want, key


def test_the_rules():
    assert format_quantity(0.012890625, "V") == "12.89 mV"  # engineering prefix, four digits
    assert format_quantity(-0.09104, "fraction") == "-9.104 %"  # fractions in percent
    assert format_quantity(0.4321, "LSB") == "0.4321 LSB"  # no prefix on LSB
    assert format_quantity(9.5, "×") == "9.5×"
    assert format_quantity(255, "") == "255"
    assert format_quantity(True, "") == yes_no(True) == "yes"
    assert format_quantity(False, "") == "no"
    assert format_quantity(float("nan"), "V") == format_quantity(None, "V") == "—"
    assert format_quantity(float("inf"), "Ω") == "∞ Ω"
    assert format_quantity(4700.0, "Ω") == format_si(4700, "Ω") == "4.7 kΩ"
    assert format_percent(0.001) == "0.1 %"
    assert format_quantity(0.0123, "fraction", signed=True) == "+1.23 %"
