"""A process killed (SIGKILL) in the middle of saving leaves the old or the new file, never a
damaged one."""

from __future__ import annotations

import os
import signal
import subprocess
import sys
import time
from pathlib import Path

import pytest

from rungwise.core import designfile as dfile

SAVER = """
import sys
from pathlib import Path
from rungwise.core import Design, designfile as dfile
path, marker = Path(sys.argv[1]), Path(sys.argv[2])
docs = [dfile.DesignFile([Design(bits=b, name="x" * 4000)]) for b in (6, 9)]
i = 0
while True:
    dfile.save(path, docs[i % 2])
    i += 1
    if i == 20:
        marker.write_text("saving")
"""


@pytest.mark.skipif(not hasattr(signal, "SIGKILL"), reason="needs SIGKILL")
@pytest.mark.parametrize("delay_ms", [0, 3, 7, 13, 29])
def test_killed_while_saving_leaves_a_whole_file(tmp_path: Path, delay_ms: int):
    path, marker = tmp_path / "board.rungwise", tmp_path / "marker"
    child = subprocess.Popen([sys.executable, "-c", SAVER, str(path), str(marker)])
    try:
        deadline = time.monotonic() + 60
        while not marker.exists():  # wait for the child to be saving in a loop
            assert child.poll() is None, "the saving process ended early"
            assert time.monotonic() < deadline
            time.sleep(0.005)
        time.sleep(delay_ms / 1000)  # a varied moment inside the loop to kill it at
        os.kill(child.pid, signal.SIGKILL)
        child.wait(10)
    finally:
        if child.poll() is None:
            child.kill()
            child.wait(10)
    doc = dfile.load(path)
    assert [d.bits for d in doc.candidates] in ([6], [9])
    assert doc.candidates[0].name == "x" * 4000
    leftovers = [p.name for p in tmp_path.iterdir() if p.name not in {path.name, marker.name}]
    assert len(leftovers) <= 1  # at most the one temporary file being written when killed
