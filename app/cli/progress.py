"""Progress of long command-line work on stderr — only when stderr is a terminal.

A command that may run for seconds (report, sweep, compute with trials) calls the progress object
with a short line of what it is doing (callers report a few dozen times per run, never per code);
on a terminal the line is rewritten in place and cleared at the end, so the command's own output
and messages stay clean. Redirected to a file or a pipe, it writes nothing.
"""

from __future__ import annotations

import sys
from typing import TextIO


class StderrProgress:
    """Callable ``progress(text)``; ``live`` (default: whether ``stream`` is a terminal) decides
    whether anything is written. Use as a context manager so the line is cleared at the end."""

    def __init__(self, stream: TextIO | None = None, live: bool | None = None) -> None:
        self.stream = sys.stderr if stream is None else stream
        self.live = _is_terminal(self.stream) if live is None else live
        self._width = 0

    def __call__(self, text: str) -> None:
        """Show ``text`` in place of the previous line."""
        if not self.live:
            return
        line = f"rungwise: {text}"
        self.stream.write("\r" + line.ljust(self._width))
        self.stream.flush()
        self._width = len(line)

    def clear(self) -> None:
        """Remove the progress line (nothing when none was shown)."""
        if self.live and self._width:
            self.stream.write("\r" + " " * self._width + "\r")
            self.stream.flush()
            self._width = 0

    def __enter__(self) -> StderrProgress:
        return self

    def __exit__(self, *exc: object) -> None:
        self.clear()


def _is_terminal(stream: TextIO) -> bool:
    try:
        return bool(stream.isatty())
    except (AttributeError, ValueError):
        return False
