"""Design files: TOML in our own layout, written atomically, refused whole when damaged.

Layout (schema version 1)::

    format = "rungwise-design"
    version = 1

    [[candidate]]
    name = "R-2R ladder"
    topology = "r2r-voltage"
    bits = 8
    unit_r = 10000.0
    load_r = "open"          # or a number of ohms
    [candidate.parts]        # optional as-built values, ohms
    leg0 = 20100.0

Every candidate key is a :class:`Design` key. Reading never changes anything on failure; writing
goes to a temporary file in the same folder and is renamed over the target.
"""

from __future__ import annotations

import math
import os
import tempfile
import tomllib
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

import tomli_w

from .design import Design
from .errors import DesignError

FORMAT_NAME = "rungwise-design"
"""Value of the ``format`` key that marks one of our design files."""

SCHEMA_VERSION = 1
"""Schema version this program writes; older versions are upgraded on load, newer refused."""


@dataclass
class DesignFile:
    """The contents of a design file: the candidates compared, in order, and free settings."""

    candidates: list[Design]
    settings: dict[str, Any] = field(default_factory=dict)


def _toml_value(value: Any) -> Any:
    if isinstance(value, float) and math.isinf(value):
        return "open"
    if isinstance(value, dict):
        return {k: _toml_value(v) for k, v in value.items()}
    return value


def dumps(doc: DesignFile) -> str:
    """The TOML text of ``doc``."""
    data: dict[str, Any] = {"format": FORMAT_NAME, "version": SCHEMA_VERSION}
    if doc.settings:
        data["settings"] = _toml_value(doc.settings)
    cands = []
    for d in doc.candidates:
        entry = {k: _toml_value(v) for k, v in d.to_dict().items() if v is not None}
        if not entry.get("parts"):
            entry.pop("parts", None)
        cands.append(entry)
    data["candidate"] = cands
    return tomli_w.dumps(data)


def loads(text: str, source: str = "design file") -> DesignFile:
    """Parse design-file text.

    Raises
    ------
    DesignError
        Not TOML (with line and column), not our format, a newer version, or a bad design key
        (named as ``candidate[i].key``).
    """
    try:
        data = tomllib.loads(text)
    except tomllib.TOMLDecodeError as exc:
        raise DesignError(source, f"not a readable TOML file: {exc}") from None
    if data.get("format") != FORMAT_NAME:
        raise DesignError("format", f"{source} is not a Rungwise design file (expected "
                          f"format = \"{FORMAT_NAME}\")")
    version = data.get("version")
    if not isinstance(version, int) or isinstance(version, bool) or version < 1:
        raise DesignError("version", "must be a whole number ≥ 1")
    if version > SCHEMA_VERSION:
        raise DesignError("version", f"{source} was written by a newer Rungwise (schema "
                          f"{version}; this program reads up to {SCHEMA_VERSION})")
    raw = data.get("candidate")
    if not isinstance(raw, list) or not raw:
        raise DesignError("candidate", "the file lists no [[candidate]] tables")
    candidates = []
    for i, entry in enumerate(raw):
        if not isinstance(entry, dict):
            raise DesignError(f"candidate[{i}]", "must be a table of design keys")
        try:
            candidates.append(Design.from_dict(entry))
        except DesignError as exc:
            raise DesignError(f"candidate[{i}].{exc.field}", exc.reason) from None
    settings = data.get("settings", {})
    if not isinstance(settings, dict):
        raise DesignError("settings", "must be a table")
    return DesignFile(candidates=candidates, settings=settings)


def load(path: Path) -> DesignFile:
    """Read a design file; see :func:`loads` for the errors."""
    path = Path(path)
    try:
        text = path.read_text(encoding="utf-8")
    except FileNotFoundError:
        raise DesignError("file", f"{path} does not exist") from None
    except (OSError, UnicodeDecodeError) as exc:
        raise DesignError("file", f"cannot read {path}: {exc}") from None
    return loads(text, source=str(path))


def save(path: Path, doc: DesignFile) -> None:
    """Write ``doc`` atomically: a temporary file in the same folder, flushed, then renamed."""
    path = Path(path)
    text = dumps(doc)
    fd, tmp = tempfile.mkstemp(prefix=f".{path.name}.", suffix=".tmp", dir=path.parent or ".")
    try:
        with os.fdopen(fd, "w", encoding="utf-8") as fh:
            fh.write(text)
            fh.flush()
            os.fsync(fh.fileno())
        os.replace(tmp, path)
    except BaseException:
        Path(tmp).unlink(missing_ok=True)
        raise
