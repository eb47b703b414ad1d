"""``rungwise`` with no command opens the window; ``rungwise FILE`` opens that design file."""

from __future__ import annotations

from PySide6.QtWidgets import QApplication

from rungwise.app.launch import launch_window
from rungwise.app.window.main_window import MainWindow
from rungwise.core import designfile
from rungwise.core.demo import demo_candidates


def _opened_windows() -> list[MainWindow]:
    return [w for w in QApplication.topLevelWidgets() if isinstance(w, MainWindow) and w.isVisible()]


def test_launch_opens_the_given_file(qtbot, monkeypatch, tmp_path):
    path = tmp_path / "three.rwd.toml"
    designs = [*demo_candidates(), demo_candidates()[0].replace(bits=10, name="Ten bits")]
    designfile.save(path, designfile.DesignFile(candidates=designs))
    monkeypatch.setattr(QApplication, "exec", lambda *_a: 0)
    assert launch_window([str(path)]) == 0
    (win,) = _opened_windows()
    try:
        assert win.model.path == path
        assert [c.name for c in win.model.state.candidates][-1] == "Ten bits"
    finally:
        win.ask_before_closing = False
        win.close()
        win.deleteLater()


def test_launch_refuses_extra_arguments(capsys):
    assert launch_window(["a.toml", "b.toml"]) == 2
    assert "usage" in capsys.readouterr().err
