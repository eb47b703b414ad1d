"""The window's file features: undo/redo, modified flag, recent files, crash copies, exports."""

from __future__ import annotations

import csv
import io
import shutil
import subprocess
import sys
from pathlib import Path

import pytest
from PySide6.QtCore import Qt
from PySide6.QtWidgets import QLineEdit, QMessageBox, QSpinBox

from rungwise.core import designfile, evaluate
from rungwise.core.demo import demo_candidates
from rungwise.core.designfile import DesignFile
from rungwise.core.targets import AnalysisSettings, Targets


@pytest.fixture
def win(qtbot, private_config):
    """A remembering window (its folders are the test's private configuration folder)."""
    from rungwise.app.window.main_window import MainWindow

    w = MainWindow(remember=True)
    w.ask_before_closing = False
    qtbot.addWidget(w)
    w.show()
    qtbot.waitUntil(lambda: w.live.latest is not None and not w.live.is_busy(), timeout=60000)
    yield w
    w.close()


def _bits(w) -> int:
    return w.model.state.current.design.bits


def test_typing_a_value_is_one_undo_step(win, qtbot):
    spin = win.findChild(QSpinBox, "spin_bits")
    spin.setFocus()
    spin.selectAll()
    qtbot.keyClicks(spin, "10")  # two keystrokes …
    qtbot.keyClick(spin, Qt.Key.Key_Return)  # … one finished edit
    qtbot.waitUntil(lambda: _bits(win) == 10)
    assert win.files.history.stack.count() == 1
    assert win.model.modified
    win.files.action_undo.trigger()
    assert _bits(win) == 8
    assert spin.value() == 8  # the pane follows the undone state
    assert not win.model.modified  # back to what was opened
    win.files.action_redo.trigger()
    assert _bits(win) == 10
    assert win.model.modified


def test_undo_covers_candidate_edits_and_selection(win):
    state = win.model.state
    names = [c.name for c in state.candidates]
    state.add()
    state.remove(0)
    assert win.files.history.stack.count() == 2
    win.files.history.undo()
    win.files.history.undo()
    assert [c.name for c in state.candidates] == names
    assert state.selected == 0


def test_save_marks_clean_and_keeps_targets(win, tmp_path: Path):
    path = tmp_path / "mine.toml"
    doc = DesignFile(demo_candidates(), analysis=AnalysisSettings(trials=77, seed=5),
                     targets=Targets(max_inl_lsb=0.25, monotonic=False))
    designfile.save(path, doc)
    assert win.open_file(path)
    assert win.files.history.stack.count() == 0  # opening starts the history afresh
    state = win.model.state
    state.set_design(0, state.designs[0].replace(bits=9), "9 bits")
    assert win.save_to(path)
    assert not win.model.modified
    back = designfile.load(path)
    assert back.analysis == doc.analysis
    assert back.targets == doc.targets
    assert back.candidates[0].bits == 9
    win.files.history.undo()
    assert win.model.modified  # undone past the save
    win.files.history.redo()
    assert not win.model.modified
    assert win.files.recent.files() == [path.resolve()]


def test_recent_menu_lists_opened_files_and_forgets_broken_ones(win, tmp_path: Path):
    good, bad = tmp_path / "good.toml", tmp_path / "bad.toml"
    designfile.save(good, DesignFile(demo_candidates()))
    designfile.save(bad, DesignFile(demo_candidates()))
    win.open_file(bad)
    win.open_file(good)
    bad.write_text("version = [")
    win.files._fill_recent()
    assert [a.text() for a in win.files.recent_menu.actions()] == ["good.toml", "bad.toml"]
    assert not win.open_file(bad)
    assert win.files.recent.files() == [good.resolve()]


def _dead_pid() -> int:
    proc = subprocess.Popen([sys.executable, "-c", "pass"])
    proc.wait()
    return proc.pid


def test_crash_copy_is_written_and_restored(win, qtbot, private_config):
    state = win.model.state
    state.set_design(0, state.designs[0].replace(unit_r=4.7e3), "unit R")
    copy = win.files.autosave.path
    qtbot.waitUntil(copy.exists, timeout=60000)  # written shortly after the edit
    crashed = copy.with_name(f"autosave-{_dead_pid()}.toml")
    shutil.copy(copy, crashed)  # as if that program had died
    designs = state.designs

    from rungwise.app.window.main_window import MainWindow

    other = MainWindow(remember=True)
    other.ask_before_closing = False
    qtbot.addWidget(other)
    found = other.files.orphans()
    assert [f.copy for f in found] == [crashed]
    other.files.recover(found[0])
    assert other.model.state.designs == designs
    assert other.model.modified
    assert not crashed.exists()
    other.files.history.undo()  # nothing to undo, and still not clean
    assert other.model.modified
    other.close()


def test_close_asks_about_unsaved_work_and_removes_the_copy(win, qtbot, monkeypatch):
    state = win.model.state
    state.set_design(0, state.designs[0].replace(bits=7), "7 bits")
    win.files.write_crash_copy()
    assert win.files.autosave.path.exists()
    win.ask_before_closing = True
    asked = []

    def answer(parent, title, text, buttons):
        asked.append(text)
        return QMessageBox.StandardButton.Cancel if len(asked) == 1 else QMessageBox.StandardButton.Discard

    monkeypatch.setattr(QMessageBox, "question", answer)
    assert not win.close()  # cancelled: stays open
    assert win.isVisible()
    assert "Save the changes to this comparison in a file?" in asked[0]
    assert win.close()
    assert not win.files.autosave.path.exists()


def test_menu_exports_match_the_engine(win, tmp_path: Path, qtbot):
    from openpyxl import load_workbook

    assert win.files.export_table(tmp_path / "t.xlsx")
    evs = [evaluate(d) for d in win.model.state.designs]
    wb = load_workbook(tmp_path / "t.xlsx", read_only=True)
    rows = {r[0]: r for r in wb["Comparison"].iter_rows(values_only=True)}
    assert rows["max_abs_dnl"][3:] == pytest.approx([e.summary["max_abs_dnl"] for e in evs], rel=1e-15)
    wb.close()
    assert win.files.export_per_code(tmp_path / "c.csv")
    per = list(csv.DictReader(io.StringIO((tmp_path / "c.csv").read_text(encoding="utf-8"))))
    assert len(per) == sum(e.codes.size for e in evs)
    assert win.files.export_bom(tmp_path / "bom.csv")
    assert (tmp_path / "bom.csv").read_text(encoding="utf-8").startswith("candidate,designators")
    assert win.files.export_plots(tmp_path / "plots")
    assert len(list((tmp_path / "plots").iterdir())) == 8
    with qtbot.waitSignal(win.files.report_written, timeout=30000) as sig:
        win.files.write_report(tmp_path / "r.pdf", with_stats=True)  # statistics off the GUI thread
    assert sig.args == [tmp_path / "r.pdf"]
    assert (tmp_path / "r.pdf").read_bytes().startswith(b"%PDF")
    assert not win.files.export_table(tmp_path / "missing" / "t.csv")  # shown, not raised
    for name in ("action_export_table", "action_export_per_code", "action_export_bom",
                 "action_export_plots",
                 "action_report", "action_undo", "action_redo"):
        assert win.findChild(type(win.files.action_undo), name) is not None, name


def test_exports_and_report_reuse_the_live_results(win, tmp_path: Path, qtbot, monkeypatch):
    import rungwise.app.export.report_content as content
    import rungwise.app.window.files as files

    def refused(design):
        raise AssertionError(f"evaluated again: {design.label}")

    monkeypatch.setattr(files, "evaluate", refused)  # the live results hold every candidate
    monkeypatch.setattr(content, "evaluate", refused)
    assert win.files.export_table(tmp_path / "t.csv")
    held = [win.live.evaluation_of(d) for d in win.model.state.designs]
    assert all(ev is not None for ev in held)
    assert win.files._evaluations() == held
    with qtbot.waitSignal(win.files.report_written, timeout=30000):
        win.files.write_report(tmp_path / "r.pdf", with_stats=False)


def test_statistics_seed_and_trials_go_to_and_from_the_file(win, tmp_path: Path):
    path = tmp_path / "seeded.toml"
    designfile.save(path, DesignFile(demo_candidates(), settings={"note": "kept"},
                                     analysis=AnalysisSettings(trials=300, seed=4711)))
    win.open_file(path)
    trials = win.findChild(QSpinBox, "spin_stats_trials")
    seed = win.findChild(QLineEdit, "edit_stats_seed")
    assert (trials.value(), seed.text()) == (300, "4711")
    seed.setText("99")
    assert win.save_to(path)
    back = designfile.load(path)
    assert back.analysis == AnalysisSettings(trials=300, seed=99)
    assert back.settings["note"] == "kept"


def test_closing_stops_a_report_in_progress(win, tmp_path: Path):
    state = win.model.state
    for i, d in enumerate(state.designs):
        state.set_design(i, d.replace(bits=12), "12 bits")
    win.files.write_report(tmp_path / "r.pdf", with_stats=True)
    assert win.files.runner.is_busy("report")
    assert win.close()
    assert win.files.runner.active_count() == 0
    assert not (tmp_path / "r.pdf").exists()
