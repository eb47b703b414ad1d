"""Crash copies end to end: a real program edits a design, is killed (SIGKILL) before saving, and
the next start offers its unsaved comparison back — restored, declined, or refused when damaged."""

from __future__ import annotations

import os
import signal
import subprocess
import sys
from pathlib import Path

import pytest
from PySide6.QtCore import QTimer
from PySide6.QtWidgets import QApplication, QMessageBox

from rungwise.app.launch import launch_window
from rungwise.app.window.autosave import DAMAGED_PREFIX
from rungwise.app.window.main_window import MainWindow
from rungwise.core import designfile
from rungwise.core.design import Design

pytestmark = pytest.mark.skipif(not hasattr(signal, "SIGKILL"), reason="needs SIGKILL")

EDITING_PROGRAM = r"""
import sys
from PySide6.QtCore import QTimer
from PySide6.QtWidgets import QApplication
from rungwise.app.launch import launch_window
from rungwise.app.window.main_window import MainWindow

app = QApplication(["rungwise"])

def window():
    return next(w for w in app.topLevelWidgets() if isinstance(w, MainWindow))

def edit():  # the person types a new unit resistor and presses Enter, then does not save
    field = window().pane.binder.inputs["unit_r"]
    field.setText("4k7")
    field.editingFinished.emit()
    poll.start()

def copy_written():
    if window().files.autosave.path.exists():
        poll.stop()
        print("copy written", flush=True)

poll = QTimer(interval=20)
poll.timeout.connect(copy_written)
QTimer.singleShot(0, edit)
sys.exit(launch_window([sys.argv[1]]))
"""


@pytest.fixture(scope="module")
def killed(tmp_path_factory) -> tuple[Path, bytes, str]:
    """Run the program on a design file, edit, wait for its crash copy, SIGKILL it.

    Returns the design file, the crash copy's bytes and its name (one run for the whole module;
    each test puts the copy into its own configuration folder).
    """
    folder = tmp_path_factory.mktemp("killed")
    design_path = folder / "bench.rwd.toml"
    designs = [Design(topology="r2r-voltage", bits=6, name="Ladder"),
               Design(topology="segmented", bits=6, thermometer_bits=2, name="Segmented")]
    designfile.save(design_path, designfile.DesignFile(designs))
    config = folder / "config"
    env = {**os.environ, "RUNGWISE_CONFIG_DIR": str(config), "QT_QPA_PLATFORM": "offscreen"}
    child = subprocess.Popen([sys.executable, "-c", EDITING_PROGRAM, str(design_path)], env=env,
                             stdout=subprocess.PIPE, stderr=subprocess.PIPE, text=True)
    try:
        line = child.stdout.readline()  # blocks until the copy is on disk (or the child ends)
        assert line.strip() == "copy written", child.stderr.read()
        os.kill(child.pid, signal.SIGKILL)
        assert child.wait(10) == -signal.SIGKILL
    finally:
        if child.poll() is None:
            child.kill()
            child.wait(10)
        child.stdout.close()
        child.stderr.close()
    copy = config / "autosave" / f"autosave-{child.pid}.toml"
    assert copy.is_file()
    assert [p.name for p in copy.parent.iterdir()] == [copy.name]
    return design_path, copy.read_bytes(), copy.name


@pytest.fixture
def design_path(killed) -> Path:
    return killed[0]


@pytest.fixture
def copy(killed, private_config) -> Path:
    """The killed program's crash copy, in this test's configuration folder."""
    _path, data, name = killed
    target = private_config / "autosave" / name
    target.parent.mkdir(parents=True)
    target.write_bytes(data)
    return target


def _answer(button: QMessageBox.StandardButton, seen: list[str], tries: int = 500) -> None:
    """Press ``button`` in the next modal message box, as a person would (polls the event loop)."""

    def press(left: int) -> None:
        box = QApplication.activeModalWidget()
        if isinstance(box, QMessageBox):
            seen.append(box.text())
            box.button(button).click()
        elif left:
            QTimer.singleShot(10, lambda: press(left - 1))

    QTimer.singleShot(0, lambda: press(tries))


def _start(qtbot, monkeypatch, args: list[str]) -> MainWindow:
    """Start the program as ``rungwise`` does, its event loop left to the test."""
    monkeypatch.setattr(QApplication, "exec", lambda *_a: 0)
    assert launch_window(args) == 0
    (win,) = [w for w in QApplication.topLevelWidgets() if isinstance(w, MainWindow) and w.isVisible()]
    qtbot.addWidget(win)
    win.ask_before_closing = False
    return win


def _close(win: MainWindow) -> None:
    win.close()
    assert win.live.runner.active_count() == 0


def test_restored_after_a_kill_equals_the_edited_design(qtbot, monkeypatch, design_path, copy,
                                                       private_config):
    edited = designfile.load(design_path).candidates
    edited[0] = edited[0].with_settings({"unit_r": "4k7"})
    seen: list[str] = []
    _answer(QMessageBox.StandardButton.Yes, seen)
    win = _start(qtbot, monkeypatch, [])
    try:
        assert len(seen) == 1
        assert "Restore the unsaved comparison of bench.rwd.toml" in seen[0]
        assert win.model.state.designs == edited
        assert win.model.path == design_path  # tied to its file, and marked unsaved
        assert win.model.modified
        assert win.isWindowModified()
        folder = private_config / "autosave"
        assert [p.name for p in folder.iterdir()] == [win.files.autosave.path.name]  # ours only
        assert designfile.load(win.files.autosave.path).candidates == edited
        assert designfile.load(design_path).candidates[0].unit_r == 10e3  # file untouched
    finally:
        _close(win)
    assert not any((private_config / "autosave").iterdir())  # a clean exit leaves no copy


def test_declined_copy_is_removed_and_the_file_opens_unchanged(qtbot, monkeypatch, design_path,
                                                              copy):
    seen: list[str] = []
    _answer(QMessageBox.StandardButton.Discard, seen)
    win = _start(qtbot, monkeypatch, [str(design_path)])
    try:
        assert len(seen) == 1
        assert not copy.exists()
        assert win.model.state.designs == designfile.load(design_path).candidates
        assert not win.model.modified
    finally:
        _close(win)
    seen.clear()
    _answer(QMessageBox.StandardButton.Yes, seen, tries=20)
    again = _start(qtbot, monkeypatch, [str(design_path)])  # nothing is offered a second time
    _close(again)
    assert seen == []


@pytest.mark.parametrize("damage", ["cut after 1 byte", *[f"cut at {k}/8" for k in range(1, 8)],
                                    "cut 2 bytes short", "not text"])
def test_damaged_copy_is_refused_with_a_message(qtbot, monkeypatch, design_path, copy, capfd,
                                                damage):
    """Cuts spread over the whole copy (every single cut position is tried without a window in
    ``test_history_and_recovery.py``): each is refused, wherever the checkout lives."""
    data = copy.read_bytes()
    if damage == "not text":
        damaged = b"\xff\xfe\x00" * 40
    elif damage == "cut after 1 byte":
        damaged = data[:1]
    elif damage == "cut 2 bytes short":
        damaged = data[:-2]
    else:
        k = int(damage.split()[-1].split("/")[0])
        damaged = data[: len(data) * k // 8]
    copy.write_bytes(damaged)
    capfd.readouterr()
    win = _start(qtbot, monkeypatch, [str(design_path)])
    try:
        boxes = [b for b in win.findChildren(QMessageBox) if b.isVisible()]
        assert len(boxes) == 1, "no message about the damaged copy"
        text = boxes[0].text()
        kept = copy.with_name(DAMAGED_PREFIX + copy.name.removeprefix("autosave-"))
        assert text.startswith("A copy of unsaved work could not be read")
        assert str(kept) in text
        assert kept.read_bytes() == damaged
        assert damage == "not text" or "incomplete" in text
        assert not copy.exists()
        boxes[0].button(QMessageBox.StandardButton.Ok).click()
        assert win.model.state.designs == designfile.load(design_path).candidates
        assert not win.model.modified
    finally:
        _close(win)
    assert "Traceback" not in capfd.readouterr().err
