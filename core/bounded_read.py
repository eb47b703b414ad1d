"""Reading a user's file with a size limit that holds for anything a path can name: a regular file,
a pipe, or a device that never ends (``/dev/zero``, ``/dev/full``), whose size says nothing."""

from __future__ import annotations

from pathlib import Path


def read_at_most(path: str | Path, limit: int) -> bytes | None:
    """The bytes of ``path``, or ``None`` when it holds more than ``limit`` bytes.

    Reads at most ``limit + 1`` bytes, so memory stays bounded whatever ``path`` is. Raises the
    ``OSError`` of ``open``/``read`` (a missing file, a folder, no permission) for the caller to
    word.
    """
    with open(path, "rb") as fh:
        data = fh.read(limit + 1)
    return None if len(data) > limit else data
