"""Atomic writes to paths that are not plain files: a missing folder or a folder is named in the
error; a pipe or device is written to, never replaced by a renamed file."""

from __future__ import annotations

import os
import stat
import threading
from pathlib import Path

import pytest

from rungwise.core.atomic import write_atomically


def _write(text: str):
    return lambda tmp: Path(tmp).write_text(text)


def test_a_missing_folder_is_named_not_the_temporary_file(tmp_path):
    with pytest.raises(FileNotFoundError) as info:
        write_atomically(tmp_path / "nowhere" / "x.toml", _write("x"))
    assert info.value.filename == str(tmp_path / "nowhere")
    assert not (tmp_path / "nowhere").exists()


def test_a_folder_is_refused_and_left_alone(tmp_path):
    (tmp_path / "box").mkdir()
    with pytest.raises(IsADirectoryError) as info:
        write_atomically(tmp_path / "box", _write("x"))
    assert info.value.filename == str(tmp_path / "box")
    assert (tmp_path / "box").is_dir()
    assert list(tmp_path.iterdir()) == [tmp_path / "box"]


@pytest.mark.skipif(not hasattr(os, "mkfifo"), reason="no named pipes here")
def test_a_pipe_is_written_to_and_stays_a_pipe(tmp_path):
    pipe = tmp_path / "pipe"
    os.mkfifo(pipe)
    got: list[str] = []
    reader = threading.Thread(target=lambda: got.append(pipe.read_text()))
    reader.start()
    write_atomically(pipe, _write("through the pipe"))
    reader.join(10)
    assert got == ["through the pipe"]
    assert stat.S_ISFIFO(pipe.stat().st_mode)
    assert list(tmp_path.iterdir()) == [pipe]
