"""Design files: TOML in our own layout, written atomically, refused whole when damaged.

Layout (schema version 3; older versions are upgraded on load, see ``designfile_upgrade.py``)::

    format = "rungwise-design"
    version = 3
    sealed = true            # written by the program: the file must end with its [end] table

    [analysis]               # Monte Carlo set-up, so a statistics run can be repeated
    trials = 1000
    seed = 4711

    [targets]                # what the review judges each candidate against
    max_inl_lsb = 0.5
    max_dnl_lsb = 0.5
    monotonic = true
    inl_line = "endpoint"
    min_yield = 0.99

    [settings]               # free table kept for the window (optional)

    [search]                 # optional: the design-space search's question (search_question.py)
    [cost]                   # optional: prices for the search (cost.py; defaults are invented examples)

    [[candidate]]            # one table per compared candidate; keys are Design keys
    name = "R-2R ladder"
    topology = "r2r-voltage"
    bits = 8
    unit_r = 10000.0
    load_r = "open"          # or a number of ohms
    [candidate.parts]        # optional as-built values, ohms
    leg0 = 20100.0

    [end]                    # written last: a file cut short anywhere lacks it
    candidates = 1
    sha256 = "…"             # of the text above this table (its blank line excluded)

Whole files only: a file that starts with the written head (``format``, ``version``, ``sealed``
lines exactly as the program writes them) must end with the ``[end]`` table, whose checksum covers
every byte before it; a file that is only part of that head, or is empty, is incomplete too. So every
cut-short copy of a written file is refused as incomplete, naming the file, while a hand-written file
(no ``sealed`` line) and files of older versions load as before. A person who edits a written file by
hand deletes the ``sealed`` line (or the ``[end]`` table and the line) so it reads as hand-written.

Candidate tables are written from ``Design.to_dict`` and read with ``Design.from_dict``, so a key
added to ``Design`` needs no code here. Reading never changes anything: a damaged file raises
:class:`DesignError` naming the key path (``candidate[1].unit_r``) and its line. Writing goes to a
temporary file in the same folder, flushed to disk, then renamed over the target.
"""

from __future__ import annotations

import dataclasses
import hashlib
import math
import re
import tomllib
from collections.abc import Mapping
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

import numpy as np
import tomli_w

from .atomic import write_atomically
from .bounded_read import read_at_most
from .cost import CostTable
from .design import Design
from .designfile_upgrade import CURRENT_VERSION, upgrade
from .errors import DesignError
from .search_question import SearchQuestion
from .targets import AnalysisSettings, Targets

FORMAT_NAME = "rungwise-design"
"""Value of the ``format`` key that marks one of our design files."""

SCHEMA_VERSION = CURRENT_VERSION
"""Schema version this program writes; older versions are upgraded on load, newer refused."""

TOP_LEVEL_KEYS = ("format", "version", "sealed", "analysis", "targets", "settings", "search",
                  "cost", "candidate", "end")
"""Keys a current design file may hold at its top level."""

MAX_FILE_BYTES = 20_000_000
"""Largest design file read, bytes (a real one is a few kilobytes)."""

_MAX_INT = 2**63 - 1  # TOML's own integer range

SEALED_HEAD = f'format = "{FORMAT_NAME}"\nversion = {SCHEMA_VERSION}\nsealed = true\n'
"""The exact first lines of every file this program writes (they promise an ``[end]`` table)."""

_END = re.compile(r'\n\[end\]\ncandidates = (\d+)\nsha256 = "([0-9a-f]{64})"[ \t\n]*\Z')
"""The closing table as written, at the very end of the text (trailing whitespace allowed)."""


@dataclass
class DesignFile:
    """The contents of a design file.

    Attributes
    ----------
    candidates : list[Design]
        The candidates compared, in order (at least one).
    settings : dict
        Free table kept for the window (view choices and the like).
    analysis : AnalysisSettings
        Monte Carlo trials and seed.
    targets : Targets
        Limits the review judges against.
    search : SearchQuestion or None
        The design-space search's question, when the file holds one.
    cost : CostTable or None
        Prices for the search, when the file gives any.
    """

    candidates: list[Design]
    settings: dict[str, Any] = field(default_factory=dict)
    analysis: AnalysisSettings = field(default_factory=AnalysisSettings)
    targets: Targets = field(default_factory=Targets)
    search: SearchQuestion | None = None
    cost: CostTable | None = None


# --- writing ---------------------------------------------------------------------------------
def _toml_value(value: Any) -> Any:
    """A value TOML can hold: ``inf`` → ``"open"``, mappings/dataclasses → tables, ``None`` dropped."""
    if isinstance(value, np.generic):
        value = value.item()
    if dataclasses.is_dataclass(value) and not isinstance(value, type):
        value = dataclasses.asdict(value)
    if isinstance(value, float) and math.isinf(value):
        return "open" if value > 0 else "-inf"
    if isinstance(value, Mapping):
        return {str(k): _toml_value(v) for k, v in value.items() if v is not None}
    if isinstance(value, list | tuple):
        return [_toml_value(v) for v in value]
    return value


def _digest(body: str) -> str:
    return hashlib.sha256(body.encode("utf-8")).hexdigest()


def dumps(doc: DesignFile) -> str:
    """The TOML text of ``doc``: the sealed head, the content, then the ``[end]`` table."""
    if not doc.candidates:
        raise DesignError("candidate", "a design file needs at least one candidate")
    data: dict[str, Any] = {"format": FORMAT_NAME, "version": SCHEMA_VERSION, "sealed": True,
                            "analysis": doc.analysis.to_dict(), "targets": doc.targets.to_dict()}
    if doc.settings:
        data["settings"] = _toml_value(doc.settings)
    if doc.search is not None:
        data["search"] = _toml_value(doc.search.to_dict())
    if doc.cost is not None and doc.cost.to_dict():
        data["cost"] = _toml_value(doc.cost.to_dict())
    cands = []
    for d in doc.candidates:
        entry = _toml_value(d.to_dict())
        if not entry.get("parts"):
            entry.pop("parts", None)
        cands.append(entry)
    data["candidate"] = cands
    body = tomli_w.dumps(data)
    assert body.startswith(SEALED_HEAD), "the head must come first, exactly"
    return f'{body}\n[end]\ncandidates = {len(cands)}\nsha256 = "{_digest(body)}"\n'


def save(path: Path, doc: DesignFile) -> None:
    """Write ``doc`` atomically: a temporary file in the same folder, flushed, then renamed.

    If anything fails (the text cannot be made, the disk is full, the rename is refused) the file
    at ``path`` is left as it was and the temporary file is removed.
    """
    text = dumps(doc)
    write_atomically(Path(path), lambda tmp: Path(tmp).write_text(text, encoding="utf-8", newline="\n"))


# --- reading ---------------------------------------------------------------------------------
_TOML_WHERE = re.compile(r"^(?P<what>.*?)\s*\(at line (?P<line>\d+), column (?P<col>\d+)\)\s*$")
_TOML_END = re.compile(r"^(?P<what>.*?)\s*\(at end of document\)\s*$")


def _incomplete(source: str, why: str) -> DesignError:
    return DesignError(source, f"{source} is incomplete ({why}); it was not opened — a copy cut "
                       "short, for example by a full disk or a broken transfer")


def _check_whole(text: str, source: str) -> bool:
    """Refuse a written file that does not reach its ``[end]`` table; True when it is sealed.

    A text that is empty or only part of the written head is incomplete too (it may be the first
    bytes of a written file). A file without the head is hand-written or older: nothing to check.
    """
    if not text.strip():
        raise _incomplete(source, "it is empty")
    if SEALED_HEAD.startswith(text):
        raise _incomplete(source, f"it ends after {len(text.encode())} bytes, inside its first lines")
    if not text.startswith(SEALED_HEAD):
        return False
    m = _END.search(text)
    if m is None:
        raise _incomplete(source, "its closing [end] table is missing or cut short")
    if _digest(text[: m.start()]) != m[2]:
        raise DesignError(source, f"{source} does not match the checksum in its [end] table: it "
                          "was damaged or changed after it was written; it was not opened (after "
                          "editing a file by hand, delete its `sealed = true` line)")
    return True


def _syntax_message(exc: tomllib.TOMLDecodeError, text: str) -> str:
    msg = str(exc)
    m = _TOML_WHERE.match(msg)
    if m:
        return f"line {m['line']}, column {m['col']}: not valid TOML ({m['what']})"
    m = _TOML_END.match(msg)
    if m:
        return f"line {text.count(chr(10)) + 1} (end of file): not valid TOML ({m['what']})"
    return f"not valid TOML ({msg})"


def _line_of(text: str, path: str) -> int | None:
    """Best-effort line number of a key path like ``candidate[1].unit_r`` in the file's text."""
    lines = text.splitlines()
    m = re.match(r"^candidate\[(\d+)\](?:\.(\w+))?", path)
    if m:
        heads = [i for i, ln in enumerate(lines) if re.match(r"^\s*\[\[\s*candidate\s*\]\]", ln)]
        idx = int(m[1])
        if idx >= len(heads):
            return None
        start = heads[idx]
        if not m[2]:
            return start + 1
        end = heads[idx + 1] if idx + 1 < len(heads) else len(lines)
        for i in range(start, end):
            if re.match(rf"^\s*{re.escape(m[2])}\s*=", lines[i]):
                return i + 1
        return start + 1
    section, _, key = path.partition(".")
    pattern = rf"^\s*{re.escape(key)}\s*=" if key else rf"^\s*\[\s*{re.escape(section)}\s*\]"
    in_section = not key or section in {"format", "version"}
    for i, ln in enumerate(lines):
        if key and re.match(rf"^\s*\[\s*{re.escape(section)}\s*\]", ln):
            in_section = True
        elif key and re.match(r"^\s*\[", ln):
            in_section = False
        if in_section and re.match(pattern, ln):
            return i + 1
        if not key and re.match(rf"^\s*{re.escape(section)}\s*=", ln):
            return i + 1
    return None


def _check_sizes(obj: Any, path: str) -> None:
    """Refuse integers beyond TOML's 64-bit range anywhere (they would overflow a float)."""
    if isinstance(obj, bool):
        return
    if isinstance(obj, int) and abs(obj) > _MAX_INT:
        raise DesignError(path, "number too large (more than 19 digits)")
    if isinstance(obj, dict):
        for k, v in obj.items():
            _check_sizes(v, f"{path}.{k}" if path else k)
    elif isinstance(obj, list):
        for i, v in enumerate(obj):
            _check_sizes(v, f"{path}[{i}]")


def _read_design(entry: Any, where: str) -> Design:
    if not isinstance(entry, dict):
        raise DesignError(where, "must be a table of design keys")
    try:
        return Design.from_dict(entry)
    except DesignError as exc:
        raise DesignError(f"{where}.{exc.field}", exc.reason) from None
    except (TypeError, ValueError, OverflowError) as exc:  # a value of a type no check expected
        raise DesignError(where, f"cannot use these values ({exc})") from None


def _parse(data: dict[str, Any], source: str, sealed: bool) -> DesignFile:
    if data.get("format") != FORMAT_NAME:
        raise DesignError("format", f"{source} is not a Rungwise design file (expected "
                          f"format = \"{FORMAT_NAME}\")")
    version = data.get("version")
    if not isinstance(version, int) or isinstance(version, bool) or version < 0:
        raise DesignError("version", f"must be a whole number ≥ 0, got {version!r}")
    if version > SCHEMA_VERSION:
        raise DesignError("version", f"{source} was written by a newer Rungwise (schema "
                          f"{version}; this program reads up to {SCHEMA_VERSION}); it was not opened")
    _check_sizes(data, "")
    data = upgrade(data, version)
    mark = data.pop("sealed", None)
    end = data.pop("end", None)  # without the mark: left from a hand edit, ignored
    if mark is not None and not sealed:
        raise DesignError("sealed", "this line is only valid as the third line of a file the "
                          "program wrote, unchanged; delete it to open the file as hand-written")
    unknown = sorted(set(data) - set(TOP_LEVEL_KEYS))
    if unknown:
        raise DesignError(unknown[0], "unknown top-level key; known keys: " + ", ".join(TOP_LEVEL_KEYS))
    raw = data.get("candidate")
    if not isinstance(raw, list) or not raw:
        raise DesignError("candidate", "the file lists no [[candidate]] tables")
    if sealed and isinstance(end, dict) and end.get("candidates") != len(raw):
        raise DesignError("end.candidates", f"{source} is incomplete: its [end] table counts "
                          f"{end.get('candidates')!r} candidates, the file holds {len(raw)}")
    candidates = [_read_design(entry, f"candidate[{i}]") for i, entry in enumerate(raw)]
    settings = data.get("settings", {})
    if not isinstance(settings, dict):
        raise DesignError("settings", "must be a table")
    return DesignFile(candidates=candidates, settings=settings,
                      analysis=AnalysisSettings.from_dict(data.get("analysis", {})),
                      targets=Targets.from_dict(data.get("targets", {})),
                      search=SearchQuestion.from_dict(data["search"]) if "search" in data else None,
                      cost=CostTable.from_dict(data["cost"]) if "cost" in data else None)


def loads(text: str, source: str = "design file") -> DesignFile:
    """Parse design-file text (any schema version up to :data:`SCHEMA_VERSION`).

    Raises
    ------
    DesignError
        A written (sealed) file cut short or changed (field ``source``, message saying it is
        incomplete or damaged), not TOML (field ``source``, with line and column), not our format, a newer
        version, an unknown key, or a bad value (field is the key path such as
        ``candidate[1].unit_r``, message with its line when it can be found).
    """
    text = text.removeprefix("\ufeff").replace("\r\n", "\n")
    sealed = _check_whole(text, source)
    try:
        data = tomllib.loads(text)
    except tomllib.TOMLDecodeError as exc:
        raise DesignError(source, _syntax_message(exc, text)) from None
    except RecursionError:
        raise DesignError(source, "nested too deeply to be a design file") from None
    try:
        return _parse(data, source, sealed)
    except DesignError as exc:
        line = _line_of(text, exc.field)
        where = f" (line {line})" if line else ""
        raise DesignError(exc.field, f"{exc.reason}{where} in {source}") from None
    except RecursionError:
        raise DesignError(source, "nested too deeply to be a design file") from None


def load(path: Path) -> DesignFile:
    """Read a design file; see :func:`loads` for the errors. Never writes anything."""
    path = Path(path)
    try:
        data = read_at_most(path, MAX_FILE_BYTES)
        if data is None:
            raise DesignError("file", f"{path} holds more than {MAX_FILE_BYTES} bytes; a design "
                              "file is at most that")
        text = data.decode("utf-8")
    except FileNotFoundError:
        raise DesignError("file", f"{path} does not exist") from None
    except UnicodeDecodeError as exc:
        if exc.reason == "unexpected end of data":  # cut inside a character
            raise _incomplete(str(path), "it ends in the middle of a character") from None
        raise DesignError("file", f"cannot read {path}: {exc}") from None
    except OSError as exc:
        raise DesignError("file", f"cannot read {path}: {exc}") from None
    return loads(text, source=str(path))
