"""Progress of long commands on stderr: shown on a terminal, quiet when redirected."""

from __future__ import annotations

import io
from contextlib import redirect_stderr, redirect_stdout

from rungwise.app.cli.main import run_cli
from rungwise.app.cli.progress import StderrProgress


class _Terminal(io.StringIO):
    def isatty(self) -> bool:
        return True


def _run(argv: list[str], err: io.StringIO) -> str:
    out = io.StringIO()
    with redirect_stderr(err), redirect_stdout(out):
        assert run_cli(argv) == 0
    return err.getvalue()


def test_a_terminal_sees_one_line_rewritten_and_cleared():
    term = _Terminal()
    with StderrProgress(term) as progress:
        progress("sweep: 1 of 3 points")
        progress("sweep: 2 of 3 points")
        assert term.getvalue().endswith("\rrungwise: sweep: 2 of 3 points")
    assert term.getvalue().endswith("\r" + " " * len("rungwise: sweep: 2 of 3 points") + "\r")


def test_redirected_stderr_gets_nothing():
    pipe = io.StringIO()
    with StderrProgress(pipe) as progress:
        progress("statistics of A (1 of 1): 10 of 100 boards")
    assert pipe.getvalue() == ""


def test_compute_with_trials_and_sweep_report_progress_only_on_a_terminal():
    argv = ["compute", "--set", "bits=6", "--trials", "300", "--seed", "2"]
    shown = _run(argv, _Terminal())
    assert "statistics of " in shown
    assert "(1 of " in shown
    assert "300 of 300 boards" in shown
    assert "boards" not in _run(argv, io.StringIO())
    sweep = ["sweep", "--topology", "r2r-voltage", "--from", "2", "--to", "4"]
    assert "sweep: 3 of 3 points" in _run(sweep, _Terminal())
    assert "points" not in _run(sweep, io.StringIO())


def test_search_reports_progress_only_on_a_terminal():
    argv = ["search", "--set", "bits=5", "--set", "ron_high=0", "--set", "ron_low=0",
            "--topology", "r2r-voltage", "--series", "exact", "--grades", "1%", "--trials", "200",
            "--workers", "1"]
    shown = _run(argv, _Terminal())
    assert "search: " in shown
    assert "designs judged" in shown
    assert "judged" not in _run(argv, io.StringIO())
