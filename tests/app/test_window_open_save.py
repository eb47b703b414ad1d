"""Open and save through the window (atomic, errors shown), remembered settings, About, clipboard."""

from __future__ import annotations

import json

from PySide6.QtWidgets import QApplication

from rungwise.app.window.main_window import MainWindow
from rungwise.app.window.memory import FILE_NAME, load_memory
from rungwise.core import designfile
from rungwise.core.demo import demo_candidates


def test_save_and_open_round_trip_with_colours(window, tmp_path):
    state = window.model.state
    state.set_colour(1, "#123456")
    state.rename(0, "Ladder A")
    path = tmp_path / "pair.rwd.toml"
    assert window.save_to(path)
    assert not window.model.modified
    assert "pair.rwd.toml" in window.windowTitle()
    doc = designfile.load(path)
    names = ["Ladder A", *(d.name for d in demo_candidates()[1:])]
    assert [d.name for d in doc.candidates] == names
    assert doc.settings["colours"][1] == "#123456"
    window.new_from_demo()
    assert window.model.state.candidates[0].name == demo_candidates()[0].name
    assert window.open_file(path)
    assert [c.name for c in window.model.state.candidates] == names
    assert window.model.state.candidates[1].colour == "#123456"
    assert window.model.path == path
    assert not window.model.modified


def test_refused_file_is_shown_and_changes_nothing(window, qtbot, tmp_path):
    bad = tmp_path / "bad.rwd.toml"
    bad.write_text('format = "rungwise-design"\nversion = 1\n[[candidate]]\nbits = 99\n')
    before = [c.design.to_dict() for c in window.model.state.candidates]
    with qtbot.waitSignal(window.problem_shown) as shown:
        assert not window.open_file(bad)
    assert "candidate[0].bits" in shown.args[0]
    assert [c.design.to_dict() for c in window.model.state.candidates] == before


def test_save_failure_is_shown_not_raised(window, qtbot, tmp_path):
    target = tmp_path / "missing-folder" / "x.rwd.toml"
    with qtbot.waitSignal(window.problem_shown) as shown:
        assert not window.save_to(target)
    assert "Could not save" in shown.args[0]
    assert not target.exists()


def test_geometry_inl_line_and_last_file_remembered(qtbot, tmp_path, private_config):
    first = MainWindow()
    first.ask_before_closing = False
    qtbot.addWidget(first)
    first.resize(700, 500)  # within the offscreen screen (800 × 600)
    first.set_inl_line("bestfit")
    path = tmp_path / "kept.rwd.toml"
    assert first.save_to(path)
    first.close()
    mem = json.loads((private_config / FILE_NAME).read_text())
    assert mem["inl_line"] == "bestfit"
    assert mem["last_file"] == str(path)
    second = MainWindow()
    second.ask_before_closing = False
    qtbot.addWidget(second)
    assert second.plots.inl_line == "bestfit"
    assert second.action_inl_bestfit.isChecked()
    assert second.last_file() == path
    assert second.open_file(second.last_file())  # what ``rungwise`` with no file does
    assert (second.width(), second.height()) == (700, 500)
    second.close()
    assert load_memory()["last_file"] == str(path)


def test_damaged_memory_is_ignored(qtbot, private_config):
    private_config.mkdir(parents=True)
    (private_config / FILE_NAME).write_text("{not json")
    win = MainWindow()
    win.ask_before_closing = False
    qtbot.addWidget(win)
    assert win.plots.inl_line == "endpoint"
    win.close()


def test_copy_figures_as_tsv_and_text(window):
    window.copy_tsv()
    text = QApplication.clipboard().text()
    lines = text.splitlines()
    names = [d.name for d in demo_candidates()]
    assert lines[0].split("\t") == ["Figure", "Unit", *names]
    mono = next(line for line in lines if line.startswith("Monotonic\t"))
    assert mono.split("\t")[2:] == ["yes"] * len(names)
    window.copy_text()
    assert QApplication.clipboard().text().splitlines()[0].split()[:1] == ["Figure"]


def test_about_box_carries_the_cautions(window, qtbot):
    window.show_about()
    box = window.findChild(object, "about_box")
    assert box is not None
    text = box.text()
    for words in ("power", "datasheet", "local electrical codes", "licensed"):
        assert words in text
    box.close()


def test_plot_export_png_and_svg(window, tmp_path):
    png, svg = tmp_path / "dnl.png", tmp_path / "dnl.svg"
    window.plots.export_plot("dnl", png)
    window.plots.export_plot("dnl", svg)
    assert png.read_bytes()[:8] == b"\x89PNG\r\n\x1a\n"
    assert "<svg" in svg.read_text()[:2000]


def test_title_marks_unsaved_changes_with_qt_placeholder(window):
    # the title carries Qt's [*] placeholder, so setWindowModified shows '*' without a warning
    assert "[*]" in window.windowTitle()
    window.setWindowModified(True)
    assert window.isWindowModified()
