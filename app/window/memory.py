"""What the window remembers between runs: geometry, panel places, INL line, the last design file.

A small JSON file of our own in the user configuration folder (platformdirs); the environment
variable ``RUNGWISE_CONFIG_DIR`` points it elsewhere (tests use a temporary folder). A damaged file
is ignored, never fatal.
"""

from __future__ import annotations

import json
import os
import tempfile
from pathlib import Path
from typing import Any

import platformdirs

FILE_NAME = "window.json"
"""Name of the memory file inside the configuration folder."""

CONFIG_ENV = "RUNGWISE_CONFIG_DIR"
"""Environment variable that overrides the configuration folder."""


def config_dir() -> Path:
    """The folder our settings live in."""
    override = os.environ.get(CONFIG_ENV)
    return Path(override) if override else Path(platformdirs.user_config_dir("rungwise", appauthor=False))


def load_memory() -> dict[str, Any]:
    """The remembered settings, or an empty dict when none (or unreadable)."""
    path = config_dir() / FILE_NAME
    try:
        data = json.loads(path.read_text(encoding="utf-8"))
    except (OSError, ValueError):
        return {}
    return data if isinstance(data, dict) else {}


def save_memory(data: dict[str, Any]) -> None:
    """Write the settings atomically; failures are silent (memory is a convenience)."""
    folder = config_dir()
    try:
        folder.mkdir(parents=True, exist_ok=True)
        fd, tmp = tempfile.mkstemp(prefix=".window.", suffix=".tmp", dir=folder)
        with os.fdopen(fd, "w", encoding="utf-8") as fh:
            json.dump(data, fh, indent=1)
        os.replace(tmp, folder / FILE_NAME)
    except OSError:
        pass
