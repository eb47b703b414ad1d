"""The search's words and rows (report, command line and window read them)."""

from __future__ import annotations

from rungwise.core import Design
from rungwise.core.cost import CostTable
from rungwise.core.designfile import DesignFile
from rungwise.core.search_question import SearchQuestion
from rungwise.core.search_report import TABLE_HEAD, file_search, search_summary
from rungwise.core.space_search import InlineExecutor


def _doc() -> DesignFile:
    q = SearchQuestion(networks=(("r2r-voltage", "unbuffered"), ("binary-weighted", "divider")),
                       series=("exact",), grades=(0.01, 0.002), criterion="monotonic", trials=800,
                       max_iref=1e-3)
    return DesignFile([Design(bits=6)], search=q)


def test_file_search_and_summary() -> None:
    seen = []
    result = file_search(_doc(), InlineExecutor(), progress=seen.append)
    assert result is not None
    assert seen[-1] == 1.0
    s = search_summary(result)
    assert "cheapest 6-bit design" in s.question[0]
    assert "largest reference current ≤ 1 mA" in " ".join(s.question)
    assert "invented example prices" in s.question[-1]
    assert all(len(r) == len(TABLE_HEAD) for r in s.rows)
    assert s.answer.startswith("Cheapest design that meets every target")
    assert s.cost_lines[-1].startswith(f"total {result.answer.cost:.4g}")
    assert "invented example prices" in s.cost_lines[-1]
    assert len(s.why_lost) == 1
    assert s.rows[0][1] == f"{result.decided[0].cost:.4g}"


def test_no_search_table_no_result() -> None:
    assert file_search(DesignFile([Design()])) is None
    assert CostTable().source in search_summary(file_search(_doc(), InlineExecutor())).prices


def test_answer_lines_for_the_report():
    import threading

    from rungwise.core.search_report import answer_lines

    lines = answer_lines(_doc(), executor=InlineExecutor())
    assert lines[0].startswith("Question: Which is the cheapest 6-bit design")
    assert any(line.startswith("Answer: Cheapest design that meets every target") for line in lines)
    assert any("invented example prices" in line for line in lines)
    assert lines[-1].startswith("Method: nominal figures prune first")
    assert answer_lines(DesignFile([Design()])) == []
    stop = threading.Event()
    stop.set()
    assert answer_lines(_doc(), cancel=stop, executor=InlineExecutor()) == []
