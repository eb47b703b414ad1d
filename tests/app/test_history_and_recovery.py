"""Undo/redo of finished edits, recent files and crash copies (pytest-qt for the undo stack)."""

from __future__ import annotations

import os
import subprocess
import sys
from pathlib import Path

import pytest

from rungwise.app.window.autosave import SOURCE_KEY, Autosave
from rungwise.app.window.recent_files import MAX_RECENT, RecentFiles
from rungwise.core.demo import demo_candidates
from rungwise.core.designfile import DesignFile


class _State:
    """A stand-in for the window's state: a list of designs changed only through ``apply``."""

    def __init__(self) -> None:
        self.designs = tuple(demo_candidates())
        self.applied: list[str] = []
        self.on_change = None

    def apply(self, designs, description: str) -> None:
        self.designs = tuple(designs)
        self.applied.append(description)
        if self.on_change:
            self.on_change(description)


@pytest.fixture
def history(qtbot):
    from rungwise.app.window.edit_history import EditHistory

    state = _State()
    hist = EditHistory(lambda: state.designs, state.apply)
    state.on_change = hist.record
    return state, hist


def test_one_step_per_finished_edit(history, qtbot):
    state, hist = history
    start = state.designs
    first = (state.designs[0].replace(bits=10), state.designs[1])
    state.apply(first, "resolution 10 bits")
    second = (first[0].replace(unit_r=4.7e3), first[1])
    state.apply(second, "unit R 4.7 kΩ")
    assert hist.stack.count() == 2
    assert hist.undo_text() == "unit R 4.7 kΩ"
    with qtbot.waitSignal(hist.changed):
        hist.undo()
    assert state.designs == first
    assert state.applied[-1] == "undo unit R 4.7 kΩ"
    hist.undo()
    assert state.designs == start
    assert not hist.can_undo()
    hist.redo()
    hist.redo()
    assert state.designs == second
    assert hist.stack.count() == 2  # undo and redo were not recorded as new steps
    assert not hist.can_redo()


def test_a_new_edit_after_undo_drops_the_redo_branch(history):
    state, hist = history
    state.apply((state.designs[0].replace(bits=6), state.designs[1]), "6 bits")
    hist.undo()
    state.apply((state.designs[0].replace(bits=7), state.designs[1]), "7 bits")
    assert not hist.can_redo()
    assert hist.undo_text() == "7 bits"
    assert state.designs[0].bits == 7


def test_unchanged_edit_is_not_a_step(history):
    state, hist = history
    state.apply(state.designs, "nothing")
    assert hist.stack.count() == 0


def test_clean_state_follows_the_last_save(history, qtbot):
    state, hist = history
    hist.mark_saved()
    with qtbot.waitSignal(hist.clean_changed) as sig:
        state.apply((state.designs[0].replace(bits=9), state.designs[1]), "9 bits")
    assert sig.args == [False]
    with qtbot.waitSignal(hist.clean_changed) as sig:
        hist.undo()
    assert sig.args == [True]
    hist.redo()
    hist.reset()
    assert hist.is_clean()
    assert not hist.can_undo()


# --- recent files ----------------------------------------------------------------------------
def test_recent_files_newest_first_unique_and_existing(tmp_path: Path):
    recent = RecentFiles(tmp_path / "cfg")
    files = []
    for i in range(MAX_RECENT + 2):
        f = tmp_path / f"d{i}.toml"
        f.write_text("x")
        files.append(f)
        recent.add(f)
    recent.add(files[3])
    listed = recent.files()
    assert listed[0] == files[3].resolve()
    assert len(listed) == MAX_RECENT
    assert len(set(listed)) == MAX_RECENT
    files[-1].unlink()
    assert files[-1].resolve() not in recent.files()
    recent.remove(files[3])
    assert files[3].resolve() not in recent.files()


def test_damaged_recent_list_is_empty(tmp_path: Path):
    (tmp_path / "recent.json").write_text("{not json")
    recent = RecentFiles(tmp_path)
    assert recent.files() == []
    f = tmp_path / "a.toml"
    f.write_text("x")
    recent.add(f)
    assert recent.files() == [f.resolve()]


# --- crash copies ----------------------------------------------------------------------------
def _dead_pid() -> int:
    """The id of a process that has finished (so no longer running)."""
    proc = subprocess.Popen([sys.executable, "-c", "pass"])
    proc.wait()
    return proc.pid


def test_copy_of_a_crashed_program_is_offered_back(tmp_path: Path):
    doc = DesignFile([demo_candidates()[0].replace(bits=11)], settings={"colours": ["#123456"]})
    crashed = Autosave(tmp_path, pid=_dead_pid())
    crashed.write(doc, source=tmp_path / "mine.toml")
    me = Autosave(tmp_path)
    found = me.orphans()
    assert len(found) == 1
    assert found[0].doc.candidates == doc.candidates
    assert found[0].doc.settings == {"colours": ["#123456"]}
    assert SOURCE_KEY not in found[0].doc.settings
    assert found[0].source == tmp_path / "mine.toml"


def test_copies_of_running_programs_and_our_own_are_not_orphans(tmp_path: Path):
    doc = DesignFile(demo_candidates())
    Autosave(tmp_path).write(doc, None)  # ours
    Autosave(tmp_path, pid=os.getppid()).write(doc, None)  # a running process
    assert Autosave(tmp_path).orphans() == []


def test_unreadable_copy_is_set_aside_with_its_reason_and_discard_removes_ours(tmp_path: Path):
    pid = _dead_pid()
    (tmp_path / f"autosave-{pid}.toml").write_text("damaged = [")
    mine = Autosave(tmp_path)
    assert mine.orphans() == []
    assert not (tmp_path / f"autosave-{pid}.toml").exists()
    kept = tmp_path / f"damaged-{pid}.toml"
    assert kept.read_text() == "damaged = ["  # kept as it was, for a person to look at
    assert [p for p, _why in mine.set_aside] == [kept]
    assert str(tmp_path / f"autosave-{pid}.toml") in mine.set_aside[0][1]
    assert mine.orphans() == []  # not offered (or refused) again
    assert len(mine.set_aside) == 1
    mine.write(DesignFile(demo_candidates()), None)
    assert mine.path.exists()
    mine.discard()
    assert list(tmp_path.iterdir()) == [kept]


def test_every_cut_short_copy_is_set_aside_as_incomplete(tmp_path: Path):
    doc = DesignFile([demo_candidates()[0].replace(name="Ladder µ Ω"), demo_candidates()[1]])
    crashed = Autosave(tmp_path / "write", pid=_dead_pid())
    crashed.write(doc, source=tmp_path / "a folder with spaces" / "mine.toml")
    data = crashed.path.read_bytes()
    folder = tmp_path / "copies"
    folder.mkdir()
    me = Autosave(folder)
    offered = []
    for n in range(len(data) + 1):
        copy = folder / crashed.path.name
        copy.write_bytes(data[:n])
        found = me.orphans()
        if found:
            offered.append(n)
            assert found[0].doc.candidates == doc.candidates
            copy.unlink()
            continue
        kept, why = me.set_aside.pop()
        assert kept.read_bytes() == data[:n]
        assert not copy.exists()
        assert str(copy) in why, n
        assert "incomplete" in why, (n, why)
        kept.unlink()
    assert offered == [len(data.rstrip()), len(data)]
