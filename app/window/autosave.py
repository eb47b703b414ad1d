"""Crash copies: the open comparison written to a private folder while it has unsaved edits, and
offered back when the program starts after a crash (no Qt).

Each running program writes ``autosave-<pid>.toml`` (a normal design file; the file it was opened
from is kept in ``[settings] autosave_of``). A clean exit removes it. At start, copies whose process
is no longer running are *orphans*: the comparison of a program that stopped without closing. A
copy that cannot be read is never offered: it is renamed ``damaged-<pid>.toml`` (kept for a person
to look at, never offered again) and listed in :attr:`Autosave.set_aside` with the reason.
"""

from __future__ import annotations

import contextlib
import dataclasses
import os
import re
from dataclasses import dataclass
from pathlib import Path

from rungwise.core import designfile
from rungwise.core.designfile import DesignFile
from rungwise.core.errors import RungwiseError

SOURCE_KEY = "autosave_of"
"""``[settings]`` key holding the path of the file the comparison came from."""

_NAME = re.compile(r"^autosave-(\d+)\.toml$")

DAMAGED_PREFIX = "damaged-"
"""Name prefix of an unreadable copy set aside (it replaces ``autosave-``)."""


def _running(pid: int) -> bool:
    """Whether a process with this id exists (POSIX: signal 0 probes without disturbing it;
    Windows: the process's exit code is still "active"; elsewhere every copy left behind counts
    as an orphan)."""
    if pid == os.getpid():
        return True
    if os.name == "nt":
        return _running_on_windows(pid)
    if os.name != "posix":
        return False
    try:
        os.kill(pid, 0)
    except ProcessLookupError:
        return False
    except PermissionError:
        return True
    except OSError:
        return False
    return True


def _running_on_windows(pid: int) -> bool:
    import ctypes

    still_active, query_limited, access_denied = 259, 0x1000, 5
    try:
        kernel32 = ctypes.WinDLL("kernel32", use_last_error=True)  # type: ignore[attr-defined]
    except (AttributeError, OSError):
        return False
    handle = kernel32.OpenProcess(query_limited, False, pid)
    if not handle:
        return ctypes.get_last_error() == access_denied  # it exists, owned by someone else
    try:
        code = ctypes.c_ulong()
        return bool(kernel32.GetExitCodeProcess(handle, ctypes.byref(code))) and (
            code.value == still_active)
    finally:
        kernel32.CloseHandle(handle)


@dataclass
class Recovered:
    """An orphan copy read back: the comparison, where it came from, and the copy's path."""

    doc: DesignFile
    source: Path | None
    copy: Path


class Autosave:
    """This program's crash copy in ``folder``."""

    def __init__(self, folder: Path, pid: int | None = None) -> None:
        self.folder = Path(folder)
        self.path = self.folder / f"autosave-{os.getpid() if pid is None else pid}.toml"
        self.set_aside: list[tuple[Path, str]] = []
        """Unreadable copies found by :meth:`orphans`: where each was moved, and why it was refused."""

    def write(self, doc: DesignFile, source: Path | None) -> None:
        """Write the crash copy atomically (errors are swallowed: a copy must never stop work)."""
        settings = dict(doc.settings)
        if source is not None:
            settings[SOURCE_KEY] = str(source)
        copy = dataclasses.replace(doc, settings=settings)
        try:
            self.folder.mkdir(parents=True, exist_ok=True)
            designfile.save(self.path, copy)
        except (OSError, RungwiseError):
            pass

    def discard(self) -> None:
        """Remove the crash copy (after a save or a clean exit)."""
        self.path.unlink(missing_ok=True)

    def orphans(self) -> list[Recovered]:
        """Readable copies left by programs that are no longer running, newest first.

        Unreadable copies are renamed ``damaged-<pid>.toml`` and added to :attr:`set_aside`.
        """
        found = []
        if not self.folder.is_dir():
            return found
        for p in self.folder.iterdir():
            m = _NAME.match(p.name)
            if not m or p == self.path or _running(int(m[1])):
                continue
            try:
                doc = designfile.load(p)
            except RungwiseError as exc:
                self._set_aside(p, str(exc))
                continue
            settings = dict(doc.settings)
            source = settings.pop(SOURCE_KEY, None)
            doc.settings = settings
            found.append(Recovered(doc, Path(source) if isinstance(source, str) else None, p))
        found.sort(key=lambda r: r.copy.stat().st_mtime, reverse=True)
        return found

    def _set_aside(self, copy: Path, reason: str) -> None:
        target = copy.with_name(DAMAGED_PREFIX + copy.name.removeprefix("autosave-"))
        try:
            copy.replace(target)
        except OSError:  # cannot move it: remove it so it is not refused again at every start
            with contextlib.suppress(OSError):
                copy.unlink(missing_ok=True)
            target = copy
        self.set_aside.append((target, reason))
