"""Writing a file so that a crash or a full disk never leaves half of it: temporary file, then rename."""

from __future__ import annotations

import errno
import os
import tempfile
from collections.abc import Callable
from pathlib import Path


def _mode_for(path: Path) -> int:
    """The existing file's permissions, or the usual ones for a new file (0o666 less the umask)."""
    try:
        return path.stat().st_mode & 0o7777
    except OSError:
        mask = os.umask(0o022)
        os.umask(mask)
        return 0o666 & ~mask


def write_atomically(path: Path, write_to: Callable[[str], None]) -> None:
    """Call ``write_to(tmp)`` on a temporary file beside ``path``, flush it to disk, rename it over.

    If anything fails the file at ``path`` is left as it was and the temporary file is removed;
    the exception is re-raised. A ``path`` that is a device or a pipe (``/dev/null``) is written
    to directly, never renamed over.
    """
    path = Path(path)
    if not path.parent.is_dir():  # name the folder, not the temporary file, in the error
        raise FileNotFoundError(errno.ENOENT, "no such folder", str(path.parent))
    if path.is_dir():
        raise IsADirectoryError(errno.EISDIR, "is a folder", str(path))
    if path.exists() and not path.is_file():  # a device or a pipe: written to, never replaced
        write_to(str(path))
        return
    fd, tmp = tempfile.mkstemp(prefix=f".{path.name}.", suffix=".tmp", dir=path.parent)
    os.close(fd)
    try:
        write_to(tmp)
        with open(tmp, "rb+") as fh:
            os.fsync(fh.fileno())
        os.chmod(tmp, _mode_for(path))
        os.replace(tmp, path)
    except BaseException:
        Path(tmp).unlink(missing_ok=True)
        raise
