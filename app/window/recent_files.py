"""The recently opened or saved design files, newest first, kept in a small JSON file (no Qt).

A damaged or missing list is treated as empty; files that no longer exist are left out when read.
"""

from __future__ import annotations

import json
from pathlib import Path

from rungwise.core.atomic import write_atomically

MAX_RECENT = 8
"""Most files remembered."""

FILE_NAME = "recent.json"
"""Name of the list inside the configuration folder."""


class RecentFiles:
    """The recent-files list stored in ``folder / FILE_NAME``."""

    def __init__(self, folder: Path) -> None:
        self.path = Path(folder) / FILE_NAME

    def _read(self) -> list[str]:
        try:
            data = json.loads(self.path.read_text(encoding="utf-8"))
        except (OSError, ValueError):
            return []
        items = data.get("files", []) if isinstance(data, dict) else []
        return [p for p in items if isinstance(p, str)]

    def _write(self, items: list[str]) -> None:
        try:
            self.path.parent.mkdir(parents=True, exist_ok=True)
            text = json.dumps({"files": items[:MAX_RECENT]}, indent=1)
            write_atomically(self.path, lambda tmp: Path(tmp).write_text(text, encoding="utf-8"))
        except OSError:
            pass  # a convenience: never stop the user's work over it

    def files(self) -> list[Path]:
        """Existing recent files, newest first."""
        return [Path(p) for p in self._read() if Path(p).is_file()]

    def add(self, path: Path) -> None:
        """Put ``path`` first (moving it up if listed already)."""
        key = str(Path(path).resolve())
        self._write([key, *[p for p in self._read() if p != key]])

    def remove(self, path: Path) -> None:
        """Forget ``path`` (for example after it failed to open)."""
        key = str(Path(path).resolve())
        self._write([p for p in self._read() if p != key])

    def clear(self) -> None:
        """Forget every file."""
        self._write([])
